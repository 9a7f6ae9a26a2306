"""GRIB (editions 1 and 2) through cfgrib/eccodes, without touching the user's folder.

cfgrib splits a file into groups of fields that share a level type and level
set; we open them all (``cfgrib.open_datasets``) and keep the isobaric groups
(upper-air fields) and the single-level groups (surface, 2 m) apart.  Index
files go to our own cache folder, never next to the input.

A damaged file may open in part without complaint; :func:`scan_messages`
walks the file with eccodes and reports what could not be decoded.
"""

from __future__ import annotations

import hashlib
import logging
import os
import warnings
from dataclasses import dataclass, field
from pathlib import Path

from parcelcast.errors import InputFileError

_LEVEL_TYPES_UPPER = ("isobaricInhPa", "isobaricInPa")
_LEVEL_TYPES_SINGLE = ("surface", "heightAboveGround")


def index_cache_dir() -> Path:
    """Folder for cfgrib index files (``PARCELCAST_CACHE`` or ``~/.cache/parcelcast``)."""
    root = os.environ.get("PARCELCAST_CACHE") or Path.home() / ".cache" / "parcelcast"
    path = Path(root) / "grib-index"
    path.mkdir(parents=True, exist_ok=True)
    return path


def _index_path(path: Path) -> str:
    stat = path.stat()
    key = f"{path.resolve()}|{stat.st_size}|{stat.st_mtime_ns}".encode()
    digest = hashlib.sha1(key).hexdigest()[:16]
    # cfgrib fills {short_hash} with a hash of the filter keys.
    return str(index_cache_dir() / f"{path.name}.{digest}.{{short_hash}}.idx")


@dataclass
class GribScan:
    """What a walk through a GRIB file found: decoded fields and undecodable messages."""

    decoded: int = 0
    failed: int = 0
    problem: str = ""
    fields: list[str] = field(default_factory=list)
    grid: dict = field(default_factory=dict)  # projection keys of the first projected message
    wind_flags: set = field(default_factory=set)  # u/v relative to the grid? one per message
    earth: dict = field(default_factory=dict)  # shape of the Earth keys of the first message

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
        for item in self.fields:
            name, level = item.rsplit(":", 1)
            groups.setdefault(name, []).append(level)
        parts = [f"{name} ({', '.join(levels)})" for name, levels in groups.items()]
        more = f" and {len(parts) - limit} more" if len(parts) > limit else ""
        return "; ".join(parts[:limit]) + more


#: GRIB grid types with a map projection, and the keys that define each
_PROJECTION_KEYS = {
    "lambert": ("LaDInDegrees", "LoVInDegrees", "Latin1InDegrees", "Latin2InDegrees"),
    "polar_stereographic": ("LaDInDegrees", "orientationOfTheGridInDegrees", "projectionCentreFlag"),
}


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


def _load_proj_first() -> None:
    """Import pyproj before eccodes: some eccodes wheels bundle their own PROJ, and the
    library loaded second aborts the process (see DEVELOPERS.md, 'GRIB and PROJ')."""
    import pyproj  # noqa: F401


def scan_messages(path: Path) -> GribScan:
    """Walk the file message by message, decoding each with eccodes.

    A message whose stated length runs past the end of the file, lacks its
    ``7777`` end marker, or does not decode counts as failed; the walk then
    resumes at the next ``GRIB`` marker so later intact messages are still seen.
    """
    import eccodes

    scan = GribScan()
    data = path.read_bytes()
    offset = data.find(b"GRIB")
    while offset >= 0:
        length = _message_length(data, offset)
        message = data[offset:offset + length] if length else b""
        ok = length > 0 and offset + length <= len(data) and message.endswith(b"7777")
        if ok:
            try:
                gid = eccodes.codes_new_from_message(message)
                try:
                    name = eccodes.codes_get(gid, "shortName")
                    ltype = eccodes.codes_get(gid, "typeOfLevel")
                    level = eccodes.codes_get(gid, "level")
                    _note_projection(gid, name, scan)
                finally:
                    eccodes.codes_release(gid)
                scan.fields.append(f"{name}@{ltype}:{level}")
                scan.decoded += 1
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


@dataclass
class GribGroups:
    """The upper-air (isobaric) and single-level parts of one GRIB file."""

    upper: list  # list[xarray.Dataset]
    single: list  # list[xarray.Dataset]
    scan: GribScan

    def crs(self):
        """The projection of the file's grid (``pyproj.CRS``), or None for lat-lon grids."""
        return projection_crs(self.scan.grid) if self.scan.grid else None


def open_grib(path: Path) -> GribGroups:
    """Open every field group of a GRIB file; raise InputFileError if nothing decodes."""
    _load_proj_first()
    import cfgrib

    scan = scan_messages(path)
    if scan.decoded == 0:
        raise InputFileError(path, f"no GRIB message could be decoded ({scan.problem or 'empty file'})")
    logging.getLogger("cfgrib").setLevel(logging.CRITICAL)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            # indexpath must travel in backend_kwargs: cfgrib's first pass over the file
            # reads only those, and otherwise writes its index next to the input.
            groups = cfgrib.open_datasets(str(path), backend_kwargs={"indexpath": _index_path(path)},
                                          cache_geo_coords=True)
    except Exception as exc:
        raise InputFileError(path, f"cfgrib could not open the file: {exc}") from None
    upper, single = [], []
    for group in groups:
        level_types = {v.attrs.get("GRIB_typeOfLevel") for v in group.data_vars.values()}
        if level_types & set(_LEVEL_TYPES_UPPER):
            upper.append(group)
        elif level_types & set(_LEVEL_TYPES_SINGLE):
            single.append(group)
    return GribGroups(upper=upper, single=single, scan=scan)
