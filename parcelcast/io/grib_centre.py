"""The originating centre of the GRIB files behind an analysis (WMO Common Code Table C-11).

Read from the first message of each file with eccodes, apart from the main GRIB reader
(``io/grib.py``), so that only the one key is decoded.  Used to choose how the source's
relative humidity is defined (:mod:`parcelcast.thermo.model_humidity`).
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["originating_centre"]


def _first_centre(path: Path) -> int | None:
    import pyproj  # noqa: F401  # PROJ before eccodes (DEVELOPERS.md, "GRIB and PROJ")
    import eccodes

    try:
        with open(path, "rb") as fh:
            if fh.read(4) != b"GRIB":
                return None
            fh.seek(0)
            h = eccodes.codes_grib_new_from_file(fh)
            if h is None:
                return None
            try:
                return int(eccodes.codes_get(h, "centre", ktype=int))
            finally:
                eccodes.codes_release(h)
    except (OSError, eccodes.GribInternalError):
        return None


def originating_centre(ds) -> int | None:
    """The common GRIB originating centre of the dataset's source files, or None.

    None when a file is not GRIB (NetCDF carries no such key), cannot be read, or the
    files come from different centres.
    """
    files = [f for f in str(ds.attrs.get("source_files", "")).split(";") if f]
    centres = {_first_centre(Path(f)) for f in files}
    return centres.pop() if len(centres) == 1 else None
