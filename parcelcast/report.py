"""The written case review: Markdown and HTML from one template (``templates/review.j2``).

Says plainly that the content is guidance, not an official forecast or warning.  Both
pages carry the same sections (summary, trajectory, timeline, figures, method), because
both come from the same template (:mod:`parcelcast.pages`).
"""

from __future__ import annotations

from parcelcast import formatting
from parcelcast.budget.consistency import verdict
from parcelcast.cli import DISCLAIMER

FIGURES = (("timeline.png", "Split of the change at the station, accumulated from the start"),
           ("split-maps.png", "The split as maps over the window"),
           ("trajectories.png", "Back trajectories arriving at key times"))

METHOD = ("Advective part: -V.grad T on the sphere of the fields interpolated linearly in time "
          "between analyses, integrated by Simpson's rule on each piece between analysis times. "
          "Vertical part: omega times the static stability R_d T/(c_p p) - dT/dp "
          "(not available without omega). Residual: what remains, i.e. diabatic heating "
          "(sunshine, cloud, evaporation, radiation) plus errors, plus the vertical-motion part "
          "when omega is not available. Lagrangian view: isobaric back "
          "trajectories; the temperature change following the air is the non-advective part.")


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


def consistency_lines(consistency) -> list[str]:
    """The split's check that its two views agree (the ``consistency`` object of
    :mod:`parcelcast.budget.consistency`): the figure and verdict, then its warnings."""
    if not consistency:
        return []
    from parcelcast.budget.consistency import summary

    return [summary(consistency) + "."] + [str(w) for w in consistency.get("warnings", [])]


def page_context(review: dict, images: dict | None = None) -> dict:
    """The words and tables of the review page; ``images`` maps figure files to the ``src``
    to use (default: the file names, for pages beside their figures)."""
    case, lg = review["case"], review["lagrangian"]
    images = images or {}
    consistency = review["consistency"]
    return {
        "title": f"Case review: {case.title}",
        "disclaimer": DISCLAIMER,
        "station_line": (f"Station {case.station_name} ({formatting.position_text(case.lat, case.lon)}), "
                         f"{case.level_hpa:g} hPa, {formatting.time_text(case.start)} to "
                         f"{formatting.time_text(case.end)}, {case.wind} wind."),
        "summary_rows": summary_rows(review),
        "trajectory_line": (
            f"The central back trajectory started at "
            f"{formatting.position_text(lg['origin_lat'], lg['origin_lon'])}; {lg['reached_start']} of "
            f"{lg['trajectories']} trajectories reached the window start (statuses: "
            f"{', '.join(lg['statuses'])})."),
        "consistency_meaning": consistency["meaning"],
        "consistency_warnings": [str(w) for w in consistency["warnings"]],
        "timeline_rows": [[formatting.time_text(row["time"]), _k(row["observed_change_K"]),
                           _k(row["advective_K"]), _k(row["vertical_K"]), _k(row["residual_K"])]
                          for row in review["timeline"]],
        "figures": [{"src": images.get(name, name), "caption": caption} for name, caption in FIGURES],
        "method": METHOD,
    }


def markdown(review: dict) -> str:
    from parcelcast.pages import render_page

    return render_page("review.j2", "markdown", page_context(review))


def html_page(review: dict, images: dict | None = None) -> str:
    from parcelcast.pages import render_page

    return render_page("review.j2", "html", page_context(review, images))
