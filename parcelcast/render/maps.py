"""Maps of gridded fields (matplotlib with the Agg backend, cartopy projection).

Only draws; every number comes from the library.  No coastlines are drawn: the
Natural Earth shapes would need a download, and the tool must work offline.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import SECONDS_PER_HOUR
from parcelcast.io.atomic import atomic_path
from parcelcast.selection import level_label


def advection_map(level_fields, path=None, station=None, ax=None):
    """Draw temperature advection (K/h, red = warm, blue = cold) with isotherms and wind.

    Parameters
    ----------
    level_fields : xarray.Dataset
        Output of :func:`parcelcast.advection.advection_on_level` (one time, one level,
        no member dimension: pass the member mean or one member).
    path : str or Path, optional
        PNG file to write atomically.
    station : (lat, lon), optional
        Marked with its name "station".
    ax : matplotlib Axes (cartopy GeoAxes), optional

    Returns
    -------
    dict with the figure and the artists drawn.
    """
    import matplotlib

    matplotlib.use("Agg")
    import cartopy.crs as ccrs
    import matplotlib.pyplot as plt

    adv = level_fields["temperature_advection"] * SECONDS_PER_HOUR
    lat, lon = adv["lat"].values, adv["lon"].values
    values = adv.values
    if ax is None:
        fig = plt.figure(figsize=(10, 6.5))
        ax = fig.add_subplot(1, 1, 1, projection=_map_projection(level_fields, lon))
    else:
        fig = ax.figure
    finite = np.abs(values[np.isfinite(values)])
    limit = float(np.percentile(finite, 98)) if finite.size else 1.0
    limit = _nice_ceiling(max(limit, 0.05))
    levels = np.linspace(-limit, limit, 17)
    filled = ax.contourf(lon, lat, values, levels=levels, cmap="RdBu_r", extend="both",
                         transform=ccrs.PlateCarree())
    if "below_ground" in level_fields.data_vars:  # grey, outside the colour scale
        ax.contourf(lon, lat, level_fields["below_ground"].values.astype(float), levels=[0.5, 1.5],
                    colors=["0.65"], transform=ccrs.PlateCarree())
    isotherms = ax.contour(lon, lat, level_fields["temperature"].values - 273.15,
                           levels=np.arange(-80, 50, 4), colors="0.25", linewidths=0.7,
                           transform=ccrs.PlateCarree())
    ax.clabel(isotherms, fmt="%d\u00b0C", fontsize=7)
    step = max(1, int(round(max(values.shape) / 22)))
    if lat.ndim == 1:  # lat-lon grid: 1-D coordinates
        arrow_lon, arrow_lat = np.meshgrid(lon[::step], lat[::step])
    else:  # projected grid: 2-D coordinates
        arrow_lon, arrow_lat = lon[::step, ::step], lat[::step, ::step]
    # winds are east/north components: transform_vectors on PlateCarree keeps them so
    arrows = ax.quiver(arrow_lon, arrow_lat, level_fields["u"].values[::step, ::step],
                       level_fields["v"].values[::step, ::step], transform=ccrs.PlateCarree(),
                       color="0.15", width=0.0022, scale=900)
    ax.quiverkey(arrows, 0.9, -0.08, 20, "20 m/s", labelpos="E")
    ax.gridlines(draw_labels=True, linewidth=0.4, color="0.6", linestyle=":")
    if lat.ndim == 1:
        ax.set_extent([lon.min(), lon.max(), lat.min(), lat.max()], crs=ccrs.PlateCarree())
    if station is not None:
        ax.plot(station[1], station[0], marker="*", color="gold", markeredgecolor="black",
                markersize=14, transform=ccrs.PlateCarree())
    bar = fig.colorbar(filled, ax=ax, orientation="vertical", shrink=0.8, pad=0.08)
    bar.set_label("temperature advection -V\u00b7\u2207T (K/h), positive = warm")
    time = level_fields["time"].values if "time" in level_fields.coords else None
    when = (np.datetime_as_string(time, unit="m").replace("T", " ") + " UTC") if time is not None else ""
    level = (float(level_fields["level"].values) / 100 if "level" in level_fields.coords
             else level_fields.attrs.get("level", "surface"))  # no pressure level: the surface
    wind = level_fields.attrs.get("wind", "actual")
    ax.set_title(f"Temperature advection at {level_label(level)} ({wind} wind), valid {when}\n"
                 "contours: isotherms (\u00b0C); arrows: wind; grey: level below the ground.\n"
                 "Guidance only, not an official forecast.",
                 fontsize=10)
    if path is not None:
        with atomic_path(path) as tmp:
            fig.savefig(tmp, format="png", dpi=110, bbox_inches="tight")
        plt.close(fig)
    return {"figure": fig, "filled": filled, "isotherms": isotherms, "arrows": arrows}


def _map_projection(level_fields, lon):
    """The analysis's own projection for a projected grid (so the grid is a rectangle),
    else plate carree; cartopy classes built from the CF grid-mapping parameters."""
    import cartopy.crs as ccrs

    if "crs" in level_fields.coords and "crs_wkt" in level_fields["crs"].attrs:
        import pyproj

        cf = pyproj.CRS.from_wkt(level_fields["crs"].attrs["crs_wkt"]).to_cf()
        globe = ccrs.Globe(semimajor_axis=cf.get("semi_major_axis"),
                           semiminor_axis=cf.get("semi_minor_axis", cf.get("semi_major_axis")),
                           ellipse=None)
        name = cf.get("grid_mapping_name")
        if name == "lambert_conformal_conic":
            parallels = np.atleast_1d(cf["standard_parallel"]).tolist()
            return ccrs.LambertConformal(central_longitude=cf["longitude_of_central_meridian"],
                                         central_latitude=cf["latitude_of_projection_origin"],
                                         standard_parallels=parallels, globe=globe)
        if name == "polar_stereographic":
            pole = cf.get("latitude_of_projection_origin",
                          90.0 if cf.get("standard_parallel", 90.0) > 0 else -90.0)
            return ccrs.Stereographic(
                central_latitude=pole,
                central_longitude=cf.get("straight_vertical_longitude_from_pole", 0.0),
                true_scale_latitude=cf.get("standard_parallel"), globe=globe)
    return ccrs.PlateCarree(central_longitude=float(np.mean(lon)))


def _nice_ceiling(value: float) -> float:
    """Smallest of 1, 2, 2.5, 5 x 10^n not below ``value`` (for readable colour bars)."""
    exponent = np.floor(np.log10(value))
    for mantissa in (1.0, 2.0, 2.5, 5.0, 10.0):
        if mantissa * 10 ** exponent >= value:
            return float(mantissa * 10 ** exponent)
    return float(10 ** (exponent + 1))
