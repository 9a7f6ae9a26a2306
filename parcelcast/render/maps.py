"""Maps of gridded fields a forecaster reads: an area, coastlines, the station, degC and knots.

Only draws; every number comes from the library.  Matplotlib (Agg) and cartopy are imported
inside the functions.  Coastlines and borders come from the packaged Natural Earth shapes
(:mod:`parcelcast.render.geography`), never from a download.

Conventions of every map here:

* the area is ``[lat_min, lat_max, lon_min, lon_max]`` in degrees (the whole grid when not given);
* temperature advection on a diverging scale centred on zero (ColorBrewer "RdBu", designed to
  stay readable with red-green colour blindness): red warm, blue cold, in K/h;
* grey where the field is missing (below the ground, or no data), outside the colour scale;
* isotherms in degC; wind barbs in knots after the WMO plotting convention (the staff points
  into the wind, towards where it comes from; half barb 5 kt, barb 10 kt, pennant 50 kt);
* valid time, level and data source in the title; the disclaimer on every figure.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from parcelcast import formatting
from parcelcast.io.atomic import atomic_path

#: colour of missing (below-ground or absent) data: outside the advection scale
MISSING_GREY = "#9b9b9b"
ADVECTION_CMAP = "RdBu_r"
ISOTHERM_COLOUR = "#4a2a63"
DISCLAIMER_SHORT = "Guidance, not an official forecast: defer to the national weather service."


def pyplot():
    """``matplotlib.pyplot`` on the Agg backend (files only, no display)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def save_figure(fig, path, dpi: int = 110, pad_inches: float = 0.1) -> Path:
    """Write ``fig`` to ``path`` (PNG) whole or not at all, cropped to what is drawn (as
    ``bbox_inches="tight"``), and close it.

    The figure is drawn once and the picture cut out of it; only when something lies
    outside the figure is it drawn once more, into the box already measured (matplotlib's
    own tight saving would draw twice more: a cartopy map costs a tenth of a second a draw).
    """
    from PIL import Image

    fig.set_dpi(dpi)
    fig.canvas.draw()
    box = fig.get_tightbbox(fig.canvas.get_renderer()).padded(pad_inches)
    width, height = fig.get_size_inches()
    with atomic_path(path) as tmp:
        if box.x0 < 0 or box.y0 < 0 or box.x1 > width or box.y1 > height:
            fig.savefig(tmp, format="png", dpi=dpi, bbox_inches=box)
        else:
            pixels = np.asarray(fig.canvas.buffer_rgba())
            rows = pixels.shape[0]
            top, bottom = int(rows - round(box.y1 * dpi)), int(rows - round(box.y0 * dpi))
            left, right = int(round(box.x0 * dpi)), int(round(box.x1 * dpi))
            Image.fromarray(pixels[top:bottom, left:right]).save(tmp, format="png")
    pyplot().close(fig)
    return Path(path)


def check_area(area) -> list[float] | None:
    """``[lat_min, lat_max, lon_min, lon_max]`` as floats, checked; None stays None."""
    if area is None:
        return None
    from parcelcast.errors import ParcelcastError

    values = [float(x) for x in area]
    if len(values) != 4:
        raise ParcelcastError(f"map area needs 4 numbers LAT0,LAT1,LON0,LON1; got {area!r}")
    lat0, lat1, lon0, lon1 = values
    if not (-90.0 <= lat0 < lat1 <= 90.0):
        raise ParcelcastError(f"map area latitudes must satisfy -90 <= LAT0 < LAT1 <= 90; got {lat0}, {lat1}")
    if not (lon0 < lon1 <= lon0 + 360.0):
        raise ParcelcastError(f"map area longitudes must satisfy LON0 < LON1 <= LON0 + 360; got {lon0}, {lon1}")
    return values


def projection_for(area, native=None):
    """Cartopy projection for an area: the grid's own for projected grids, Lambert conformal
    for a mid-latitude region (shapes true, as on a forecaster's chart), else plate carree."""
    import cartopy.crs as ccrs

    if native is not None:
        return native
    lat0, lat1, lon0, lon1 = area
    mid_lat, mid_lon = 0.5 * (lat0 + lat1), 0.5 * (lon0 + lon1)
    if lat1 - lat0 <= 70.0 and lon1 - lon0 <= 140.0 and abs(mid_lat) >= 20.0 and lat1 < 89 and lat0 > -89:
        quarter = (lat1 - lat0) / 4.0
        return ccrs.LambertConformal(central_longitude=mid_lon, central_latitude=mid_lat,
                                     standard_parallels=(mid_lat - quarter, mid_lat + quarter))
    return ccrs.PlateCarree(central_longitude=mid_lon)


def grid_area(fields) -> list[float]:
    """The whole extent of a field's grid as an area."""
    lat, lon = fields["lat"].values, fields["lon"].values
    return [float(np.nanmin(lat)), float(np.nanmax(lat)), float(np.nanmin(lon)), float(np.nanmax(lon))]


def crop(fields, area):
    """The part of a lat-lon field covering ``area`` (with a margin), longitudes made
    continuous across the area (so a Europe map on a 0..360 grid works); projected grids
    (2-D coordinates) are returned whole.  Returns the cropped Dataset/DataArray."""
    if fields["lat"].ndim != 1:
        return fields
    lat0, lat1, lon0, lon1 = area
    centre = 0.5 * (lon0 + lon1)
    lon = fields["lon"].values
    shifted = centre + (((lon - centre + 180.0) % 360.0) - 180.0)
    out = fields.assign_coords(lon=shifted).sortby("lon")
    step_lat = float(np.abs(np.diff(out["lat"].values)).max()) if out.sizes["lat"] > 1 else 1.0
    step_lon = float(np.abs(np.diff(out["lon"].values)).max()) if out.sizes["lon"] > 1 else 1.0
    margin_lat = max(2 * step_lat, 0.25 * (lat1 - lat0))
    # Lambert maps reach further in longitude at their poleward corners
    margin_lon = max(2 * step_lon, 0.25 * (lon1 - lon0) / max(np.cos(np.deg2rad(max(abs(lat0), abs(lat1)))), 0.3))
    keep_lat = (out["lat"] >= lat0 - margin_lat) & (out["lat"] <= lat1 + margin_lat)
    keep_lon = (out["lon"] >= lon0 - margin_lon) & (out["lon"] <= lon1 + margin_lon)
    return out.isel(lat=np.flatnonzero(keep_lat.values), lon=np.flatnonzero(keep_lon.values))


def inside(fields, area, values):
    """``values`` where the grid point lies inside ``area``, else NaN (for scale limits)."""
    lat, lon = fields["lat"].values, fields["lon"].values
    if lat.ndim == 1:
        lat, lon = np.meshgrid(lat, lon, indexing="ij")
    lat0, lat1, lon0, lon1 = area
    centre = 0.5 * (lon0 + lon1)
    lon = centre + (((lon - centre + 180.0) % 360.0) - 180.0)
    mask = (lat >= lat0) & (lat <= lat1) & (lon >= lon0) & (lon <= lon1)
    return np.where(mask, values, np.nan)


def new_map(area, native=None, figsize=(10.0, 7.0), fig=None, position=111):
    """A figure and cartopy axes showing ``area``, grey underneath (missing data shows grey)."""
    import cartopy.crs as ccrs

    plt = pyplot()
    fig = plt.figure(figsize=figsize) if fig is None else fig
    ax = fig.add_subplot(position, projection=projection_for(area, native))
    ax.set_extent([area[2], area[3], area[0], area[1]], crs=ccrs.PlateCarree())
    ax.set_facecolor(MISSING_GREY)
    return fig, ax


def finish_map(ax, area) -> str:
    """Coastlines, borders and a labelled graticule; returns the coastline data set's name."""
    from parcelcast.render.geography import draw_geography
    from parcelcast.render.graticule import draw_graticule

    name = draw_geography(ax, area)
    draw_graticule(ax, area)
    return name


def mark_station(ax, station, area=None, named=True):
    """The station as a black-edged yellow star with its name on a white halo (to the left
    of the star when the station is in the east half of ``area``, so the name stays inside);
    ``named=False`` leaves the name to the caller's legend."""
    import cartopy.crs as ccrs
    from matplotlib import patheffects

    name, lat, lon = station
    east = area is not None and lon > 0.5 * (area[2] + area[3])
    (marker,) = ax.plot(lon, lat, marker="*", color="#ffd23f", markeredgecolor="black",
                        markersize=16, transform=ccrs.PlateCarree(), zorder=6, linestyle="none",
                        label=name)
    if not named or not name:
        return marker, None
    label = ax.text(lon, lat, f"{name}  " if east else f"  {name}", transform=ccrs.PlateCarree(),
                    fontsize=10, fontweight="bold", va="bottom", ha="right" if east else "left", zorder=7,
                    path_effects=[patheffects.withStroke(linewidth=3, foreground="white")])
    return marker, label


def station_tuple(station):
    """Accept ``(lat, lon)`` or ``(name, lat, lon)``; returns ``(name, lat, lon)`` or None."""
    if station is None:
        return None
    if len(station) == 2:
        return ("station", float(station[0]), float(station[1]))
    return (str(station[0]), float(station[1]), float(station[2]))


def source_text(fields) -> str:
    """File names of the source analyses (no folders), for titles."""
    files = [Path(p).name for p in str(fields.attrs.get("source_files", "")).split(";") if p]
    if not files:
        return "unknown source"
    return files[0] if len(files) == 1 else f"{files[0]} and {len(files) - 1} more"


def nice_ceiling(value: float) -> float:
    """Smallest of 1, 2, 2.5, 5 x 10^n not below ``value`` (for readable colour bars)."""
    exponent = np.floor(np.log10(value))
    for mantissa in (1.0, 2.0, 2.5, 5.0, 10.0):
        if mantissa * 10 ** exponent >= value:
            return float(mantissa * 10 ** exponent)
    return float(10 ** (exponent + 1))


def _decimals(step: float) -> int:
    """Decimals needed to print multiples of ``step`` (0.25 -> 2, 0.2 -> 1, 2 -> 0)."""
    for digits in range(4):
        if abs(round(step, digits) - step) < 1e-9:
            return digits
    return 4


def _native_projection(fields):
    """The analysis's own projection for a projected grid (so the grid is a rectangle), else
    None; cartopy classes built from the CF grid-mapping parameters."""
    import cartopy.crs as ccrs

    if "crs" not in fields.coords or "crs_wkt" not in fields["crs"].attrs:
        return None
    import pyproj

    cf = pyproj.CRS.from_wkt(fields["crs"].attrs["crs_wkt"]).to_cf()
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
    return None


def _thinned(lat, lon, values_u, values_v, area, count: int = 14):
    """Barb positions: about ``count`` along the area's longer side, NaN winds left out."""
    if lat.ndim == 1:
        lat, lon = np.meshgrid(lat, lon, indexing="ij")
    lat0, lat1, lon0, lon1 = area
    span = max(lat1 - lat0, (lon1 - lon0) * np.cos(np.deg2rad(0.5 * (lat0 + lat1))))
    spacing_deg = span / count
    step_y = max(1, int(round(spacing_deg / max(np.nanmedian(np.abs(np.diff(lat, axis=0))), 1e-6))))
    # a degree of longitude is cos(lat) degrees of arc long: more columns per barb
    step_x = max(1, int(round(spacing_deg / max(np.nanmedian(np.abs(np.diff(lon, axis=1))), 1e-6)
                              / max(np.cos(np.deg2rad(0.5 * (lat0 + lat1))), 0.2))))
    sl = (slice(step_y // 2, None, step_y), slice(step_x // 2, None, step_x))
    la, lo, u, v = lat[sl], lon[sl], values_u[sl], values_v[sl]
    ok = np.isfinite(u) & np.isfinite(v)
    return la[ok], lo[ok], u[ok], v[ok]


def advection_map(level_fields, path=None, station=None, area=None, ax=None, title=None):
    """Temperature advection (K/h) with isotherms (degC), wind barbs (kt), coastlines and the station.

    Parameters
    ----------
    level_fields : xarray.Dataset
        Output of :func:`parcelcast.advection.advection_on_level` for one time and level, no
        member dimension (pass the member mean or one member).  Missing values (NaN: below
        the ground, or no data) are drawn grey, outside the colour scale.
    path : str or Path, optional
        PNG file, written whole or not at all.
    station : (name, lat, lon) or (lat, lon), optional
        Marked and named on the map.
    area : [lat_min, lat_max, lon_min, lon_max], optional
        Degrees; default the whole grid.  The colour scale fits the values inside the area.
    ax : cartopy GeoAxes, optional
    title : str, optional
        Replaces the first title line.

    Returns
    -------
    dict
        ``figure``, ``axes``, ``filled``, ``isotherms``, ``barbs``, ``area`` (as drawn),
        ``coastlines`` (the data set's name).
    """
    import cartopy.crs as ccrs
    from matplotlib.patches import Patch

    plt = pyplot()
    station = station_tuple(station)
    area = check_area(area) or grid_area(level_fields)
    native = _native_projection(level_fields)
    fields = crop(level_fields, area)
    if ax is None:
        fig, ax = new_map(area, native)
    else:
        fig = ax.figure
        ax.set_facecolor(MISSING_GREY)
    lat, lon = fields["lat"].values, fields["lon"].values
    transform = ccrs.PlateCarree()
    adv = formatting.per_hour(fields["temperature_advection"].values)
    shown = inside(fields, area, adv)
    finite = np.abs(shown[np.isfinite(shown)])
    limit = nice_ceiling(max(float(np.percentile(finite, 98)) if finite.size else 0.1, 0.05))
    step = limit / 5.0
    levels = np.arange(-5, 6) * step
    filled = ax.contourf(lon, lat, np.ma.masked_invalid(adv), levels=levels, cmap=ADVECTION_CMAP,
                         extend="both", transform=transform, zorder=1)
    temp_c = formatting.celsius(fields["temperature"].values)
    inside_t = inside(fields, area, temp_c)
    t_range = np.nanmax(inside_t) - np.nanmin(inside_t) if np.isfinite(inside_t).any() else 0.0
    interval = 2 if t_range < 24 else 4
    low = np.floor(np.nanmin(temp_c) / interval) * interval if np.isfinite(temp_c).any() else 0.0
    high = np.nanmax(temp_c) if np.isfinite(temp_c).any() else 0.0
    isotherms = ax.contour(lon, lat, np.ma.masked_invalid(temp_c),
                           levels=np.arange(low, high + interval, interval), colors=ISOTHERM_COLOUR,
                           linewidths=1.0, linestyles="solid", transform=transform, zorder=2)
    ax.clabel(isotherms, fmt=lambda v: f"{v:.0f}\u00b0C", fontsize=7, inline=True)
    b_lat, b_lon, b_u, b_v = _thinned(lat, lon, formatting.knots(fields["u"].values),
                                      formatting.knots(fields["v"].values), area)
    barbs = ax.barbs(b_lon, b_lat, b_u, b_v, length=5.2, linewidth=0.6, color="#1a1a1a",
                     transform=transform, zorder=4)
    coastlines = finish_map(ax, area)
    if station is not None:
        mark_station(ax, station, area)
    bar = fig.colorbar(filled, ax=ax, orientation="horizontal", shrink=0.8, pad=0.07, aspect=40,
                       format=lambda v, _: "0" if abs(v) < 1e-12 else f"{v:+.{_decimals(step)}f}")
    bar.set_label("temperature advection \u2212V\u00b7\u2207T (K/h): red = warm, blue = cold")
    bar.ax.legend(handles=[Patch(facecolor=MISSING_GREY, edgecolor="0.3",
                                 label="grey: below ground, missing or outside the grid")],
                  loc="upper left", bbox_to_anchor=(0.0, -3.0), fontsize=8, frameon=False)
    bar.ax.text(0.0, -5.0, DISCLAIMER_SHORT, transform=bar.ax.transAxes, ha="left", va="top",
                fontsize=7, color="0.35")
    from parcelcast.selection import is_surface, level_phrase

    level = (float(level_fields["level"].values) / 100.0 if "level" in level_fields.coords
             else level_fields.attrs.get("level", "surface"))  # no pressure level: the surface
    when = formatting.time_text(level_fields["time"].values) if "time" in level_fields.coords else ""
    wind = level_fields.attrs.get("wind", "actual")
    where = level_phrase(level) + ("" if is_surface(level) else f" ({wind} wind)")  # 10 m: analysed
    head = title or f"Temperature advection at {where}, valid {when}"
    ax.set_title(f"{head}\nisotherms \u00b0C every {interval}; barbs: {wind} wind in kt; "
                 f"source: {source_text(level_fields)}", fontsize=10)
    if path is not None:
        save_figure(fig, path)
    return {"figure": fig, "axes": ax, "filled": filled, "isotherms": isotherms, "barbs": barbs,
            "area": area, "coastlines": coastlines}
