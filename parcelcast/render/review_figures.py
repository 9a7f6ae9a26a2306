"""Figures of a case review: the split timeline, the split maps and the trajectories.

Plain matplotlib (Agg) on longitude-latitude axes; every number comes from
:func:`parcelcast.review.build_review`.  Each function takes ``ax=None`` or a
figure path and returns what it drew.
"""

from __future__ import annotations

import numpy as np

from parcelcast.io.atomic import atomic_path

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


def split_maps_figure(review: dict, path=None):
    """Maps of the observed change and its parts over the window (K), on one colour scale
    so the panels compare directly (member mean where the analysis has members)."""
    from parcelcast.selection import member_mean

    plt = _pyplot()
    fields = review["fields"]
    case = review["case"]
    names = [n for n in _PANEL_TITLES if n in fields]
    lat, lon = fields["lat"].values, fields["lon"].values
    lon = case.lon + (((lon - case.lon + 180.0) % 360.0) - 180.0)  # continuous around the station
    columns = slice(None)
    if lat.ndim == 1:  # lat-lon grid (projected grids carry 2-D coordinates already)
        columns = np.argsort(lon, kind="stable")  # keep longitudes increasing across the cut
        lat, lon = np.meshgrid(lat, lon[columns], indexing="ij")
    near = (np.abs(lat - case.lat) <= 25) & (np.abs(lon - case.lon) <= 35)
    panels = {name: np.where(near, member_mean(fields[name]).values[..., columns], np.nan)
              for name in names}
    finite = np.abs(np.concatenate([v[np.isfinite(v)] for v in panels.values()]))
    limit = max(float(np.percentile(finite, 98)) if finite.size else 1.0, 0.5)
    fig, axes = plt.subplots(1, len(names), figsize=(3.9 * len(names), 3.8), squeeze=False,
                             constrained_layout=True)
    drawn = {}
    for ax, name in zip(axes[0], names):
        drawn[name] = ax.pcolormesh(lon, lat, panels[name], cmap="RdBu_r", vmin=-limit, vmax=limit,
                                    shading="auto")
        ax.plot(case.lon, case.lat, marker="*", color="gold", markeredgecolor="black", markersize=12)
        ax.set_xlim(case.lon - 35, case.lon + 35)
        ax.set_ylim(max(-90, case.lat - 25), min(90, case.lat + 25))
        ax.set_aspect(1.0 / max(np.cos(np.deg2rad(case.lat)), 0.2))
        ax.set_title(_PANEL_TITLES[name], fontsize=9)
    fig.colorbar(drawn[names[0]], ax=axes[0].tolist(), shrink=0.8, label="K over the window")
    fig.suptitle(f"Split over {str(case.start)[:16]} to {str(case.end)[:16]} UTC at "
                 f"{case.level_hpa:g} hPa (guidance, not an official forecast)", fontsize=10)
    if path is not None:
        _save(fig, path)
    return drawn


def trajectories_figure(review: dict, path=None, ax=None):
    """Back trajectories arriving at the station at the key times (the cloud in thin lines)."""
    plt = _pyplot()
    fig = None
    if ax is None:
        fig, ax = plt.subplots(figsize=(7, 5))
    case = review["case"]
    drawn = []
    colours = ["#8e44ad", "#d35400", "#16a085"]
    for colour, (when, paths) in zip(colours, review["trajectories"].items()):
        for i in range(paths.sizes["trajectory"]):
            lon = np.unwrap(np.deg2rad(paths["lon"].values[i]), discont=np.pi)
            central = bool(paths["central"].values[i])
            (line,) = ax.plot(np.rad2deg(lon), paths["lat"].values[i], color=colour,
                              linewidth=2.0 if central else 0.5, alpha=1.0 if central else 0.5,
                              label=f"arriving {str(when)[:16]} UTC" if central and i == 0 else None)
            drawn.append(line)
    ax.plot(case.lon, case.lat, marker="*", color="gold", markeredgecolor="black", markersize=14)
    ax.set_xlabel("longitude (\u00b0E)")
    ax.set_ylabel("latitude (\u00b0N)")
    ax.set_aspect(1.0 / max(np.cos(np.deg2rad(case.lat)), 0.2))
    ax.grid(linestyle=":", color="0.7")
    ax.legend(fontsize=8)
    ax.set_title(f"Back trajectories to {case.station_name} at {case.level_hpa:g} hPa", fontsize=10)
    if path is not None:
        _save(ax.figure if fig is None else fig, path)
    return drawn
