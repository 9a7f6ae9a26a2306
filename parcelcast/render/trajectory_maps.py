"""Maps of air-parcel trajectories: geography, time marks every 6 h, colour by pressure.

Only draws what :func:`parcelcast.trajectories.compute_trajectories` returned.  The central
(unperturbed) path of each arrival time is bold, the other members thin; the colour along
every path is the parcel's pressure (one scale, "viridis", designed to stay readable with
colour-blind vision and in grey); white dots mark every 6 h before arrival (or after release); the legend sits below
the map, outside the tracks.
"""

from __future__ import annotations

import numpy as np

from parcelcast import formatting
from parcelcast.render.lines import project_points
from parcelcast.render.maps import (
    DISCLAIMER_SHORT,
    check_area,
    finish_map,
    mark_station,
    new_map,
    save_figure,
    station_tuple,
)

PRESSURE_CMAP = "viridis"
MARK_HOURS = 6.0
_MARKERS = ("o", "s", "^", "D")


def _groups(paths, label=None):
    """``[(label, dataset of one start group)]`` from one trajectory dataset."""
    out = []
    for g in np.unique(paths["start_group"].values):
        part = paths.isel(trajectory=np.flatnonzero(paths["start_group"].values == g))
        central = int(np.argmax(part["central"].values))
        when = formatting.time_text(part["time"].values[central, 0])
        role = "arriving" if paths.attrs.get("direction", "backward") == "backward" else "released"
        out.append((label or f"{role} {when}", part))
    return out


def _unwrapped(lon):
    """Longitudes along a path without jumps at the dateline (NaN kept)."""
    out = np.array(lon, dtype=np.float64)
    ok = np.isfinite(out)
    out[ok] = np.rad2deg(np.unwrap(np.deg2rad(out[ok])))
    return out


def path_area(groups, station=None, margin_deg: float = 4.0) -> list[float]:
    """An area holding every valid point of the paths (and the station), with a margin."""
    lats, lons = [], []
    for _, part in groups:
        lat = part["lat"].values
        lon = np.vstack([_unwrapped(row) for row in part["lon"].values])
        ok = np.isfinite(lat) & np.isfinite(lon)
        lats.append(lat[ok])
        lons.append(lon[ok])
    lat = np.concatenate(lats)
    lon = np.concatenate(lons)
    if station is not None:
        lat, lon = np.append(lat, station[1]), np.append(lon, station[2])
    lat0, lat1 = float(lat.min()) - margin_deg, float(lat.max()) + margin_deg
    lon0, lon1 = float(lon.min()) - margin_deg * 1.5, float(lon.max()) + margin_deg * 1.5
    if lat1 - lat0 < 12.0:
        mid = 0.5 * (lat0 + lat1)
        lat0, lat1 = mid - 6.0, mid + 6.0
    if lon1 - lon0 < 18.0:
        mid = 0.5 * (lon0 + lon1)
        lon0, lon1 = mid - 9.0, mid + 9.0
    return [max(lat0, -90.0), min(lat1, 90.0), lon0, lon1]


def trajectory_map(paths, path=None, station=None, area=None, title=None, source=None):
    """Trajectories on a map with coastlines and borders.

    Parameters
    ----------
    paths : xarray.Dataset or list of (label, xarray.Dataset)
        Output of :func:`~parcelcast.trajectories.compute_trajectories` (each start group
        is drawn as its own arrival or release time), or labelled datasets.
    path : str or Path, optional
        PNG file, written whole or not at all.
    station : (name, lat, lon) or (lat, lon), optional
    area : [lat_min, lat_max, lon_min, lon_max], optional
        Default: the paths' extent with a margin.
    title, source : str, optional
        First title line; the data source named in the second.

    Returns
    -------
    dict
        ``figure``, ``axes``, ``lines`` (one per trajectory), ``marks`` (the 6-hourly dots),
        ``area``, ``coastlines``.
    """
    from matplotlib import patheffects
    from matplotlib.collections import LineCollection
    from matplotlib.colors import Normalize
    from matplotlib.lines import Line2D

    station = station_tuple(station)
    groups = _groups(paths) if not isinstance(paths, list) else [
        g for label, part in paths for g in _groups(part, label)]
    area = check_area(area) or path_area(groups, station)
    fig, ax = new_map(area, figsize=(9.0, 7.5))
    ax.set_facecolor("#f4f1ea")  # land and sea alike: the paths carry the colour here
    pressures = np.concatenate([part["pressure"].values.ravel() / 100.0 for _, part in groups])
    pressures = pressures[np.isfinite(pressures)]
    lo, hi = np.floor(pressures.min() / 25.0) * 25.0, np.ceil(pressures.max() / 25.0) * 25.0
    if hi - lo < 50.0:  # isobaric paths: a band of 50 hPa around their level
        mid = 0.5 * (lo + hi)
        lo, hi = mid - 25.0, mid + 25.0
    norm = Normalize(vmin=lo, vmax=hi)
    lines, marks, handles = [], [], []
    ended_early = False
    backward = groups[0][1].attrs.get("direction", "backward") == "backward"
    for g, (label, part) in enumerate(groups):
        marker = _MARKERS[g % len(_MARKERS)]
        order = np.argsort(part["central"].values, kind="stable")  # central drawn last, on top
        for k in order:
            central = bool(part["central"].values[k])
            lat = part["lat"].values[k]
            lon = _unwrapped(part["lon"].values[k])
            ok = np.isfinite(lat) & np.isfinite(lon)
            if ok.sum() < 2:
                continue
            xy = np.column_stack(project_points(ax, lon[ok], lat[ok]))
            segments = np.stack([xy[:-1], xy[1:]], axis=1)
            p = part["pressure"].values[k][ok] / 100.0
            collection = LineCollection(
                segments, cmap=PRESSURE_CMAP, norm=norm,
                linewidths=3.2 if central else 0.7, alpha=1.0 if central else 0.55,
                zorder=5 if central else 4,
                capstyle="round")
            collection.set_array(0.5 * (p[:-1] + p[1:]))
            if central:
                collection.set_path_effects([patheffects.Stroke(linewidth=4.6, foreground="black"),
                                             patheffects.Normal()])
            ax.add_collection(collection, autolim=False)  # the map's extent is set
            lines.append(collection)
            if central:
                marks += _time_marks(ax, part, k, marker)
                stopped = _end_mark(ax, part, k, backward)
                marks += stopped
                ended_early |= bool(stopped)
        handles.append(Line2D([], [], color="black", linewidth=3.0, marker=marker, markersize=7,
                              markerfacecolor="white", markeredgecolor="black",
                              label=f"{label}: central path bold, members thin, marks every "
                              f"{MARK_HOURS:g} h (hours from {'arrival' if backward else 'release'})"))
    coastlines = finish_map(ax, area)
    if station is not None:
        star, _ = mark_station(ax, station, area, named=False)  # named in the legend
        handles.insert(0, star)
    mappable = lines[0] if lines else None
    if mappable is not None:
        # an inset follows the map's drawn box (cartopy fixes the aspect), so the bar never
        # outgrows a wide map
        bar = fig.colorbar(mappable, cax=ax.inset_axes([1.03, 0.05, 0.035, 0.9]),
                           orientation="vertical")
        bar.set_label("parcel pressure (hPa)")
        bar.ax.invert_yaxis()  # low pressure (high up) at the top
    if ended_early:
        handles.append(Line2D([], [], color="none", marker="X", markersize=8, markerfacecolor="black",
                              markeredgecolor="white",
                              label="X: the central path ended before the hours asked for (why, beside it)"))
    handles.append(Line2D([], [], color="none", label=DISCLAIMER_SHORT))
    ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.06), fontsize=8,
              frameon=False, ncol=1)
    head = title or "Air-parcel trajectories"
    ax.set_title(f"{head}" + (f"\nsource: {source}" if source else ""), fontsize=10)
    if path is not None:
        save_figure(fig, path)
    return {"figure": fig, "axes": ax, "lines": lines, "marks": marks, "area": area,
            "coastlines": coastlines}


def _time_marks(ax, part, k, marker="o"):
    """White dots every 6 h on trajectory ``k`` (counted from its start), labelled in hours:
    one marker line holding the dots, then one text per dot."""
    from matplotlib import patheffects

    times = part["time"].values[k]
    ok = ~np.isnat(times) & np.isfinite(part["lat"].values[k]) & np.isfinite(part["lon"].values[k])
    hours = (times[ok] - times[ok][0]) / np.timedelta64(1, "h")
    at = (np.abs(hours) > 1e-6) & (np.abs(hours / MARK_HOURS - np.round(hours / MARK_HOURS)) <= 1e-6)
    if not at.any():
        return []
    x, y = project_points(ax, _unwrapped(part["lon"].values[k][ok])[at], part["lat"].values[k][ok][at])
    drawn = ax.plot(x, y, marker=marker, markersize=6, markerfacecolor="white",
                    markeredgecolor="black", zorder=6, linestyle="none")
    halo = [patheffects.withStroke(linewidth=2.5, foreground="white")]
    for h, xi, yi in zip(hours[at], x, y):
        drawn.append(ax.text(xi, yi, f" {h:+.0f} h", fontsize=7, zorder=7, va="bottom",
                             path_effects=halo))
    return drawn


def _end_mark(ax, part, k, backward: bool):
    """A cross and a few words where trajectory ``k`` stopped short of the hours asked for
    (none when it covered them): how many hours it covered and why it ended."""
    from matplotlib import patheffects

    from parcelcast.trajectories.completeness import ENDED_BECAUSE, hours_covered

    requested = part.attrs.get("hours_requested")
    covered = float(hours_covered(part)[k])
    if requested is None or covered >= float(requested) - 1e-6:
        return []
    last = max(int(part["row_size"].values[k]) - 1, 0)
    lon = _unwrapped(part["lon"].values[k])[last]
    lat = part["lat"].values[k][last]
    if not (np.isfinite(lon) and np.isfinite(lat)):
        return []
    x, y = project_points(ax, lon, lat)
    status = str(part["status_name"].values[k])
    hours = f"{'-' if backward else '+'}{covered:.0f} h"
    drawn = ax.plot(x, y, marker="X", markersize=10, markerfacecolor="black",
                    markeredgecolor="white", zorder=7, linestyle="none")
    drawn.append(ax.text(x, y, f"  ends at {hours}: {ENDED_BECAUSE.get(status, status)}",
                         fontsize=8, fontweight="bold", zorder=7, va="top",
                         path_effects=[patheffects.withStroke(linewidth=2.5, foreground="white")]))
    return drawn
