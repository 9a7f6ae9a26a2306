"""Figures of a case review: the split timeline, the split maps and the trajectories.

Matplotlib (Agg); the maps carry coastlines and borders (packaged Natural Earth shapes).
Every number comes from :func:`parcelcast.review.build_review`.  Each function takes a
figure path (and the timeline ``ax=None``) and returns what it drew.
"""

from __future__ import annotations

import numpy as np

from parcelcast.io.atomic import atomic_path
from parcelcast.render.maps import MISSING_GREY

_COLOURS = {"observed_change_K": "#222222", "advective_K": "#c0392b", "vertical_K": "#2e86c1",
            "residual_K": "#27ae60"}
_LABELS = {"observed_change_K": "observed change", "advective_K": "advective (-V\u00b7\u2207T)",
           "vertical_K": "vertical motion (\u03c9 S_p)", "residual_K": "residual (diabatic + errors)"}


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def _save(fig, path):
    plt = _pyplot()
    with atomic_path(path) as tmp:
        fig.savefig(tmp, format="png", dpi=100, bbox_inches="tight")
    plt.close(fig)


def timeline_figure(review: dict, path=None, ax=None):
    """Accumulated parts of the split at the station from the window start (K)."""
    plt = _pyplot()
    fig = None
    if ax is None:
        fig, ax = plt.subplots(figsize=(8, 4))
    times = [row["time"] for row in review["timeline"]]
    lines = {}
    for key, colour in _COLOURS.items():
        values = [row[key] for row in review["timeline"]]
        if any(v is None for v in values):
            continue
        (lines[key],) = ax.plot(times, values, marker="o", color=colour, label=_LABELS[key])
    ax.axhline(0.0, color="0.6", linewidth=0.8)
    case = review["case"]
    ax.set_ylabel("change since start (K)")
    ax.set_title(f"{case.station_name}, {case.level_hpa:g} hPa: split of the temperature change\n"
                 "guidance, not an official forecast", fontsize=10)
    ax.legend(fontsize=8)
    ax.figure.autofmt_xdate()
    if path is not None:
        _save(ax.figure if fig is None else fig, path)
    return lines


_PANEL_TITLES = {"observed_change": "observed change", "advective": "advective part (-V\u00b7\u2207T)",
                 "vertical": "vertical-motion part", "residual": "residual"}


def review_area(case) -> list[float]:
    """The map area of a review: 50 degrees of latitude by 70 of longitude around the station."""
    return [max(-90.0, case.lat - 25.0), min(90.0, case.lat + 25.0), case.lon - 35.0, case.lon + 35.0]


def split_maps_figure(review: dict, path=None):
    """Maps of the observed change and its parts over the window (K), on one colour scale
    so the panels compare directly (member mean where the analysis has members), with
    coastlines and borders; grey where a part is missing."""
    import cartopy.crs as ccrs

    from parcelcast.render.maps import (ADVECTION_CMAP, crop, finish_map, inside, mark_station,
                                        projection_for)
    from parcelcast import formatting
    from parcelcast.selection import member_mean

    plt = _pyplot()
    case = review["case"]
    area = review_area(case)
    fields = crop(review["fields"], area)
    names = [n for n in _PANEL_TITLES if n in fields]
    lat, lon = fields["lat"].values, fields["lon"].values
    panels = {name: member_mean(fields[name]).values for name in names}
    shown = np.concatenate([inside(fields, area, v).ravel() for v in panels.values()])
    finite = np.abs(shown[np.isfinite(shown)])
    limit = max(float(np.percentile(finite, 98)) if finite.size else 1.0, 0.5)
    fig = plt.figure(figsize=(4.2 * len(names), 4.4), constrained_layout=True)
    drawn = {}
    coastlines = None
    for i, name in enumerate(names):
        ax = fig.add_subplot(1, len(names), i + 1, projection=projection_for(area))
        ax.set_extent([area[2], area[3], area[0], area[1]], crs=ccrs.PlateCarree())
        ax.set_facecolor(MISSING_GREY)
        drawn[name] = ax.pcolormesh(lon, lat, np.ma.masked_invalid(panels[name]), cmap=ADVECTION_CMAP,
                                    vmin=-limit, vmax=limit, shading="auto",
                                    transform=ccrs.PlateCarree())
        coastlines = finish_map(ax, area)
        mark_station(ax, (case.station_name, case.lat, case.lon), named=False)
        ax.set_title(_PANEL_TITLES[name], fontsize=9)
    fig.colorbar(drawn[names[0]], ax=fig.axes, shrink=0.8, orientation="horizontal", aspect=50,
                 label="K over the window: red warming, blue cooling; grey: missing or outside the grid")
    fig.suptitle(f"{case.station_name} (star), {case.level_hpa:g} hPa: split over "
                 f"{formatting.time_text(case.start)} to {formatting.time_text(case.end)}\n"
                 "guidance, not an official forecast", fontsize=10)
    if path is not None:
        _save(fig, path)
    return {"panels": drawn, "area": area, "coastlines": coastlines}


def trajectories_figure(review: dict, path=None):
    """Back trajectories arriving at the station at the key times, on a map with geography,
    6-hourly marks, colour by pressure (see :func:`parcelcast.render.trajectory_maps.trajectory_map`)."""
    from parcelcast import formatting
    from parcelcast.render.trajectory_maps import trajectory_map

    case = review["case"]
    groups = [(f"arriving {formatting.time_text(when)}", paths)
              for when, paths in review["trajectories"].items()]
    return trajectory_map(groups, path, station=(case.station_name, case.lat, case.lon),
                          title=f"Back trajectories to {case.station_name} at {case.level_hpa:g} hPa "
                          f"({case.wind} wind)")
