"""``parcelcast profile``: indices, thermal-wind advection and guidance of one profile.

Three forms::

    parcelcast profile SOUNDING.csv [--lat LAT --lon LON --time ISO] [--json] [--plot OUT.png]
    parcelcast profile TEMP.bufr (--station WMO_ID | --at LAT,LON | --list) [--json] [--plot OUT.png]
    parcelcast profile ANALYSIS... --at LAT,LON [--time ISO] [--var ROLE=NAME] [--json] [--plot OUT.png]
"""

from __future__ import annotations

import argparse

from parcelcast.cli import _common


#: what the analysis column and the gridded layer advection use (nothing else is read)
COLUMN_ROLES = ("temperature", "geopotential", "relative_humidity", "specific_humidity", "u", "v",
                "surface_pressure", "near_surface_temperature")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("files", nargs="+", metavar="FILE",
                        help="a profile CSV file (header names quantity and unit, e.g. pressure_hPa, "
                        "temperature_degC), a BUFR file of radiosonde ascents (WMO TEMP), or analysis "
                        "files (NetCDF/GRIB) with --at")
    parser.add_argument("--at", type=_common.lat_lon, metavar="LAT,LON",
                        help="take the column of the analysis files at this point (degrees); with a "
                        "BUFR file, the ascent nearest to it")
    parser.add_argument("--station", metavar="WMO_ID",
                        help="BUFR: the ascent of this station (5-digit index, block x 1000 + station)")
    parser.add_argument("--list", action="store_true",
                        help="BUFR: list the ascents (station, position, time, levels) and stop")
    parser.add_argument("--lat", type=_common.latitude, help="latitude of a CSV profile (degrees north)")
    parser.add_argument("--lon", type=_common.longitude, help="longitude of a CSV profile (degrees east)")
    parser.add_argument("--time", type=_common.utc_time, metavar="ISO",
                        help="valid time (UTC unless a zone is given): of the analysis column, "
                        "default the latest; or of a CSV profile that does not state one")
    parser.add_argument("--var", action="append", type=_common.variable_override, default=[],
                        metavar="ROLE=NAME", help="name the analysis variable for a role; repeatable")
    parser.add_argument("--humidity-over", choices=("water", "ice", "mixed"),
                        help="analyses: how their relative humidity is defined (default: from the GRIB "
                        "originating centre, e.g. NCEP or ECMWF mixed phase; over water when unknown)")
    parser.add_argument("--advected-change", type=float, default=0.0, metavar="K",
                        help="temperature change (K) expected from advection by the afternoon, "
                        "added to the top-temperature guidance")
    parser.add_argument("--json", action="store_true", help="print the results as JSON")
    parser.add_argument("--plot", metavar="PATH.png", help="draw a skew-T log-p diagram to this file")


def build_report(profile, result, comparison=None, selection=None) -> dict:
    """The JSON document of the command (library values, renamed for people).

    ``selection``: for a BUFR ascent, how it was chosen (station, distance from ``--at``).
    """
    from parcelcast.cli import DISCLAIMER

    doc = {}
    if selection is not None:
        doc.update(selection)
    doc.update({
        "source": profile.source,
        "lat": profile.latitude,  # the vocabulary of every command (README)
        "lon": profile.longitude,
        "latitude": profile.latitude,  # earlier spelling, kept for existing readers
        "longitude": profile.longitude,
        "time": _common.iso_utc(profile.time) if profile.time is not None else None,
        "levels": profile.nlev,
    })
    doc.update(result)
    if profile.humidity_rule is not None:
        doc["humidity_rule"] = profile.humidity_rule
    if comparison is not None:
        doc["gridded_layers"] = comparison
    doc["thermal_wind_assumptions"] = (
        "geostrophic winds, uniform temperature gradient through each layer, f at the profile's "
        "latitude; veering with height = warm advection (northern hemisphere)")
    doc["notes"] = list(profile.notes)
    doc["disclaimer"] = DISCLAIMER
    return _common.jsonable(doc)


def _number(x, fmt="{:.0f}") -> str:
    """A value for the text output: "--" when missing, never "-0"."""
    if x is None:
        return "--"
    text = fmt.format(x)
    return text[1:] if text.startswith("-") and not text.strip("-0.") else text


def _height_text(doc, key, name) -> str:
    if doc[f"{key}_m"] is None:
        return f"{name} -- ({doc.get(f'{key}_missing_because', 'not found')})"
    return (f"{name} {_number(doc[f'{key}_m'])} m above sea level, "
            f"{_number(doc[f'{key}_above_ground_m'])} m above ground")


def _text(doc) -> str:
    from parcelcast.formatting import temperature_text

    f = _number
    parcels = doc["index_parcels"]
    lines = [f"Profile: {doc['source']}" + (f"  valid {doc['time']}" if doc.get("time") else "")]
    if doc.get("chosen_by"):
        lines.append(f"  {doc['chosen_by']}")
    lines.append(f"  LCL ({parcels['lcl_hPa'].replace('_', '-')} parcel) {f(doc['lcl_hPa'])} hPa, "
                 f"{temperature_text(doc['lcl_temperature_K'])}")
    for kind in ("surface", "mixed_layer", "most_unstable"):
        lines.append(f"  {kind.replace('_', ' '):14s} CAPE {f(doc['cape_J_per_kg'][kind]):>6} J/kg  CIN "
                     f"{f(doc['cin_J_per_kg'][kind]):>6} J/kg  LFC {f(doc['lfc_hPa'][kind]):>5} hPa  "
                     f"EL {f(doc['el_hPa'][kind]):>5} hPa  lifted index "
                     f"{f(doc['lifted_index_by_parcel_K'][kind], '{:.1f}'):>5} K")
    lines.append(f"  lifted index ({parcels['lifted_index_K'].replace('_', '-')} parcel) "
                 f"{f(doc['lifted_index_K'], '{:.1f}')} K, Showalter ({parcels['showalter_index_K']} parcel) "
                 f"{f(doc['showalter_index_K'], '{:.1f}')} K, K index {f(doc['k_index_K'], '{:.0f}')}, "
                 f"Total Totals {f(doc['total_totals_K'], '{:.0f}')}")
    pw_layer = doc["precipitable_water_layer_hPa"]
    lines.append(f"  precipitable water {f(doc['precipitable_water_mm'], '{:.1f}')} mm "
                 f"({f(pw_layer['bottom'])}-{f(pw_layer['top'])} hPa; humidity reported "
                 f"{f(doc['humidity_layer_hPa']['bottom'])}-{f(doc['humidity_layer_hPa']['top'])} hPa)")
    lines.append("  " + _height_text(doc, "freezing_level", "freezing level"))
    lines.append("  " + _height_text(doc, "wet_bulb_zero", "wet-bulb zero"))
    g = doc["top_temperature_guidance"]
    lines.append(f"  top-temperature guidance {temperature_text(g['temperature_K'])} "
                 f"(mixing from {f(g['mixing_top_hPa'])} hPa)")
    if doc.get("humidity_rule"):
        lines.append(f"  humidity: {doc['humidity_rule']['meaning']} ({doc['humidity_rule']['chosen']})")
    if doc["layers"]:
        gridded = doc.get("gridded_layers")
        lines.append("  thermal-wind advection by layer (K/h, + warm)"
                     + (", and gridded -V.grad T at the point:" if gridded else ":"))
        for i, lay in enumerate(doc["layers"]):
            extra = f"   gridded {f(gridded[i]['advection_K_per_h'], '{:+.2f}')}" if gridded else ""
            lines.append(f"    {lay['bottom_hPa']:.0f}-{lay['top_hPa']:.0f} hPa  "
                         f"{f(lay['advection_K_per_h'], '{:+.2f}')}{extra}")
        if doc["layers"][0].get("missing_because"):
            lines.append(f"    (thermal-wind advection missing: {doc['layers'][0]['missing_because']})")
    for n in doc["notes"]:
        lines.append(f"  note: {n}")
    lines.append(doc["disclaimer"])
    return "\n".join(lines)


def _bufr_profile(args):
    """(profile, selection dict) of the ascent chosen by --station or --at; None after --list."""
    from parcelcast.io.bufr import ascent_profile, read_ascents, select_ascent

    ascents = read_ascents(args.files[0])
    if args.list:
        rows = [a.summary() for a in ascents]
        if args.json:
            _common.print_json(_common.jsonable({"source": args.files[0], "ascents": rows}))
        else:
            print(f"{len(rows)} ascent(s) in {args.files[0]}:")
            for r in rows:
                print(f"  {r['station'] or '-----'}  {r['lat']:8.3f} {r['lon']:9.3f}  "
                      f"{_common.iso_utc(r['time'])}  {r['levels']:4d} levels, top {r['top_hPa']:g} hPa")
        return None
    ascent, km = select_ascent(ascents, args.station, args.at)
    selection = {"station": ascent.station, "time": ascent.time, "lat": ascent.latitude,
                 "lon": ascent.longitude}
    if km is not None:
        selection["distance_km"] = km
        selection["chosen_by"] = (f"nearest ascent to {args.at[0]:g},{args.at[1]:g}: station "
                                  f"{ascent.station} at {ascent.latitude:g},{ascent.longitude:g}, {km:.0f} km away")
    return ascent_profile(ascent), selection


def run(args) -> int:
    from pathlib import Path

    from parcelcast.errors import UsageError
    from parcelcast.io.bufr import is_bufr
    from parcelcast.profiles import analyse, column_from_analysis, gridded_layer_advection, read_profile_csv

    comparison = None
    selection = None
    bufr = len(args.files) == 1 and is_bufr(args.files[0])
    if (args.station or args.list) and not bufr:
        raise UsageError("--station and --list need one BUFR file of radiosonde ascents "
                         f"(got {', '.join(args.files)})")
    if bufr:
        chosen = _bufr_profile(args)
        if chosen is None:
            return 0
        profile, selection = chosen
        result = analyse(profile, advective_change=args.advected_change)
    elif args.at is None:
        if len(args.files) != 1 or Path(args.files[0]).suffix.lower() not in (".csv", ".txt"):
            raise UsageError(
                "give one profile CSV file, one BUFR file, or analysis files with --at LAT,LON "
                f"(got {', '.join(args.files)})")
        profile = read_profile_csv(args.files[0], args.lat, args.lon, args.time)
        result = analyse(profile, advective_change=args.advected_change)
    else:
        from parcelcast.io.analysis import open_analysis

        lat, lon = args.at
        ds = open_analysis(args.files, dict(args.var), roles=COLUMN_ROLES,
                           time=args.time if args.time is not None else "latest")
        profile = column_from_analysis(ds, lat, lon, args.time, args.humidity_over)
        result = analyse(profile, advective_change=args.advected_change)
        if {"temperature", "u", "v"} <= set(ds.data_vars):
            comparison = gridded_layer_advection(
                ds, lat, lon, [(x["bottom_hPa"], x["top_hPa"]) for x in result["layers"]], args.time)
    if args.humidity_over and (bufr or args.at is None):
        profile.notes.append(f"--humidity-over {args.humidity_over} not used: sounding dew points are over "
                             "water (WMO practice); the option applies to analyses' relative humidity")
    doc = build_report(profile, result, comparison, selection)
    if args.plot:
        from parcelcast.render.skewt import save_profile_diagram

        save_profile_diagram(profile, result, args.plot, gridded=comparison)
    if args.json:
        _common.print_json(doc)
    else:
        print(_text(doc))
    return 0
