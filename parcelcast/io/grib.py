"""GRIB (editions 1 and 2) through cfgrib/eccodes, without touching the user's folder.

A first walk over the message headers (:func:`scan_messages`) lists every field and
notices damaged messages (a damaged file may otherwise open in part without complaint).
cfgrib then opens only the fields the caller's roles can use (``filter_by_keys`` on
level type and short name), keeping the isobaric groups (upper-air fields) and the
single-level groups (surface, 2 m) apart.  Index files go to our own cache folder,
never next to the input.
"""

from __future__ import annotations

import glob
import hashlib
import json
import logging
import mmap
import warnings
from dataclasses import asdict, dataclass, field, fields
from pathlib import Path

from parcelcast.cache import cache_folder, check_private_file, make_private, prune
from parcelcast.errors import InputFileError

LOGGER = logging.getLogger(__name__)

_LEVEL_TYPES_UPPER = ("isobaricInhPa", "isobaricInPa")
_LEVEL_TYPES_SINGLE = ("surface", "heightAboveGround")
#: names the scan records (with typeOfLevel and level); cfgrib names variables by cfVarName
#: and sets standard_name from cfName, so these are what role recognition can match
_NAME_KEYS = ("shortName", "cfVarName", "cfName")


def _file_key(path: Path) -> str:
    """Name of the cache entries of one version of a file (path, size, modification time)."""
    info = path.stat()
    key = f"{path.resolve()}|{info.st_size}|{info.st_mtime_ns}".encode()
    return f"{path.name}.{hashlib.sha1(key).hexdigest()[:16]}"


def _index_path(path: Path) -> str:
    """cfgrib's index file for ``path`` in our private cache; existing ones are checked first
    (cfgrib unpickles them, see ``parcelcast/cache.py``)."""
    folder = cache_folder("grib-index")
    stem = _file_key(path)
    for existing in folder.glob(f"{glob.escape(stem)}.*.idx"):
        check_private_file(existing)
    # cfgrib fills {short_hash} with a hash of the index keys.
    return str(folder / f"{stem}.{{short_hash}}.idx")


@dataclass
class GribScan:
    """What a walk through a GRIB file found: decoded fields and undecodable messages.

    ``decoded`` counts fields (a GRIB 2 message may hold several), ``failed`` messages."""

    decoded: int = 0
    failed: int = 0
    problem: str = ""
    messages: list[dict] = field(default_factory=list)  # keys of each decoded field
    grid: dict = field(default_factory=dict)  # projection keys of the first projected message
    wind_flags: set = field(default_factory=set)  # u/v relative to the grid? one per message
    earth: dict = field(default_factory=dict)  # shape of the Earth keys of the first message
    intact: list = field(default_factory=list)  # [offset, length] of each decoded message

    @property
    def winds_grid_relative(self) -> bool | None:
        """True/False from the u/v component flags; None without winds; mixed is refused."""
        if len(self.wind_flags) > 1:
            from parcelcast.errors import GridError

            raise GridError("some wind fields are relative to the grid and some to east/north")
        return next(iter(self.wind_flags), None)

    @property
    def damaged(self) -> bool:
        return self.failed > 0

    def summary(self, limit: int = 12) -> str:
        """Readable fields grouped by name and level type, e.g. ``t@isobaricInhPa: 500``."""
        groups: dict[str, list[str]] = {}
        for keys in self.messages:
            name = f"{keys['shortName']}@{keys['typeOfLevel']}"
            groups.setdefault(name, []).append(str(keys["level"]))
        parts = [f"{name} ({', '.join(levels)})" for name, levels in groups.items()]
        more = f" and {len(parts) - limit} more" if len(parts) > limit else ""
        return "; ".join(parts[:limit]) + more


#: GRIB grid types with a map projection, and the keys that define each
_PROJECTION_KEYS = {
    "lambert": ("LaDInDegrees", "LoVInDegrees", "Latin1InDegrees", "Latin2InDegrees"),
    "polar_stereographic": ("LaDInDegrees", "orientationOfTheGridInDegrees", "projectionCentreFlag"),
}


def _check_grid_size(gid) -> None:
    """A regular grid whose Ni x Nj differs from its number of points is damaged (eccodes
    would crash computing its coordinates), and so is a message stating more values than its
    grid has points (decoding would ask for gigabytes); both found by fuzzing (tests/fuzz)."""
    import eccodes

    points = eccodes.codes_get(gid, "numberOfDataPoints")
    values = eccodes.codes_get(gid, "numberOfValues")
    if values > points:
        raise ValueError(f"{values} values stated for a grid of {points} points")
    if eccodes.codes_is_defined(gid, "Ni") and eccodes.codes_is_defined(gid, "Nj"):
        ni, nj = eccodes.codes_get(gid, "Ni"), eccodes.codes_get(gid, "Nj")
        if ni > 0 and nj > 0 and ni * nj != points:
            raise ValueError(f"grid of {ni} x {nj} points but {points} values stated")


def _note_projection(gid, name: str, scan: GribScan) -> None:
    """Record the projection of the grid and whether u/v are relative to it."""
    import eccodes

    if not scan.earth:
        for key in ("shapeOfTheEarth", "radius", "earthMajorAxis", "earthMinorAxis"):
            try:
                scan.earth[key] = eccodes.codes_get(gid, key, float)
            except Exception:  # key absent for this shape of the Earth (or edition)
                pass
    grid_type = eccodes.codes_get(gid, "gridType")
    if grid_type not in _PROJECTION_KEYS:
        return
    if not scan.grid:
        keys = {"gridType": grid_type}
        for key in _PROJECTION_KEYS[grid_type]:
            keys[key] = eccodes.codes_get(gid, key)
        keys.update({k: v for k, v in scan.earth.items() if k != "shapeOfTheEarth"})
        scan.grid = keys
    if name in ("u", "v"):
        # WMO GRIB2 flag table 3.3 (GRIB1 table 7), bit 5 (value 8): u/v relative to the grid
        scan.wind_flags.add(bool(int(eccodes.codes_get(gid, "resolutionAndComponentFlags")) & 8))


def projection_crs(grid: dict):
    """``pyproj.CRS`` of a GRIB projected grid from the keys recorded by the scan."""
    import pyproj

    if "radius" in grid:
        earth = {"earth_radius": grid["radius"]}
    elif "earthMajorAxis" in grid:
        earth = {"semi_major_axis": grid["earthMajorAxis"], "semi_minor_axis": grid["earthMinorAxis"]}
    else:
        from parcelcast.errors import GridError

        raise GridError("the GRIB grid definition does not state the shape of the Earth")
    if grid["gridType"] == "lambert":
        cf = {"grid_mapping_name": "lambert_conformal_conic",
              "standard_parallel": [grid["Latin1InDegrees"], grid["Latin2InDegrees"]],
              "longitude_of_central_meridian": grid["LoVInDegrees"],
              "latitude_of_projection_origin": grid["LaDInDegrees"]}
    else:
        south = int(grid["projectionCentreFlag"]) & 128  # bit 1 (WMO code table 3.5): south pole
        cf = {"grid_mapping_name": "polar_stereographic",
              "straight_vertical_longitude_from_pole": grid["orientationOfTheGridInDegrees"],
              "standard_parallel": grid["LaDInDegrees"],
              "latitude_of_projection_origin": -90.0 if south else 90.0}
    return pyproj.CRS.from_cf({**cf, **earth})


def _message_length(data: bytes, offset: int) -> int:
    """Total length in bytes of the GRIB message starting at ``offset`` (0 if unreadable)."""
    edition = data[offset + 7] if offset + 8 <= len(data) else 0
    if edition == 1:
        return int.from_bytes(data[offset + 4:offset + 7], "big")
    if edition == 2:
        return int.from_bytes(data[offset + 8:offset + 16], "big")
    return 0


#: GRIB 2 sections that may follow each section (WMO Manual on Codes, FM 92 GRIB edition 2:
#: 0, 1, [2], 3, 4, 5, 6, 7, then 2/3/4 again for further fields, then 8 = "7777")
_GRIB2_NEXT = {1: {2, 3}, 2: {3}, 3: {4}, 4: {5}, 5: {6}, 6: {7}, 7: {2, 3, 4}}


def _structure_problem(message: bytes) -> str:
    """Why the sections of one GRIB message do not add up to it ('' if they do).

    Walked here, not by eccodes: eccodes decodes some inconsistent messages (logging an
    error) and can crash the process later when reading the same file (found by fuzzing).
    """
    edition = message[7]
    end = len(message) - 4
    if edition == 2:
        pos, previous = 16, None
        while pos < end:
            length, number = int.from_bytes(message[pos:pos + 4], "big"), message[pos + 4]
            allowed = {1} if previous is None else _GRIB2_NEXT.get(previous, set())
            if number not in allowed or length < 5 or pos + length > end:
                return f"section {number} at byte {pos} (length {length}) does not fit the message"
            pos, previous = pos + length, number
        return "" if pos == end and previous == 7 else "the sections do not end at the 7777 marker"
    if edition == 1:
        pos = 8
        if end < pos + 8:
            return "the message is too short for its sections"
        flags = message[pos + 7]
        parts = ["product definition"] + (["grid description"] if flags & 0x80 else []) + (
            ["bit map"] if flags & 0x40 else []) + ["binary data"]
        for part in parts:
            length = int.from_bytes(message[pos:pos + 3], "big")
            if length < 3 or pos + length > end:
                return f"the {part} section at byte {pos} (length {length}) does not fit the message"
            pos += length
        return "" if pos == end else "the sections do not end at the 7777 marker"
    return f"unknown GRIB edition {edition}"


def _load_proj_first() -> None:
    """Import pyproj before eccodes: some eccodes wheels bundle their own PROJ, and the
    library loaded second aborts the process (see DEVELOPERS.md, 'GRIB and PROJ')."""
    import pyproj  # noqa: F401


def cached_scan(path: Path) -> GribScan:
    """:func:`scan_messages`, kept in the cache (JSON) for each version of the file."""
    entry = cache_folder("grib-scan") / f"{_file_key(path)}.json"
    check_private_file(entry)
    try:
        keys = json.loads(entry.read_text())
        if set(keys) != {item.name for item in fields(GribScan)}:
            raise KeyError("written by another version of parcelcast")
        keys["wind_flags"] = set(keys["wind_flags"])
        scan = GribScan(**keys)
        LOGGER.debug(f"{path}: message scan taken from the cache ({entry})")
        return scan
    except (OSError, ValueError, TypeError, KeyError):
        pass  # not scanned yet, or an entry of another version of parcelcast (other keys)
    scan = scan_messages(path)
    record = asdict(scan)
    record["wind_flags"] = sorted(record["wind_flags"])
    temporary = entry.with_name(entry.name + ".part")
    temporary.write_text(json.dumps(record))
    make_private(temporary)
    temporary.replace(entry)
    return scan


def scan_messages(path: Path) -> GribScan:
    """Walk the file message by message, reading the headers of each with eccodes.

    A message whose stated length runs past the end of the file, lacks its
    ``7777`` end marker, or whose headers do not decode counts as failed; the walk
    then resumes at the next ``GRIB`` marker so later intact messages are still seen.
    The file is memory-mapped and only headers are decoded, so the cost follows the
    file's length and the memory stays small whatever its size.
    """
    import eccodes

    scan = GribScan()
    names_of_parameter: dict = {}
    with open(path, "rb") as handle:
        if path.stat().st_size == 0:
            return scan
        with mmap.mmap(handle.fileno(), 0, access=mmap.ACCESS_READ) as data:
            offset = data.find(b"GRIB")
            while offset >= 0:
                length = _message_length(data, offset)
                ok = (length > 16 and offset + length <= len(data)
                      and data[offset + length - 4:offset + length] == b"7777")
                structure = _structure_problem(data[offset:offset + length]) if ok else ""
                if structure:  # checked before eccodes reads it: eccodes can crash on these
                    ok = False
                    scan.problem = scan.problem or f"message at byte {offset}: {structure}"
                if ok:
                    try:
                        for gid in _fields_of_message(handle, offset,
                                                      _field_count(data, offset, length)):
                            try:
                                _check_grid_size(gid)
                                scan.messages.append(_message_keys(gid, names_of_parameter))
                                _note_projection(gid, scan.messages[-1]["shortName"], scan)
                            finally:
                                eccodes.codes_release(gid)
                            scan.decoded += 1
                        scan.intact.append([offset, length])
                        offset = data.find(b"GRIB", offset + length)
                        continue
                    except Exception as exc:  # eccodes raises its own error classes
                        scan.problem = scan.problem or f"message at byte {offset}: {exc}"
                else:
                    scan.problem = scan.problem or (
                        f"message at byte {offset} is truncated or malformed "
                        f"(stated length {length}, file size {len(data)})"
                    )
                scan.failed += 1
                offset = data.find(b"GRIB", offset + 4)
    return scan


def _field_count(data, offset: int, length: int) -> int:
    """Number of fields in the GRIB message at ``offset``: 1 in edition 1; in edition 2 the
    number of data sections (section 7), read from the section headers (length, number)."""
    if data[offset + 7] != 2:
        return 1
    position, end, count = offset + 16, offset + length - 4, 0
    while position + 5 <= end:
        section_length = int.from_bytes(data[position:position + 4], "big")
        if section_length < 5:
            break
        count += data[position + 4] == 7
        position += section_length
    if position != end or count == 0:
        raise ValueError("its sections do not add up to the stated length, or it has no data section")
    return count


def _fields_of_message(handle, offset: int, count: int):
    """eccodes handles (headers only) of the ``count`` fields of the message at ``offset``.

    A GRIB 2 message may carry several fields (NCEP packs u and v together); eccodes'
    multi-field mode returns them one by one.
    """
    import eccodes

    handle.seek(offset)
    if count > 1:
        eccodes.codes_grib_multi_support_on()
        eccodes.codes_grib_multi_support_reset_file(handle)
    try:
        for _ in range(count):
            gid = eccodes.codes_grib_new_from_file(handle, headers_only=True)
            if gid is not None and eccodes.codes_get(gid, "offset") != offset:
                eccodes.codes_release(gid)
                gid = None
            if gid is None:
                raise ValueError("eccodes did not read the fields its sections announce")
            yield gid
    finally:
        if count > 1:
            eccodes.codes_grib_multi_support_off()  # cfgrib's random access needs it off


def _message_keys(gid, names_of_parameter: dict) -> dict:
    """The keys by which a message is recognised (names, level type, level).

    The names (``shortName``, ``cfName``, ``cfVarName``) are eccodes concepts defined per
    parameter, like ``paramId``; each takes about a millisecond to evaluate, so they are
    looked up once per parameter (``names_of_parameter``: paramId -> names)."""
    import eccodes

    parameter = eccodes.codes_get(gid, "paramId")
    if parameter not in names_of_parameter:
        names_of_parameter[parameter] = {key: eccodes.codes_get(gid, key) for key in _NAME_KEYS}
    return {**names_of_parameter[parameter], "typeOfLevel": eccodes.codes_get(gid, "typeOfLevel"),
            "level": eccodes.codes_get(gid, "level")}


@dataclass
class GribGroups:
    """The upper-air (isobaric) and single-level parts of one GRIB file."""

    upper: list  # list[xarray.Dataset]
    single: list  # list[xarray.Dataset]
    scan: GribScan
    names: list[str]  # variable names of every upper-air and single-level field in the file

    def crs(self):
        """The projection of the file's grid (``pyproj.CRS``), or None for lat-lon grids."""
        return projection_crs(self.scan.grid) if self.scan.grid else None


def open_grib(path: Path, roles=None, overrides=None, allow_damaged: bool = False) -> GribGroups:
    """Open the field groups of a GRIB file that can hold ``roles``; raise InputFileError
    if nothing decodes.

    Only messages whose names could match a wanted role (``io/roles.py``: CF standard
    name, GRIB short name, common name, or the ``--var`` override) at a fitting level
    type are handed to cfgrib, through ``filter_by_keys``: the cost follows the fields
    used, not the number of field groups in the file.

    A damaged file is refused before cfgrib reads it (``IncompleteInputError``) unless
    ``allow_damaged``: eccodes can abort the whole process on some damaged messages, so an
    allowed damaged file reaches cfgrib as a private copy of its intact messages only.
    """
    _load_proj_first()
    import cfgrib

    from parcelcast.errors import IncompleteInputError

    scan = cached_scan(path)
    if scan.decoded == 0:
        raise InputFileError(path, f"no GRIB message could be decoded ({scan.problem or 'empty file'})")
    if scan.damaged and not allow_damaged:
        raise IncompleteInputError(
            f"{path}: the GRIB file is damaged and opens only in part: {scan.decoded} GRIB "
            f"field(s) decoded, {scan.failed} message(s) could not be ({scan.problem}); readable: "
            f"{scan.summary() or 'nothing'}. Fields and levels beyond those listed are missing; "
            "refusing to compute from incomplete input.")
    # allowed damaged file: cfgrib can crash on a damaged message, so it sees only the intact ones
    source = _intact_copy(path, scan) if scan.damaged else path
    backend = {"indexpath": _index_path(source)}
    parts = {}
    for part, filter_by_keys in grib_filters(scan, roles, overrides).items():
        LOGGER.debug(f"{path}: opening the {part} fields {filter_by_keys}")
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                # indexpath must travel in backend_kwargs: cfgrib's first pass over the file
                # reads only those, and otherwise writes its index next to the input.
                parts[part] = cfgrib.open_datasets(
                    str(source), backend_kwargs={**backend, "filter_by_keys": filter_by_keys},
                    cache_geo_coords=True)
        except Exception as exc:
            raise InputFileError(path, f"cfgrib could not open the file: {exc}") from None
    for written in Path(backend["indexpath"]).parent.glob(f"{glob.escape(_file_key(source))}.*.idx"):
        make_private(written)  # cfgrib writes with the umask's permissions
    for folder in ("grib-index", "grib-scan"):
        prune(cache_folder(folder))
    names = sorted({m["cfVarName"] for m in scan.messages
                    if m["typeOfLevel"] in _LEVEL_TYPES_UPPER + _LEVEL_TYPES_SINGLE})
    return GribGroups(upper=parts.get("upper", []), single=parts.get("single", []), scan=scan,
                      names=names)


def _intact_copy(path: Path, scan: GribScan) -> Path:
    """The decoded messages of a damaged file, alone in a private file of our cache (the
    user's file is left as it is; cfgrib reads the copy lazily, so it stays in the cache)."""
    copy = cache_folder("grib-index") / f"{_file_key(path)}.intact.grb"
    with open(path, "rb") as handle:
        data = handle.read()
    temporary = copy.with_name(copy.name + ".part")
    temporary.write_bytes(b"".join(data[offset:offset + length] for offset, length in scan.intact))
    make_private(temporary)
    temporary.replace(copy)
    return copy


def grib_filters(scan: GribScan, roles=None, overrides=None) -> dict[str, dict]:
    """cfgrib ``filter_by_keys`` for the upper-air and single-level parts (absent: none wanted).

    A message is wanted if its level type suits a wanted role (isobaric for roles on
    levels, surface or height above ground for the others) and one of its names would
    match that role in ``io/analysis.py``'s recognition.
    """
    from parcelcast.io.roles import ROLES

    overrides = overrides or {}
    wanted = [ROLES[name] for name in (roles if roles is not None else ROLES)]
    chosen: dict[str, tuple[set, set]] = {}
    for keys in scan.messages:
        level_type = keys["typeOfLevel"]
        part = ("upper" if level_type in _LEVEL_TYPES_UPPER
                else "single" if level_type in _LEVEL_TYPES_SINGLE else None)
        if part is None:
            continue
        for role in wanted:
            if role.on_levels != (part == "upper"):
                continue
            if role.name in overrides:
                match = overrides[role.name] == keys["cfVarName"]
            else:
                match = (keys["cfName"] in role.standard_names
                         or keys["shortName"] in role.grib_short_names
                         or keys["cfVarName"].lower() in role.common_names)
            if match:
                types, names = chosen.setdefault(part, (set(), set()))
                types.add(level_type)
                names.add(keys["shortName"])
    return {part: {"typeOfLevel": sorted(types), "shortName": sorted(names)}
            for part, (types, names) in chosen.items()}
