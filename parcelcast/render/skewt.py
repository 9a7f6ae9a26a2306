"""A skew-T log-p diagram of a profile, with the temperature-advection profile beside it.

Our own layout: the main panel has temperature against ln p with isotherms skewed
by ``SKEW`` kelvin per unit of ln(1000 hPa / p); thin guide lines for dry adiabats,
pseudo-adiabats and saturation mixing ratio; the temperature, dew point and lifted
parcel; the parcel's positive area (buoyant) and negative area (below its LFC)
shaded; wind barbs in knots in a white strip along its right edge.  Beside it, the
advection profile of the column: a line through the thermal-wind layer estimates,
shaded warm or cold from zero, with the analysis's gridded advection at the same
column as diamonds.

Functions take an ``ax`` (or make one) and return what they drew.  Only what the
library computed is drawn; no science here.  Matplotlib is imported inside the
functions that need it (Agg backend when saving).
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import KAPPA

__all__ = [
    "SKEW",
    "COLOURS",
    "skewed_x",
    "draw_guides",
    "draw_sounding",
    "draw_parcel",
    "draw_winds",
    "draw_advection_profile",
    "profile_diagram",
    "save_profile_diagram",
]

#: kelvin of skew per unit of ln(1000 hPa / p)
SKEW = 35.0
#: the palette of this diagram (our own choice)
COLOURS = {
    "temperature": "#b5403a",
    "dewpoint": "#2e8b7a",
    "parcel": "#3b3561",
    "positive": "#f2b134",
    "negative": "#7bb0d6",
    "isotherm": "#dedede",
    "zero": "#8aa9c9",
    "dry_adiabat": "#e3cfae",
    "moist_adiabat": "#b8d4c8",
    "mixing_ratio": "#d3c4e6",
    "warm": "#d9593d",
    "cold": "#3f6fa8",
    "wind": "#4a4a4a",
}
P_BOTTOM, P_TOP = 1050.0, 100.0  # hPa
T_LEFT, T_RIGHT = -40.0, 45.0  # degC at 1000 hPa


def skewed_x(temperature_c, pressure_hpa):
    """Horizontal position of (T degC, p hPa) on the diagram."""
    return np.asarray(temperature_c, dtype=np.float64) + SKEW * np.log(1000.0 / np.asarray(pressure_hpa, dtype=np.float64))


def _new_ax(ax):
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots()
    return ax


def _frame(ax, p_bottom=P_BOTTOM, p_top=P_TOP):
    ax.set_yscale("log")
    ax.set_ylim(p_bottom, p_top)
    ax.set_xlim(T_LEFT, T_RIGHT)
    ticks = [1000, 850, 700, 500, 400, 300, 250, 200, 150, 100]
    ticks = [t for t in ticks if p_top <= t <= p_bottom]
    from matplotlib import ticker

    ax.yaxis.set_major_locator(ticker.FixedLocator(ticks))
    ax.yaxis.set_major_formatter(ticker.FuncFormatter(lambda v, _: f"{v:.0f}"))
    ax.yaxis.set_minor_locator(ticker.NullLocator())
    ax.set_ylabel("pressure (hPa)")
    ax.set_xlabel("temperature (degC), isotherms slanted")


def draw_guides(ax=None, p_bottom=P_BOTTOM, p_top=P_TOP):
    """Isotherms, dry adiabats, pseudo-adiabats and mixing-ratio lines. Returns the lines drawn."""
    from parcelcast.thermo import dewpoint_from_vapour_pressure, pseudoadiabat, vapour_pressure_from_mixing_ratio

    ax = _new_ax(ax)
    _frame(ax, p_bottom, p_top)
    p = np.geomspace(p_bottom, p_top, 60)
    drawn = []
    for t in range(-120, 60, 10):
        c = COLOURS["zero"] if t == 0 else COLOURS["isotherm"]
        drawn += ax.plot(skewed_x(np.full(p.shape, t), p), p, color=c, lw=0.8 if t else 1.2, zorder=1)
    for th in range(250, 471, 10):
        tk = th * (p / 1000.0) ** KAPPA
        drawn += ax.plot(skewed_x(tk - 273.15, p), p, color=COLOURS["dry_adiabat"], lw=0.7, zorder=1)
    starts = np.arange(-10.0, 36.0, 5.0) + 273.15
    pm = np.geomspace(1000.0, max(p_top, 200.0), 40)
    moist = pseudoadiabat(starts, np.full(starts.shape, 100000.0), pm * 100.0)
    for row in moist:
        drawn += ax.plot(skewed_x(row - 273.15, pm), pm, color=COLOURS["moist_adiabat"], lw=0.7,
                         ls=(0, (5, 3)), zorder=1)
    pw = np.geomspace(p_bottom, 500.0, 20)
    for w in (1.0, 2.0, 4.0, 8.0, 12.0, 16.0, 20.0):
        td = dewpoint_from_vapour_pressure(vapour_pressure_from_mixing_ratio(w / 1000.0, pw * 100.0))
        drawn += ax.plot(skewed_x(td - 273.15, pw), pw, color=COLOURS["mixing_ratio"], lw=0.7,
                         ls=(0, (1, 2)), zorder=1)
        ax.text(skewed_x(td[-1] - 273.15, 500.0), 500.0, f"{w:g}", fontsize=6,
                color=COLOURS["mixing_ratio"], ha="center", va="bottom")
    return drawn


def draw_sounding(profile, ax=None):
    """Temperature and dew point of a profile; returns ``{"temperature": line, "dewpoint": line}``."""
    ax = _new_ax(ax)
    ph = profile.pressure / 100.0
    (lt,) = ax.plot(skewed_x(profile.temperature - 273.15, ph), ph, color=COLOURS["temperature"], lw=2.2,
                    label="temperature", zorder=4)
    (ld,) = ax.plot(skewed_x(profile.dewpoint - 273.15, ph), ph, color=COLOURS["dewpoint"], lw=2.2,
                    label="dew point", zorder=4)
    return {"temperature": lt, "dewpoint": ld}


def draw_parcel(profile, parcel, ax=None, label="surface parcel"):
    """The lifted parcel (a :class:`parcelcast.thermo.ParcelResult` of this profile) and its areas.

    Positive area: parcel warmer than the environment from its origin to the EL;
    negative area: colder, below the LFC (none drawn when the parcel has no LFC).  Returns ``{"parcel", "positive", "negative"}``.
    """
    ax = _new_ax(ax)
    ph = profile.pressure / 100.0
    tp = np.asarray(parcel.parcel_temperature, dtype=np.float64)
    te = profile.temperature
    ok = np.isfinite(tp) & np.isfinite(te)
    (line,) = ax.plot(skewed_x(tp[ok] - 273.15, ph[ok]), ph[ok], color=COLOURS["parcel"], lw=1.6,
                      ls=(0, (6, 2)), label=label, zorder=5)
    xe, xp = skewed_x(te - 273.15, ph), skewed_x(tp - 273.15, ph)
    el = float(parcel.el_pressure) / 100.0 if np.isfinite(parcel.el_pressure) else np.nan
    lfc = float(parcel.lfc_pressure) / 100.0 if np.isfinite(parcel.lfc_pressure) else np.nan
    upper = ok & ((ph >= el) if np.isfinite(el) else False)
    pos = ax.fill_betweenx(ph, xe, xp, where=upper & (tp >= te), interpolate=True,
                           color=COLOURS["positive"], alpha=0.45, lw=0, label="positive area", zorder=2)
    lower = ok & ((ph >= lfc) if np.isfinite(lfc) else np.zeros_like(ok))  # no LFC: no CIN to show
    neg = ax.fill_betweenx(ph, xe, xp, where=lower & (tp < te), interpolate=True,
                           color=COLOURS["negative"], alpha=0.45, lw=0, label="negative area", zorder=2)
    levels = [(name, float(value) / 100.0) for name, value in
              (("LCL", parcel.lcl_pressure), ("LFC", parcel.lfc_pressure), ("EL", parcel.el_pressure))
              if np.isfinite(value)]
    marks = []
    for names, pv in _merge_close_levels(levels):
        xv = float(np.interp(-np.log(pv), -np.log(ph[ok]), xp[ok])) if ok.sum() > 1 else np.nan
        marks += ax.plot([xv + 1.0, xv + 4.0], [pv, pv], color=COLOURS["parcel"], lw=1.0, zorder=6)
        marks.append(ax.text(xv + 4.5, pv, "/".join(names), fontsize=7, va="center",
                             color=COLOURS["parcel"]))
    return {"parcel": line, "positive": pos, "negative": neg, "levels": marks}


def _merge_close_levels(levels, closer_than=0.03):
    """``[(name, hPa), ...]`` grouped where neighbours lie within ``closer_than`` in ln p
    (about 25 hPa near 850 hPa), so that labels such as LCL and LFC never print over each
    other: ``[(["LCL", "LFC"], 905.0), (["EL"], 839.0)]``."""
    groups: list = []
    for name, pv in sorted(levels, key=lambda item: -item[1]):
        if groups and abs(np.log(groups[-1][1] / pv)) < closer_than:
            groups[-1][0].append(name)
        else:
            groups.append(([name], pv))
    return groups


def draw_winds(profile, ax=None, max_barbs=22):
    """Wind barbs in knots (WMO plotting convention: the staff points towards where the wind
    comes from) in a white strip along the right edge of the diagram ``ax``.

    Returns ``{"barbs": Barbs, "strip": the strip's patch}``.
    """
    from parcelcast import formatting

    ax = _new_ax(ax)
    ph = profile.pressure / 100.0
    ok = np.isfinite(profile.u) & np.isfinite(profile.v) & (ph >= P_TOP)
    idx = _spaced_in_log_p(ph, np.flatnonzero(ok), max_barbs)
    strip_x = 0.92  # axes fraction
    strip = ax.axvspan(T_LEFT + (strip_x - 0.06) * (T_RIGHT - T_LEFT), T_RIGHT, color="white",
                       alpha=0.85, lw=0, zorder=6)
    x = np.full(idx.size, T_LEFT + strip_x * (T_RIGHT - T_LEFT))
    barbs = ax.barbs(x, ph[idx], formatting.knots(profile.u[idx]), formatting.knots(profile.v[idx]),
                     length=5.5, linewidth=0.8, color=COLOURS["wind"], zorder=7)
    ax.text(strip_x, 1.005, "wind (kt)", transform=ax.transAxes, fontsize=7, ha="center", va="bottom")
    return {"barbs": barbs, "strip": strip}


def _spaced_in_log_p(ph, idx, count):
    """Indices ``idx`` thinned so that kept levels are at least 1/``count`` of the diagram's
    ln p height apart (barbs of a dense sounding do not overlap), the lowest kept first."""
    if idx.size == 0:
        return idx
    gap = np.log(P_BOTTOM / P_TOP) / count
    order = idx[np.argsort(-ph[idx])]  # from the ground up
    kept = [order[0]]
    for k in order[1:]:
        if np.log(ph[kept[-1]] / ph[k]) >= gap:
            kept.append(k)
    return np.array(kept, dtype=int)


def _layer_steps(layers):
    """Pressures (hPa) and values (K/h) of the piecewise-constant layer profile, with gaps
    (NaN) between layers that do not touch; layers without a value are left out."""
    p, x = [], []
    for lay in layers:
        val = lay["advection_K_per_h"]
        if val is None or not np.isfinite(val):
            continue
        if p and not np.isclose(p[-1], lay["bottom_hPa"]):
            p.append(np.nan)
            x.append(np.nan)
        p += [lay["bottom_hPa"], lay["top_hPa"]]
        x += [val, val]
    return np.array(p, dtype=float), np.array(x, dtype=float)


def draw_advection_profile(layers, gridded=None, ax=None):
    """The temperature-advection profile at the column: a line through the thermal-wind layer
    estimates (K/h) shaded warm (positive) or cold (negative) from zero, and the gridded
    -V.grad T layer means of the analysis at the same column as diamonds.

    Parameters
    ----------
    layers : list of dict
        ``{"bottom_hPa", "top_hPa", "advection_K_per_h"}`` (thermal-wind estimate).
    gridded : list of dict, optional
        The same keys, from :func:`parcelcast.profiles.gridded_layer_advection`.

    Returns ``{"line", "warm", "cold", "points"}`` (points None without ``gridded``).
    """
    ax = _new_ax(ax)
    ax.set_yscale("log")
    ax.set_ylim(P_BOTTOM, P_TOP)
    ax.tick_params(labelleft=False, left=False, labelsize=7)
    p, x = _layer_steps(layers)
    values = [abs(v) for v in x[np.isfinite(x)]]
    points = None
    gp, gx = np.array([]), np.array([])
    if gridded:
        pairs = [(np.sqrt(g["bottom_hPa"] * g["top_hPa"]), g["advection_K_per_h"]) for g in gridded
                 if g["advection_K_per_h"] is not None and np.isfinite(g["advection_K_per_h"])]
        if pairs:
            gp, gx = (np.array(v, dtype=float) for v in zip(*pairs))
            values += list(np.abs(gx))
    lim = max(values + [0.2]) * 1.3
    zero = np.zeros_like(x)
    warm = ax.fill_betweenx(p, zero, x, where=np.nan_to_num(x) > 0, color=COLOURS["warm"], alpha=0.35,
                            lw=0, interpolate=True, label="warm advection")
    cold = ax.fill_betweenx(p, zero, x, where=np.nan_to_num(x) < 0, color=COLOURS["cold"], alpha=0.35,
                            lw=0, interpolate=True, label="cold advection")
    (line,) = ax.plot(x, p, color="#2f2f2f", lw=1.6, label="from the wind profile (thermal wind)")
    if gp.size:
        (points,) = ax.plot(gx, gp, linestyle="none", marker="D", markersize=5.5, markerfacecolor="white",
                            markeredgecolor="#2f2f2f", label="gridded -V\u00b7\u2207T, layer mean")
    ax.axvline(0, color="#777777", lw=0.8)
    ax.set_xlim(-lim, lim)
    ax.set_xlabel("K/h", fontsize=8)
    ax.grid(axis="y", color="#e6e6e6", lw=0.6)
    ax.set_title("temperature advection\n(+ warm, \u2212 cold)", fontsize=8)
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.07), fontsize=6.5, frameon=False)
    return {"line": line, "warm": warm, "cold": cold, "points": points}


def profile_diagram(profile, result, fig=None, parcel="surface", gridded=None):
    """The whole diagram; returns ``(fig, {"main", "advection"} axes, artists)``.

    ``gridded``: the analysis's layer-mean advection at the column (see
    :func:`draw_advection_profile`), drawn beside the thermal-wind profile.
    """
    import matplotlib.pyplot as plt
    from matplotlib import ticker

    if fig is None:
        fig = plt.figure(figsize=(9.0, 7.5))
    gs = fig.add_gridspec(1, 2, width_ratios=[5.4, 1.7], wspace=0.06, left=0.08, right=0.97,
                          top=0.88, bottom=0.14)
    main = fig.add_subplot(gs[0])
    adv = fig.add_subplot(gs[1], sharey=main)
    artists = {"guides": draw_guides(main)}
    artists.update(draw_sounding(profile, main))
    parcels = result.get("_parcels", {})
    if parcel in parcels:
        artists.update(draw_parcel(profile, parcels[parcel], main, label=f"{parcel.replace('_', ' ')} parcel"))
    artists["winds"] = draw_winds(profile, main)
    artists["advection"] = draw_advection_profile(result.get("layers", []), gridded, adv)
    main.legend(loc="lower left", fontsize=7, framealpha=0.9)
    main.yaxis.set_major_locator(ticker.FixedLocator([1000, 850, 700, 500, 400, 300, 250, 200, 150, 100]))
    main.yaxis.set_major_formatter(ticker.FuncFormatter(lambda v, _: f"{v:.0f}"))
    main.yaxis.set_minor_locator(ticker.NullLocator())
    cape = result.get("cape_J_per_kg", {}).get(parcel, np.nan)
    cin = result.get("cin_J_per_kg", {}).get(parcel, np.nan)
    from parcelcast import formatting

    when = f", valid {formatting.time_text(profile.time)}" if profile.time is not None else ""
    where = formatting.position_text(profile.latitude, profile.longitude) if profile.latitude is not None else ""
    fig.suptitle(f"Profile {where}{when}", fontsize=10, x=0.08, ha="left")
    fig.text(0.08, 0.945, f"{_short_source(profile.source)}; {parcel.replace('_', ' ')} parcel: "
             f"CAPE {cape:.0f} J/kg, CIN {cin:.0f} J/kg", fontsize=8, ha="left", color="#333333")
    fig.text(0.08, 0.01, "Guidance, not an official forecast: defer to the national weather service.",
             fontsize=6.5, color="#555555")
    return fig, {"main": main, "advection": adv}, artists


def _short_source(source: str) -> str:
    """The file name of a profile's source (folders left out), keeping any "at ..." suffix."""
    from pathlib import Path

    text = str(source)
    head, sep, tail = text.partition(" at ")
    return Path(head).name + (sep + tail if sep else "")


def save_profile_diagram(profile, result, path, dpi=110, gridded=None):
    """Draw :func:`profile_diagram` and write it to ``path`` (PNG) atomically, Agg backend."""
    import matplotlib

    matplotlib.use("Agg", force=False)
    from matplotlib.figure import Figure

    from parcelcast.io.atomic import atomic_path

    fig = Figure(figsize=(9.0, 7.5))
    profile_diagram(profile, result, fig=fig, gridded=gridded)
    with atomic_path(path) as tmp:
        fig.savefig(tmp, format="png", dpi=dpi)
    return path
