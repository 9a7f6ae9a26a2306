"""The written case review: Markdown and HTML from what the library computed.

Says plainly that the content is guidance, not an official forecast or warning.
"""

from __future__ import annotations

import html

from parcelcast.budget.consistency import verdict
from parcelcast.cli import DISCLAIMER

FIGURES = (("timeline.png", "Split of the change at the station, accumulated from the start"),
           ("split-maps.png", "The split as maps over the window"),
           ("trajectories.png", "Back trajectories arriving at key times"))


def _k(value) -> str:
    return "not available" if value is None else f"{value:+.2f} K"


def summary_rows(review: dict) -> list[tuple[str, str]]:
    e, lg = review["eulerian"], review["lagrangian"]
    rows = [
        ("Observed change", _k(e["observed_change_K"])),
        ("Advective part (Eulerian, -V.grad T integrated)", _k(e["advective_K"])),
        ("Vertical-motion part (omega S_p integrated)", _k(e["vertical_K"])),
        (f"Residual: {e['residual_note']}", _k(e["residual_K"])),
        ("Lagrangian non-advective part (following the air)", _k(lg["non_advective_K"])),
        ("Lagrangian advective part", _k(lg["advective_K"])),
        ("Spread of the Lagrangian estimate", _k(lg["spread_K"])),
    ]
    c = review["consistency"]
    rows.append((f"Eulerian minus Lagrangian advective part ({c['footing']})",
                 _k(c["eulerian_minus_lagrangian_K"])))
    rows.append(("Do the two views agree?", verdict(c)))
    return rows


def markdown(review: dict) -> str:
    case = review["case"]
    lines = [
        f"# Case review: {case.title}",
        "",
        f"> {DISCLAIMER}",
        "",
        f"Station **{case.station_name}** ({case.lat:.2f} N, {case.lon:.2f} E), "
        f"{case.level_hpa:g} hPa, {str(case.start)[:16]} to {str(case.end)[:16]} UTC, "
        f"{case.wind} wind.",
        "",
        "| quantity | value |",
        "| --- | --- |",
    ]
    lines += [f"| {a} | {b} |" for a, b in summary_rows(review)]
    lg = review["lagrangian"]
    lines += [
        "",
        f"The central back trajectory started at {lg['origin_lat']:.1f} N, {lg['origin_lon']:.1f} E; "
        f"{lg['reached_start']} of {lg['trajectories']} trajectories reached the window start "
        f"(statuses: {', '.join(lg['statuses'])}).",
        "",
        "## Timeline",
        "",
        "| time (UTC) | observed | advective | vertical | residual |",
        "| --- | --- | --- | --- | --- |",
    ]
    for row in review["timeline"]:
        lines.append(f"| {str(row['time'])[:16]} | {_k(row['observed_change_K'])} | "
                     f"{_k(row['advective_K'])} | {_k(row['vertical_K'])} | {_k(row['residual_K'])} |")
    c = review["consistency"]
    lines += ["", "## Do the two views agree?", "", c["meaning"], ""]
    lines += [f"- {w}" for w in c["warnings"]]
    lines += ["", "## Figures", ""]
    lines += [f"![{caption}]({name})" for name, caption in FIGURES]
    lines += ["", "## Method", "",
              "Advective part: -V.grad T on the sphere of the fields interpolated linearly in time "
              "between analyses, integrated by Simpson's rule on each piece between analysis times. Vertical part: omega times the static stability R_d T/(c_p p) - dT/dp "
              "(not available without omega). Residual: what remains, i.e. diabatic heating "
              "(sunshine, cloud, evaporation, radiation) plus errors, plus the vertical-motion part "
              "when omega is not available. Lagrangian view: isobaric back "
              "trajectories; the temperature change following the air is the non-advective part.", ""]
    return "\n".join(lines)


def html_page(review: dict) -> str:
    case = review["case"]
    rows = "".join(f"<tr><td>{html.escape(a)}</td><td>{html.escape(b)}</td></tr>"
                   for a, b in summary_rows(review))
    timeline = "".join(
        f"<tr><td>{str(r['time'])[:16]}</td><td>{_k(r['observed_change_K'])}</td><td>{_k(r['advective_K'])}"
        f"</td><td>{_k(r['vertical_K'])}</td><td>{_k(r['residual_K'])}</td></tr>" for r in review["timeline"])
    figures = "".join(f"<figure><img src='{n}' alt='{html.escape(c)}'><figcaption>{html.escape(c)}"
                      "</figcaption></figure>" for n, c in FIGURES)
    return f"""<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Case review: {html.escape(case.title)}</title>
<style>body{{font-family:sans-serif;max-width:60em;margin:2em auto;color:#1d2a33}}
.notice{{border-left:4px solid #b9770e;background:#fdf2e0;padding:.6em 1em}}
table{{border-collapse:collapse}}td,th{{border:1px solid #ccd;padding:.2em .6em}}img{{max-width:100%}}</style>
</head><body><h1>Case review: {html.escape(case.title)}</h1>
<p class="notice">{html.escape(DISCLAIMER)}</p>
<p>Station <b>{html.escape(case.station_name)}</b> ({case.lat:.2f} N, {case.lon:.2f} E), {case.level_hpa:g} hPa,
{str(case.start)[:16]} to {str(case.end)[:16]} UTC, {html.escape(case.wind)} wind.</p>
<table><tr><th>quantity</th><th>value</th></tr>{rows}</table>
<h2>Do the two views agree?</h2><p>{html.escape(review["consistency"]["meaning"])}</p>
<ul>{"".join(f"<li>{html.escape(w)}</li>" for w in review["consistency"]["warnings"])}</ul>
<h2>Timeline</h2><table><tr><th>time (UTC)</th><th>observed</th><th>advective</th><th>vertical</th>
<th>residual</th></tr>{timeline}</table><h2>Figures</h2>{figures}</body></html>
"""
