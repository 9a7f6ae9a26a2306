"""Writing the briefing: figures, one self-contained HTML page, a Markdown page, a JSON summary.

What belongs here: :func:`write_brief`, which draws the figures, renders both pages from
the one template ``templates/brief.j2`` and writes the JSON, all into a temporary sibling
folder that then replaces the output folder as a whole (``io/atomic.py``).  The HTML page
carries its images as ``data:`` URIs and refers to nothing outside itself; the Markdown
page refers to the PNG files beside it.
"""

from __future__ import annotations

import json
from pathlib import Path

from parcelcast import formatting
from parcelcast.brief.assemble import entry_level, level_name
from parcelcast.io.atomic import atomic_folder, write_text
from parcelcast.selection import level_phrase

FILES = {"html": "brief.html", "markdown": "brief.md", "json": "brief.json"}

METHOD = (
    "Advection is -V.grad T on the sphere at each level, from the analysed wind or the "
    "geostrophic wind derived from the geopotential; positive values are warm advection, in K/h. "
    "Station values are bilinear in latitude and longitude (member means for an ensemble).",
    "Back trajectories are isobaric, integrated with the iterative Petterssen scheme from a cloud "
    "of starts around the station (and every member of an ensemble analysis).",
    "The split compares the analysed change over the trajectory window with its advective part "
    "(the time integral of -V.grad T), the part from rising or sinking air (omega times the "
    "static stability, when omega is available) and the residual (heating or cooling on the spot, "
    "and errors); the Lagrangian view follows the air instead.",
    "Winds are shown as direction (where the wind comes from) and speed in knots; temperatures "
    "in degrees Celsius; files keep SI units (K, m/s, K/s).",
)
CREDITS = ("Coastlines and borders: Made with Natural Earth (public domain). "
           "Computed by parcelcast from the analyses named above.")


def write_brief(brief: dict, out_dir, workers=None) -> dict:
    """Write the briefing into ``out_dir`` (replaced as a whole); returns the JSON document.

    ``workers``: a :class:`parcelcast.render.parallel.FigureWorkers` entered before the
    briefing was assembled (so the drawing processes got ready meanwhile); default: the
    figures are drawn here, one after the other.
    """
    out_dir = Path(out_dir)
    with atomic_folder(out_dir) as tmp:
        figures = draw_figures(brief, tmp, workers)
        doc = json_document(brief, figures)
        write_text(tmp / FILES["json"], json.dumps(doc, indent=2, allow_nan=False) + "\n")
        for fmt in ("html", "markdown"):
            write_text(tmp / FILES[fmt], page(brief, figures, fmt, tmp))
    return doc


# --------------------------------------------------------------------------- figures
def draw_figures(brief: dict, folder: Path, workers=None) -> list[dict]:
    """Advection maps (one per level), the trajectory map and the profile diagram, drawn
    by ``workers`` (:class:`parcelcast.render.parallel.FigureWorkers`) or one after the
    other here."""
    from parcelcast.render.parallel import FigureWorkers

    station = (brief["station"]["name"], brief["station"]["lat"], brief["station"]["lon"])
    jobs, figures = [], []
    traj = brief["trajectories"]
    if traj["available"]:  # the slowest figure first
        name = "trajectories.png"
        jobs.append((_trajectory_figure, (
            traj["_paths"], folder / name, station,
            f"{traj['hours']:g}-h back trajectories to {station[0]} at {traj['level_hPa']:g} hPa "
            f"({brief['wind']} wind)", _sources(brief))))
        figures.append({"file": name, "kind": "trajectory_map",
                        "caption": f"Back trajectories arriving at "
                        f"{formatting.time_text(traj['arrival_time'])}: central path bold, members "
                        f"thin, marks every 6 h, colour = pressure."})
    for level in brief["levels"]:
        if not level.get("available"):
            continue
        surface = level["level_hPa"] is None
        name = "advection-surface.png" if surface else f"advection-{level['level_hPa']:g}hPa.png"
        jobs.append((_advection_figure, (level["_fields"], folder / name, station, brief["area"])))
        figures.append({"file": name, "kind": "advection_map", "level": level["level"],
                        "level_hPa": level["level_hPa"],
                        "caption": f"Temperature advection at {level_phrase(entry_level(level))}, valid "
                        f"{formatting.time_text(brief['valid_time'])}: red warm, blue cold (K/h); "
                        "isotherms in \u00b0C; barbs in kt."})
    prof = brief["profile"]
    if prof["available"]:
        name = "profile.png"
        jobs.append((_profile_figure, (prof["_profile"], prof["_result"], folder / name,
                                       prof["gridded_layers"])))
        figures.append({"file": name, "kind": "profile_diagram",
                        "caption": "Profile at the station (skew-T log-p): temperature, dew point, "
                        "lifted parcel, winds in kt and the advection profile."})
    if workers is None:
        with FigureWorkers(workers=1) as workers:
            results = workers.draw(jobs)
    else:
        results = workers.draw(jobs)
    for figure, drawn in zip(figures, results):
        figure.update(drawn)
    order = {"advection_map": 0, "trajectory_map": 1, "profile_diagram": 2}  # as on the page
    figures.sort(key=lambda f: order[f["kind"]])
    return [{key: f[key] for key in ("file", "kind", "area", "coastlines", "level", "level_hPa",
                                     "caption")
             if key in f} for f in figures]


def _advection_figure(fields, path, station, area) -> dict:
    from parcelcast.render.maps import advection_map

    drawn = advection_map(fields, path, station=station, area=area)
    return {"area": drawn["area"], "coastlines": drawn["coastlines"]}


def _trajectory_figure(paths, path, station, title, source) -> dict:
    from parcelcast.render.trajectory_maps import trajectory_map

    drawn = trajectory_map(paths, path, station=station, title=title, source=source)
    return {"area": drawn["area"], "coastlines": drawn["coastlines"]}


def _profile_figure(profile, result, path, gridded) -> dict:
    from parcelcast.render.skewt import save_profile_diagram

    save_profile_diagram(profile, result, path, gridded=gridded)
    return {"area": None, "coastlines": None}


def _sources(brief: dict) -> str:
    names = [Path(p).name for p in brief["source_files"] if p]
    return ", ".join(names) if len(names) <= 2 else f"{names[0]} and {len(names) - 1} more"


# --------------------------------------------------------------------------- JSON
def json_document(brief: dict, figures: list[dict]) -> dict:
    """The JSON summary: plain values, times as ISO 8601 UTC, arrays (``_`` keys) left out."""
    from parcelcast.cli._common import jsonable

    doc = {key: brief[key] for key in ("title", "station", "valid_time", "wind", "area", "levels",
                                       "trajectories", "split", "profile")}
    doc["source_files"] = [p for p in brief["source_files"] if p]
    doc["analysis_times"] = brief["analysis_times"]
    doc["figures"] = [{k: v for k, v in fig.items()} for fig in figures]
    for key in ("summary", "cautions", "warnings", "disclaimer"):
        doc[key] = brief[key]
    doc["units"] = {"temperature_degC": "degC", "temperature_K": "K", "wind_speed_kt": "knot",
                    "wind_direction_deg": "degree, where the wind comes from (360 = north)",
                    "advection_K_per_h": "K/h, positive = warm advection",
                    "u_m_s": "m/s eastward", "v_m_s": "m/s northward"}
    return jsonable(doc)


# --------------------------------------------------------------------------- pages
def page(brief: dict, figures: list[dict], fmt: str, folder: Path) -> str:
    """One page (HTML with images inside, or Markdown beside its images) from ``brief.j2``."""
    from parcelcast.pages import data_uri, render_page

    shown = [{"src": data_uri(folder / f["file"]) if fmt == "html" else f["file"],
              "caption": f["caption"]} for f in figures]
    return render_page("brief.j2", fmt, page_context(brief, shown))


def page_context(brief: dict, figures: list[dict]) -> dict:
    """The words and tables of the page (formatted for people: degC, kt, K/h)."""
    from parcelcast.report import consistency_lines

    station = brief["station"]
    context = {
        "title": f"{brief['title']}, valid {formatting.time_text(brief['valid_time'])}",
        "disclaimer": brief["disclaimer"],
        "meta_line": (f"{station['name']} ({formatting.position_text(station['lat'], station['lon'])}); "
                      f"{brief['wind']} wind; analyses: {_sources(brief)}"),
        "summary": brief["summary"],
        "station_header": ["level", "temperature", "wind", "advection (+ warm)"],
        "station_rows": [_level_row(level) for level in brief["levels"]],
        "figures": figures,
        "cautions": brief["cautions"],
        "warnings": brief["warnings"],
        "method": METHOD,
        "credits": CREDITS,
    }
    traj, split, prof = brief["trajectories"], brief["split"], brief["profile"]
    context["trajectory_rows"] = _trajectory_rows(traj) if traj["available"] else []
    context["trajectory_reason"] = _sentence(traj.get("reason", ""))
    context["split_rows"] = _split_rows(split) if split["available"] else []
    context["split_reason"] = _sentence(split.get("reason", ""))
    context["consistency_lines"] = consistency_lines(split.get("consistency"))
    context["profile_rows"] = _profile_rows(prof) if prof["available"] else []
    context["profile_reason"] = _sentence(prof.get("reason", ""))
    return context


def _sentence(text: str) -> str:
    """``text`` as a sentence: capital first letter, full stop."""
    text = text.strip()
    if not text:
        return text
    return text[0].upper() + text[1:] + ("" if text.endswith(".") else ".")


def _level_row(level: dict) -> list[str]:
    if not level.get("available"):
        return [level_name(level), formatting.MISSING, formatting.MISSING, level["reason"]]
    advection = formatting.advection_text(level["advection_K_per_h"])
    if level.get("advection_spread_K_per_h") is not None:
        advection += f" (members \u00b1{level['advection_spread_K_per_h']:.2f})"
    return [level_name(level), formatting.temperature_text(level["temperature_K"]),
            formatting.wind_text(level["u_m_s"], level["v_m_s"]), advection]


def _trajectory_rows(traj: dict) -> list[list[str]]:
    rows = [
        ["arrival", f"{formatting.time_text(traj['arrival_time'])} at {traj['level_hPa']:g} hPa"],
        [f"origin {traj['hours_covered']:g} h earlier", f"{formatting.position_text(traj['origin_lat'], traj['origin_lon'])}, "
         f"{traj['origin_pressure_hPa']:.0f} hPa"],
        ["distance and direction", f"{formatting.distance_text(traj['distance_km'])} "
         f"{formatting.compass(traj['bearing_deg'])}"],
        ["temperature there and then", formatting.temperature_text(
            None if traj["origin_temperature_degC"] is None else traj["origin_temperature_degC"] + 273.15)],
        ["change on the way", formatting.difference_text(traj["temperature_change_K"])],
        ["members complete", f"{traj['members_complete']} of {traj['members']}"],
        ["spread of the members", formatting.distance_text(traj["spread_km"])],
    ]
    return rows


def _split_rows(split: dict) -> list[list[str]]:
    d = formatting.difference_text
    lg = split["lagrangian"]
    window = f"{formatting.time_text(split['start'])} to {formatting.time_text(split['end'])}"
    return [
        ["window", f"{window} at {split['level_hPa']:g} hPa"],
        ["analysed change", d(split["observed_change_K"])],
        ["carried in by the wind (advective)", d(split["advective_K"])],
        ["rising or sinking air (vertical)", d(split["vertical_K"]) if split["vertical_available"]
         else "not available (no omega in the analyses)"],
        [f"residual: {split['residual_note']}", d(split["residual_K"])],
        ["following the air: made on the way", d(lg["non_advective_K"])],
        ["following the air: advective", d(lg["advective_K"])],
        ["Eulerian minus Lagrangian advective part", d(split["advective_difference_K"])],
    ]


def _profile_rows(prof: dict) -> list[list[str]]:
    def num(value, unit, fmt="{:.0f}"):
        return formatting.MISSING if value is None else f"{fmt.format(value)} {unit}"

    rows = [
        ["surface-based CAPE / CIN", f"{num(prof['cape_surface_J_per_kg'], 'J/kg')} / "
         f"{num(prof['cin_surface_J_per_kg'], 'J/kg')}"],
        ["most-unstable CAPE", num(prof["cape_most_unstable_J_per_kg"], "J/kg")],
        ["cloud base (LCL)", num(prof["lcl_hPa"], "hPa")],
        ["lifted index", num(prof["lifted_index_K"], "K", "{:+.1f}")],
        ["precipitable water", num(prof["precipitable_water_mm"], "mm", "{:.1f}")],
        ["freezing level", num(prof["freezing_level_m"], "m")],
        ["top-temperature guidance (mixing down, common practice)",
         num(prof["top_temperature_degC"], "\u00b0C", "{:.1f}")],
    ]
    gridded = prof["gridded_layers"] or [None] * len(prof["layers"])
    for lay, grid in zip(prof["layers"], gridded):
        text = f"{formatting.advection_text(lay['advection_K_per_h'])} from the wind profile"
        if grid is not None:
            text += f", {formatting.advection_text(grid['advection_K_per_h'])} gridded"
        rows.append([f"advection {lay['bottom_hPa']:.0f}-{lay['top_hPa']:.0f} hPa", text])
    return rows
