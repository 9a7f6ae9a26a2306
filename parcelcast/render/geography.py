"""Coastlines and land borders drawn offline from the Natural Earth shapes shipped with the package.

What belongs here: pointing cartopy at the packaged shapes (``parcelcast/data/natural_earth``,
in cartopy's own folder layout), choosing the scale for a map area, and drawing the
geography on a map.  Natural Earth is public domain ("Made with Natural Earth. Free vector and
raster map data @ naturalearthdata.com"); 1:110m and 1:50m coastlines and land borders between
countries are shipped.  Nothing is ever downloaded: :func:`use_packaged_shapes` sets cartopy's
``pre_existing_data_dir`` before any drawing (tests turn cartopy's ``DownloadWarning`` into an
error, so a download attempt fails them).
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

#: the shipped data set, as named in figure metadata (JSON ``figures[].coastlines``)
SOURCE_NAME = "Natural Earth {scale} coastlines and land borders (public domain)"
#: map areas spanning fewer degrees of latitude than this use the finer 1:50m shapes
FINE_SCALE_SPAN_DEG = 40.0


def data_folder() -> Path:
    """The folder holding ``shapefiles/natural_earth/{physical,cultural}/`` inside the package."""
    return Path(str(resources.files("parcelcast") / "data" / "natural_earth"))


def use_packaged_shapes() -> Path:
    """Point cartopy at the packaged shapes (``cartopy.config["pre_existing_data_dir"]``)."""
    import cartopy

    folder = data_folder()
    cartopy.config["pre_existing_data_dir"] = folder
    return folder


def scale_for(area) -> str:
    """``"50m"`` for a regional area ``[lat_min, lat_max, lon_min, lon_max]``, else ``"110m"``."""
    if area is None:
        return "110m"
    lat_span = abs(area[1] - area[0])
    lon_span = abs(area[3] - area[2])
    return "50m" if max(lat_span, lon_span / 1.5) <= FINE_SCALE_SPAN_DEG else "110m"


def draw_geography(ax, area=None) -> str:
    """Draw coastlines and land borders on a cartopy ``GeoAxes``; returns the data set's name.
    The two artists carry the ids (``get_gid()``) ``"coastlines"`` and ``"borders"``.

    Set the map's extent first: the shapes are clipped to it (a little wider) and, on a
    regional map, projected once as plain lines (:mod:`parcelcast.render.lines`); a map
    (nearly) all the way round the globe leaves the projection to cartopy, which cuts lines
    at the map's edge.

    Parameters
    ----------
    ax : cartopy.mpl.geoaxes.GeoAxes
    area : sequence of 4 floats, optional
        ``[lat_min, lat_max, lon_min, lon_max]`` in degrees; sets the scale (1:50m for a
        regional map, 1:110m for a continental or global one).
    """
    import cartopy.crs as ccrs
    import cartopy.feature as cfeature

    from parcelcast.render.lines import projected_collection, shape_polylines

    use_packaged_shapes()
    scale = scale_for(area)
    box = _clip_box(ax)
    for name, feature, style in (
            ("coastlines", cfeature.COASTLINE, {"linewidth": 0.9, "edgecolor": "black"}),
            ("borders", cfeature.BORDERS, {"linewidth": 0.6, "edgecolor": "#3d3d3d",
                                           "linestyle": (0, (4, 2))})):
        shapes = _shapes(feature.with_scale(scale), box)
        if box is None:
            ax.add_feature(cfeature.ShapelyFeature(shapes, ccrs.PlateCarree()), facecolor="none",
                           zorder=3, gid=name, **style)
            continue
        lines, _ = projected_collection(ax, shape_polylines(shapes), zorder=3, gid=name, **{
            "linewidths": style["linewidth"], "colors": style["edgecolor"],
            "linestyles": style.get("linestyle", "solid")})
        ax.add_collection(lines, autolim=False)
    return SOURCE_NAME.format(scale="1:" + scale)


#: degrees added around the map's own longitude-latitude bounds before clipping the shapes
CLIP_MARGIN_DEG = 2.0


def _clip_box(ax):
    """``(lon_min, lat_min, lon_max, lat_max)`` around what the map shows, or None for a map
    (nearly) all the way round the globe, where clipping would save nothing."""
    import cartopy.crs as ccrs

    lon0, lon1, lat0, lat1 = ax.get_extent(ccrs.PlateCarree())
    if lon1 - lon0 >= 350.0:
        return None
    m = CLIP_MARGIN_DEG
    return (lon0 - m, max(lat0 - m, -90.0), lon1 + m, min(lat1 + m, 90.0))


def _shapes(feature, box):
    """The feature's shapes (read once per process by cartopy), clipped to ``box``."""
    import shapely

    shapes = list(feature.geometries())
    if box is None:
        return shapes
    clipped = shapely.clip_by_rect(shapes, *box)
    return [g for g in clipped if not g.is_empty]
