"""The distribution of the split's parts by calendar month (drawing only; matplotlib is
imported here, when a plot is asked for)."""

from __future__ import annotations

import numpy as np

from parcelcast.climate.station import PARTS

_LABELS = {"observed_change_K": "observed change", "advective_K": "advective",
           "vertical_K": "vertical motion", "residual_K": "residual"}
_COLOURS = {"observed_change_K": "0.35", "advective_K": "tab:red", "vertical_K": "tab:green",
            "residual_K": "tab:blue"}


def plot_parts_by_month(values: dict, title: str = "", ax=None):
    """Box plots (median, quartiles, 1.5 IQR whiskers) of each part's window values per month.

    ``values``: month -> part -> array (K, NaN where missing), as
    :meth:`MonthlySummary.values` gives.  Returns the axes.
    """
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    if ax is None:
        _, ax = plt.subplots(figsize=(max(6.0, 1.6 * len(values) + 2.0), 4.5), layout="constrained")
    months = list(values)
    width = 0.8 / len(PARTS)
    for k, part in enumerate(PARTS):
        data = [values[m][part][np.isfinite(values[m][part])] for m in months]
        shown = [i for i, d in enumerate(data) if d.size]
        if not shown:
            ax.plot([], [], " ", label=f"{_LABELS[part]}: no values")
            continue
        positions = [i + (k - (len(PARTS) - 1) / 2) * width for i in shown]
        ax.boxplot([data[i] for i in shown], positions=positions, widths=width * 0.9,
                   patch_artist=True, manage_ticks=False,
                   boxprops={"facecolor": _COLOURS[part], "alpha": 0.6},
                   medianprops={"color": "black"}, flierprops={"markersize": 2})
        ax.plot([], [], "s", color=_COLOURS[part], alpha=0.6, label=_LABELS[part])
    ax.axhline(0.0, color="0.6", lw=0.8)
    ax.set_xticks(range(len(months)), months)
    ax.set_xlim(-0.6, len(months) - 0.4)
    ax.set_ylabel("change over the window (K)")
    ax.set_title(title)
    ax.legend(loc="best", fontsize="small")
    return ax


def save_plot(values: dict, path, title: str = "") -> None:
    """Draw :func:`plot_parts_by_month` and write it to ``path`` (PNG) whole or not at all."""
    import matplotlib.pyplot as plt

    from parcelcast.io.atomic import atomic_path

    ax = plot_parts_by_month(values, title)
    try:
        with atomic_path(path) as tmp:
            ax.figure.savefig(tmp, format="png", dpi=110)
    finally:
        plt.close(ax.figure)
