"""Argument parsing shared by the commands (points, times, variable overrides, JSON)."""

from __future__ import annotations

import argparse
import contextlib
import json
import math
import re
import signal
import sys
import traceback


_HEMISPHERE = {"N": ("latitude", 1.0), "S": ("latitude", -1.0), "E": ("longitude", 1.0),
               "W": ("longitude", -1.0)}
_POSITION_HELP = "LAT,LON in degrees such as 52.1,-1.5 or 52.1N,1.5W"


def _degrees(text: str, axis: str, whole: str) -> float:
    """One coordinate of a position: a signed number of degrees or a number with N/S (E/W)."""
    part = text.strip().rstrip("\u00b0")
    sign = 1.0
    if part[-1:].upper() in _HEMISPHERE and not _is_number(part):  # 'nan' ends in n, too
        letter_axis, sign = _HEMISPHERE[part[-1].upper()]
        if letter_axis != axis:
            raise argparse.ArgumentTypeError(
                f"{part[-1]!r} marks a {letter_axis} but stands in the {axis} place "
                f"of {whole!r}; expected {_POSITION_HELP}")
        part = part[:-1].rstrip("\u00b0 ")
        if part.startswith(("-", "+")):
            raise argparse.ArgumentTypeError(
                f"{text.strip()!r} in {whole!r} has both a sign and a hemisphere letter; "
                f"expected {_POSITION_HELP}")
    try:
        value = float(part)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected {_POSITION_HELP}; got {whole!r}") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(
            f"the {axis} in {whole!r} is not a finite number; expected {_POSITION_HELP}")
    return sign * value


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def lat_lon(text: str) -> tuple[float, float]:
    """Parse a position ``LAT,LON`` in degrees (north and east positive).

    Accepts signed numbers (``-33.9,151.2``) or hemisphere letters (``33.9S,151.2E``);
    refuses NaN, infinities, latitudes outside -90..90 and longitudes outside -360..360.
    """
    pieces = text.split(",")
    if len(pieces) != 2 or not all(p.strip() for p in pieces):
        raise argparse.ArgumentTypeError(f"expected {_POSITION_HELP}; got {text!r}")
    return latitude(pieces[0], text), longitude(pieces[1], text)


def latitude(text: str, whole: str | None = None) -> float:
    """Parse one latitude (``-33.9`` or ``33.9S``) in -90..90, e.g. for ``--lat``."""
    lat = _degrees(text, "latitude", whole or text)
    if not -90.0 <= lat <= 90.0:
        raise argparse.ArgumentTypeError(f"latitude {lat} is outside -90..90 in {whole or text!r}")
    return lat


def longitude(text: str, whole: str | None = None) -> float:
    """Parse one longitude (``-1.5`` or ``1.5W``) in -360..360, e.g. for ``--lon``."""
    lon = _degrees(text, "longitude", whole or text)
    if not -360.0 <= lon <= 360.0:
        raise argparse.ArgumentTypeError(f"longitude {lon} is outside -360..360 in {whole or text!r}")
    return lon


#: an option value that starts with a minus but is data, not an option: ``-33.9,151.2``
_NEGATIVE_VALUE = re.compile(r"^-(\d|\.\d)[^=\s]*$")


def attach_negative_values(argv: list[str]) -> list[str]:
    """Join ``--opt -33.9,151.2`` into ``--opt=-33.9,151.2`` so argparse reads it as a value.

    argparse takes any word starting with ``-`` that is not a plain negative number for an
    option; a southern or western position typed as its own word would be refused.  No option
    of parcelcast starts with a minus followed by a digit, so such a word is always a value.
    """
    out: list[str] = []
    for word in argv:
        if (out and _NEGATIVE_VALUE.match(word) and out[-1].startswith("--")
                and "=" not in out[-1] and out[-1] != "--"):
            out[-1] = f"{out[-1]}={word}"
        else:
            out.append(word)
    return out


def pressure_level_or_surface(text: str):
    """Parse ``--level``: a pressure in hPa (float) or ``surface`` (2-m temperature, 10-m wind)."""
    if text.strip().lower() == "surface":
        return "surface"
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(
            f"expected a pressure level in hPa such as 850, or 'surface'; got {text!r}")
    return value


def bounded_number(low: float, high: float, what: str, integer: bool = False):
    """An argparse type: a finite number (whole if ``integer``) within ``low..high``.

    Bounds keep one mistyped argument (``--members 2000000``, ``--every 1e-5``) from running
    until memory is gone; the message says the range and why.
    """
    def parse(text: str):
        try:
            value = int(text) if integer else float(text)
        except ValueError:
            kind = "a whole number" if integer else "a number"
            raise argparse.ArgumentTypeError(f"expected {kind} for {what}; got {text!r}") from None
        if not (math.isfinite(value) and low <= value <= high):
            raise argparse.ArgumentTypeError(f"{what} must be within {low:g}..{high:g}; got {text!r}")
        return value

    return parse


def utc_time(text: str):
    """Parse an ISO 8601 time for argparse; a time without a zone is UTC (naive UTC datetime64)."""
    from parcelcast.errors import ParcelcastError
    from parcelcast.times import parse_utc

    try:
        return parse_utc(text)
    except ParcelcastError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def variable_override(text: str) -> tuple[str, str]:
    """Parse ``ROLE=NAME`` for ``--var`` (e.g. ``temperature=TMP_850``)."""
    if "=" not in text:
        raise argparse.ArgumentTypeError(f"expected ROLE=NAME such as temperature=t; got {text!r}")
    role, name = text.split("=", 1)
    return role.strip(), name.strip()


def add_input_arguments(parser: argparse.ArgumentParser) -> None:
    """FILE... and --var, shared by every command that reads analyses."""
    parser.add_argument("files", nargs="+", metavar="FILE",
                        help="analysis files (NetCDF or GRIB); globs allowed; combined along time")
    parser.add_argument("--var", action="append", type=variable_override, default=[],
                        metavar="ROLE=NAME",
                        help="name the file's variable for a role (temperature, u, v, geopotential, "
                        "omega, ...); repeatable")


def iso_utc(value) -> str:
    """Format a numpy/pandas time as ISO 8601 UTC with a trailing Z."""
    import pandas as pd

    return pd.Timestamp(value).strftime("%Y-%m-%dT%H:%M:%SZ")


def require_valid_time(ds, why: str) -> None:
    """Refuse an analysis without a valid time (``MissingCoordinateError``, exit status
    "missing quantity"); ``why`` says what the command needs the time for."""
    if "time" in ds.coords:
        return
    from parcelcast.errors import MissingCoordinateError

    extra = [d for d in ds.dims if d not in ("level", "lat", "lon", "y", "x", "member")]
    if extra:
        why += (f"; '{extra[0]}' is not a valid time (a climatology by {extra[0]} cannot be "
                "followed in time: pick one and give it a time, or use analyses)")
    raise MissingCoordinateError("time", ds.attrs.get("source_files", "input"), ds.dims, why)


def json_number(value, digits: int = 6):
    """A float for JSON: rounded, with NaN/inf as null (missing stays missing)."""
    if value is None:
        return None
    value = float(value)
    if not math.isfinite(value):
        return None
    return round(value, digits)


def jsonable(obj, digits: int = 4):
    """Plain JSON values: floats rounded (9 decimals for per-second rates, which are ~1e-5),
    NaN as null, numpy scalars and times converted, keys starting with '_' left out."""
    import numpy as np

    if isinstance(obj, dict):
        return {k: jsonable(v, 9 if str(k).endswith("_per_s") else digits)
                for k, v in obj.items() if not str(k).startswith("_")}
    if isinstance(obj, (list, tuple)):
        return [jsonable(v, digits) for v in obj]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        return json_number(obj, digits)
    if isinstance(obj, np.datetime64):
        return iso_utc(obj)
    return obj


def print_json(obj) -> None:
    """Print a command's JSON document (strict JSON, ``schema_version`` first)."""
    from parcelcast.schemas import stamp

    json.dump(stamp(obj), sys.stdout, indent=2, allow_nan=False)
    sys.stdout.write("\n")


#: commands whose ``--out`` is a folder of several outputs (every other --out/--map/--plot is a file)
FOLDER_OUTPUT_COMMANDS = ("review", "demo", "brief")

#: argument names that hold files a command reads (protected from being overwritten)
INPUT_ARGUMENTS = ("files", "case", "obs")


def _input_paths(args) -> list[str]:
    paths: list[str] = []
    for name in INPUT_ARGUMENTS:
        value = getattr(args, name, None)
        if value:
            paths += [value] if isinstance(value, str) else list(value)
    return paths


def check_outputs(args) -> None:
    """Refuse, before any computing, outputs that cannot be written or would replace an input."""
    from parcelcast.io.atomic import check_file_target, check_folder_target

    for name in ("out", "map", "plot"):
        value = getattr(args, name, None)
        if not value:
            continue
        if name == "out" and args.command in FOLDER_OUTPUT_COMMANDS:
            check_folder_target(value)
        else:
            check_file_target(value)


@contextlib.contextmanager
def _interrupt_on_terminate():
    """Turn SIGTERM into KeyboardInterrupt so temporary outputs are cleaned up on the way out."""
    def handler(signum, frame):
        raise KeyboardInterrupt

    try:
        previous = signal.signal(signal.SIGTERM, handler)
    except ValueError:  # not the main thread: leave signals alone
        yield
        return
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


def run_command(run, args, debug: bool = False) -> int:
    """Run a command's ``run(args)`` and turn every failure into one message and an exit status.

    A :class:`~parcelcast.errors.ParcelcastError` exits with its class's status
    (``parcelcast.errors.EXIT_STATUS``); a file-system error not caught nearer its cause
    names the file; anything else is a fault in parcelcast (status 1).  The traceback is
    printed only with ``--debug``.
    """
    from parcelcast.errors import EXIT_STATUS, ParcelcastError
    from parcelcast.io.atomic import guard_inputs

    name = f"parcelcast {args.command}"
    caught: BaseException | None = None
    try:
        with _interrupt_on_terminate(), guard_inputs(_input_paths(args)):
            check_outputs(args)
            return int(run(args) or 0)
    except ParcelcastError as exc:
        caught = exc
        message, status = f"error: {exc}", exc.exit_status
    except KeyboardInterrupt as exc:
        caught = exc
        message, status = "interrupted; no output was left written in part", 130
    except BrokenPipeError:  # output piped into a reader that stopped (e.g. head)
        return EXIT_STATUS["ok"]
    except OSError as exc:
        caught = exc
        where = f"{exc.filename}: " if exc.filename else ""
        message = f"error: {where}{exc.strerror or exc}"
        status = EXIT_STATUS["unreadable_input"]
    except MemoryError as exc:
        caught = exc
        message = ("error: not enough memory for this request; ask for less (fewer members, "
                   "a shorter span, wider output spacing, a smaller area)")
        status = EXIT_STATUS["usage"]
    except Exception as exc:  # noqa: BLE001 - the last line of defence of the command line
        caught = exc
        message = (f"internal error ({type(exc).__name__}: {exc}). This is a fault in parcelcast; "
                   "rerun with --debug for the traceback and report it")
        status = EXIT_STATUS["internal"]
    if debug:
        traceback.print_exception(caught)
    print(f"{name}: {message}", file=sys.stderr)
    return status
