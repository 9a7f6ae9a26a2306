"""Parallels and meridians on a map, labelled where a reader looks for them.

What belongs here: :func:`draw_graticule`, which draws the lines as projected polylines
(one collection, no per-line projection work by cartopy: a tenth of cartopy's gridliner
time) and labels them:

* meridians at the bottom edge of the map;
* parallels at the left edge on a plate carree map (they are straight and level there);
  on a conic or polar map, where parallels curve, *on the lines themselves* along a meridian
  in the western part of the map, so the station's latitude is read where it stands, not at
  an edge where the same parallel runs higher or lower.
"""

from __future__ import annotations

import numpy as np

from parcelcast.render.lines import projected_collection

#: spacings tried for the lines, degrees (the first giving at most MAX_LINES lines is used)
STEPS_DEG = (1.0, 2.0, 5.0, 10.0, 15.0, 20.0, 30.0, 45.0, 60.0)
MAX_LINES = 7
#: sampling of each line along its length, degrees
SAMPLE_DEG = 0.5
LINE_STYLE = {"linewidths": 0.6, "colors": "0.3", "alpha": 0.7, "linestyles": ":", "zorder": 3.5}
LABEL_SIZE = 8


def step_for(span_deg: float) -> float:
    """Line spacing giving at most :data:`MAX_LINES` lines across ``span_deg`` degrees."""
    for step in STEPS_DEG:
        if span_deg / step <= MAX_LINES:
            return step
    return STEPS_DEG[-1]


def latitude_text(lat: float) -> str:
    """``50°N``, ``12°S``, ``0°`` (whole degrees, or one decimal when needed)."""
    value = f"{abs(lat):.0f}" if float(lat).is_integer() else f"{abs(lat):.1f}"
    return "0\u00b0" if lat == 0 else f"{value}\u00b0{'N' if lat > 0 else 'S'}"


def longitude_text(lon: float) -> str:
    """``5°E``, ``10°W``, ``0°``, ``180°`` for any longitude (wrapped to -180..180)."""
    lon = ((lon + 180.0) % 360.0) - 180.0
    if abs(lon) in (0.0, 180.0):
        return f"{abs(lon):.0f}\u00b0"
    value = f"{abs(lon):.0f}" if float(lon).is_integer() else f"{abs(lon):.1f}"
    return f"{value}\u00b0{'E' if lon > 0 else 'W'}"


def _values(lo: float, hi: float, step: float) -> np.ndarray:
    return np.arange(np.ceil(lo / step) * step, hi + 1e-9, step)


def draw_graticule(ax, area) -> dict:
    """Draw and label parallels and meridians over ``area`` on the cartopy ``GeoAxes`` ``ax``.

    ``area`` is ``[lat_min, lat_max, lon_min, lon_max]`` (degrees); the lines cover what the
    map shows (``ax.get_extent``).  Returns ``{"lines": collection, "labels": [texts]}``.
    """
    import cartopy.crs as ccrs

    geodetic = ccrs.PlateCarree()
    lon0, lon1, lat0, lat1 = ax.get_extent(geodetic)
    lat_step = step_for(area[1] - area[0])
    lon_step = step_for(area[3] - area[2])
    parallels = _values(max(lat0, -89.9), min(lat1, 89.9), lat_step)
    meridians = _values(lon0, lon1, lon_step)
    _, first = np.unique(np.round(meridians % 360.0, 6), return_index=True)
    meridians = meridians[np.sort(first)]  # -180 and 180 are one meridian
    # the lines run a little past what the map shows, so each meets the map's edges
    lats = np.clip(np.arange(lat0 - 1.0, lat1 + 1.0 + SAMPLE_DEG, SAMPLE_DEG), -90.0, 90.0)
    lons = np.arange(lon0 - 1.0, lon1 + 1.0 + SAMPLE_DEG, SAMPLE_DEG)
    polylines = ([np.column_stack([np.full_like(lats, m), lats]) for m in meridians]
                 + [np.column_stack([lons, np.full_like(lons, p)]) for p in parallels])
    collection, projected = projected_collection(ax, polylines, **LINE_STYLE)
    ax.add_collection(collection, autolim=False)
    x0, x1 = sorted(ax.get_xlim())
    y0, y1 = sorted(ax.get_ylim())
    rectangular = isinstance(ax.projection, ccrs.PlateCarree)
    labels = []
    for lon, xy in zip(meridians, projected[: len(meridians)]):
        if rectangular:  # meridians are vertical: x follows from the longitude alone
            x = ax.projection.transform_point(lon, 0.0, geodetic)[0]
            x = x if x0 <= x <= x1 else None
        else:
            x = _crossing(xy, axis=1, value=y0, lo=x0, hi=x1)
        if x is not None:
            labels.append(ax.annotate(longitude_text(lon), (x, y0), xytext=(0, -4),
                                      textcoords="offset points", ha="center", va="top",
                                      fontsize=LABEL_SIZE, annotation_clip=False))
    along = _label_meridian(area, lon_step)
    for lat in parallels:
        if rectangular:  # parallels are level: labelled at the left edge
            if y0 <= lat <= y1:
                labels.append(ax.annotate(latitude_text(lat), (x0, lat), xytext=(-4, 0),
                                          textcoords="offset points", ha="right", va="center",
                                          fontsize=LABEL_SIZE, annotation_clip=False))
            continue
        x, y = ax.projection.transform_point(along, lat, geodetic)
        if x0 <= x <= x1 and y0 <= y <= y1:
            labels.append(_inline_label(ax, latitude_text(lat), x, y))
    return {"lines": collection, "labels": labels}


def _label_meridian(area, step: float) -> float:
    """The meridian that carries the parallels' labels: the graticule meridian nearest a
    quarter of the way in from the west edge (away from a station at the centre)."""
    target = area[2] + 0.25 * (area[3] - area[2])
    return float(np.round(target / step) * step)


def _inline_label(ax, text, x, y):
    from matplotlib import patheffects

    return ax.text(x, y, text, fontsize=LABEL_SIZE - 1, color="0.2", ha="left", va="bottom",
                   zorder=3.6, clip_on=True,
                   path_effects=[patheffects.withStroke(linewidth=2.5, foreground="white")])


def _crossing(xy, axis: int, value: float, lo: float, hi: float):
    """Where the polyline ``xy`` (N x 2) first crosses ``xy[:, axis] == value`` with the
    other coordinate inside ``[lo, hi]``: that coordinate, or None (a meridian meeting the
    bottom edge of a conic or polar map)."""
    along, other = xy[:, axis], xy[:, 1 - axis]
    ok = np.isfinite(along) & np.isfinite(other)
    along, other = along[ok], other[ok]
    side = np.sign(along - value)
    for i in np.flatnonzero(side[:-1] * side[1:] <= 0):
        if along[i + 1] == along[i]:
            continue
        f = (value - along[i]) / (along[i + 1] - along[i])
        result = other[i] + f * (other[i + 1] - other[i])
        if lo <= result <= hi:
            return float(result)
    return None
