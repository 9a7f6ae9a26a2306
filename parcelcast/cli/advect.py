"""``parcelcast advect``: temperature advection on a pressure level or at the surface (map, point, NetCDF)."""

from __future__ import annotations

import argparse

from parcelcast.cli._area import add_area_argument
from parcelcast.constants import SECONDS_PER_HOUR
from parcelcast.cli._common import (
    add_input_arguments,
    iso_utc,
    json_number,
    lat_lon,
    pressure_level_or_surface,
    print_json,
    require_valid_time,
    utc_time,
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_input_arguments(parser)
    parser.add_argument("--level", type=pressure_level_or_surface, required=True,
                        metavar="HPA|surface",
                        help="pressure level in hPa, e.g. 850, or 'surface': the 2-m temperature "
                        "advected by the 10-m wind")
    parser.add_argument("--time", type=utc_time, metavar="ISO",
                        help="valid time (UTC unless a zone is given); default: the latest")
    parser.add_argument("--at", type=lat_lon, metavar="LAT,LON",
                        help="report values at this point (bilinear)")
    parser.add_argument("--wind", choices=("actual", "geostrophic"), default="actual",
                        help="advecting wind: the analysed wind or the geostrophic wind from "
                        "geopotential (default: actual)")
    parser.add_argument("--json", action="store_true", help="print JSON instead of text")
    parser.add_argument("--out", metavar="PATH.nc", help="write the fields to CF NetCDF")
    parser.add_argument("--plot", "--map", dest="map", metavar="PATH.png",
                        help="draw a map to PNG (--map: earlier spelling)")
    add_area_argument(parser)


def run(args) -> int:
    from parcelcast.advection import advection_on_level
    from parcelcast.selection import member_mean
    from parcelcast.cli import DISCLAIMER
    from parcelcast.io.analysis import open_analysis
    from parcelcast.selection import check_surface_wind, is_surface, roles_at_level

    if is_surface(args.level):
        check_surface_wind(args.wind)  # before any file is read
    # geopotential is looked for with the actual wind too: without u/v the error suggests --wind geostrophic
    roles = ("temperature", "u", "v", "geopotential") if args.wind == "actual" else ("temperature", "geopotential")
    roles += ("surface_pressure", "orography")  # to mask levels below the ground
    ds = open_analysis(args.files, dict(args.var), roles=roles_at_level(roles, args.level),
                       levels=None if is_surface(args.level) else args.level * 100.0,  # that level only (Pa)
                       time=args.time if args.time is not None else "latest")  # and that time
    require_valid_time(ds, "the advection is reported at the valid time of an analysis")
    fields = advection_on_level(ds, args.level, args.time, args.wind)
    fields.attrs["level"] = args.level
    if args.at is not None:
        summary = point_summary(fields, *args.at)
    else:
        summary = field_summary(fields)
    summary["disclaimer"] = DISCLAIMER
    if args.out:
        write_fields(fields, args.out)
    if args.map:
        from parcelcast.render.maps import advection_map

        advection_map(member_mean(fields), args.map, station=args.at, area=args.area)
    if args.json:
        print_json(summary)
    else:
        print_text(summary)
    return 0


def _base(fields) -> dict:
    import json

    from parcelcast.selection import level_json

    if "level" in fields.coords:
        level = level_json(json_number(float(fields["level"].values) / 100.0, 3))
    else:
        level = level_json(fields.attrs.get("level"))
    return {
        "time": iso_utc(fields["time"].values),
        **level,
        "wind": fields.attrs["wind"],
        "source": fields.attrs.get("source_files", ""),
        "below_ground_check": fields.attrs.get("below_ground_check", ""),
        "missing_points_by_reason": json.loads(fields.attrs.get("missing_by_reason", "{}")),
    }


def point_summary(fields, lat: float, lon: float) -> dict:
    """The JSON contract at a point: values are the member mean when members exist."""
    from parcelcast.ground import point_reason
    from parcelcast.sampling import value_at
    from parcelcast.selection import member_mean

    at = value_at(fields, lat, lon)
    adv = at["temperature_advection"] * SECONDS_PER_HOUR
    has_members = "member" in at.dims
    out = _base(fields)
    out.update({
        "lat": lat,
        "lon": lon,
        "temperature_K": json_number(member_mean(at["temperature"]), 3),
        "u_m_s": json_number(member_mean(at["u"]), 3),
        "v_m_s": json_number(member_mean(at["v"]), 3),
        "advection_K_per_h": json_number(member_mean(adv), 4),
        "sign_convention": "advection = -V.grad T; positive = warm advection",
        "missing_points_in_field": fields.attrs["missing_points"],
        "missing_reason": point_reason(fields, lat, lon),
    })
    if has_members:
        out["members"] = [
            {"member": int(m), "advection_K_per_h": json_number(adv.sel(member=m), 4)}
            for m in at["member"].values
        ]
        out["advection_spread_K_per_h"] = json_number(adv.std("member", skipna=False), 4)
    return out


def field_summary(fields) -> dict:
    """Whole-field statistics (K/h) and where the extremes are."""
    import numpy as np

    from parcelcast.selection import member_mean

    adv = fields["temperature_advection"] * SECONDS_PER_HOUR
    adv = member_mean(adv)
    out = _base(fields)
    values = adv.values
    finite = np.isfinite(values)
    out["missing_points_in_field"] = int((~finite).sum())
    if finite.any():
        jmax, imax = np.unravel_index(np.nanargmax(values), values.shape)
        jmin, imin = np.unravel_index(np.nanargmin(values), values.shape)
        out.update({
            "advection_max_K_per_h": json_number(values[jmax, imax], 4),
            "max_at": _lat_lon_of(adv, jmax, imax),
            "advection_min_K_per_h": json_number(values[jmin, imin], 4),
            "min_at": _lat_lon_of(adv, jmin, imin),
            "advection_mean_abs_K_per_h": json_number(np.nanmean(np.abs(values)), 4),
        })
    return out


def _lat_lon_of(field, j: int, i: int) -> list[float]:
    """Latitude and longitude of grid point (j, i) on a lat-lon or projected grid."""
    lat, lon = field["lat"].values, field["lon"].values
    if lat.ndim == 2:
        return [float(lat[j, i]), float(lon[j, i])]
    return [float(lat[j]), float(lon[i])]


def write_fields(fields, path) -> None:
    """Write the level's fields as CF NetCDF, atomically (:mod:`parcelcast.io.cf_netcdf`)."""
    from parcelcast.io import cf_netcdf

    cf_netcdf.write(fields, path, "parcelcast temperature advection")


def print_text(summary: dict) -> None:
    from parcelcast import formatting
    from parcelcast.selection import level_label

    level = summary["level_hPa"] if summary["level_hPa"] is not None else summary["level"]
    lines = [f"Temperature advection at {level_label(level)}, {summary['wind']} wind, "
             f"valid {summary['time']}"]
    if "lat" in summary:
        lines += [
            f"  point            {summary['lat']:.3f}, {summary['lon']:.3f}",
            f"  temperature      {formatting.temperature_text(summary['temperature_K'])}",
            f"  wind             {formatting.wind_text(summary['u_m_s'], summary['v_m_s'])}"
            f"  (u {_fmt(summary['u_m_s'], 'm/s')}, v {_fmt(summary['v_m_s'], 'm/s')})",
            f"  advection        {_fmt(summary['advection_K_per_h'], 'K/h')}  (positive = warm)",
        ]
        if summary["missing_reason"]:
            lines.append(f"  missing because  {summary['missing_reason']}")
    else:
        for key, label in (("advection_max_K_per_h", "maximum"),
                           ("advection_min_K_per_h", "minimum"),
                           ("advection_mean_abs_K_per_h", "mean |advection|")):
            if key in summary:
                lines.append(f"  {label:<17}{_fmt(summary[key], 'K/h')}")
    from parcelcast.missing import reasons_text

    lines.append(f"  missing points   {summary['missing_points_in_field']} "
                 f"({reasons_text(summary['missing_points_by_reason'])})")
    lines.append(f"  ground check     {summary['below_ground_check']}")
    lines.append(summary["disclaimer"])
    print("\n".join(lines))


def _fmt(value, unit: str) -> str:
    return "missing" if value is None else f"{value:.3f} {unit}"
