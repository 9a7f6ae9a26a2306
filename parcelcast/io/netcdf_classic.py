"""Is a classic NetCDF file whole?  The header's record count against the file's size.

A classic NetCDF file (formats CDF-1 "classic" and CDF-2 "64-bit offset") states in its
header how many records it holds and where each variable's data begin.  A file cut short
(a copy or download that stopped) still opens, and the netCDF library returns the lost
records as zeros (0 K, times of 1970-01-01 00:00 or the reference time); only the file
size tells.  :func:`check_complete` reads the header (NetCDF Classic Format Specification,
Unidata, "The NetCDF Classic Format", header grammar) and compares.  NetCDF-4 (HDF5)
files are not checked here: HDF5 refuses a truncated file when it opens.  CDF-5 files are
not checked either (rare; their header uses 64-bit counts).
"""

from __future__ import annotations

import struct
from pathlib import Path

from parcelcast.errors import IncompleteInputError, InputFileError

_DIMENSION, _VARIABLE, _ATTRIBUTE = 0x0A, 0x0B, 0x0C
#: nc_type -> size in bytes (NC_BYTE, NC_CHAR, NC_SHORT, NC_INT, NC_FLOAT, NC_DOUBLE)
_TYPE_SIZE = {1: 1, 2: 1, 3: 2, 4: 4, 5: 4, 6: 8}
_STREAMING = 0xFFFFFFFF  # numrecs of a file being written as a stream: not yet known
_MAX_HEADER = 1 << 24  # headers are small; refuse to walk absurd counts


class _Header:
    def __init__(self, data: bytes, offset_size: int):
        self.data = data
        self.pos = 4
        self.offset_size = offset_size

    def int32(self) -> int:
        if self.pos + 4 > len(self.data):
            raise EOFError
        (value,) = struct.unpack_from(">i", self.data, self.pos)
        self.pos += 4
        return value

    def uint32(self) -> int:
        return self.int32() & 0xFFFFFFFF

    def offset(self) -> int:
        if self.offset_size == 4:
            return self.int32()
        if self.pos + 8 > len(self.data):
            raise EOFError
        (value,) = struct.unpack_from(">q", self.data, self.pos)
        self.pos += 8
        return value

    def count(self) -> int:
        n = self.int32()
        if not 0 <= n <= _MAX_HEADER:
            raise ValueError(f"impossible count {n} in the header")
        return n

    def skip(self, nbytes: int) -> None:
        self.pos += (nbytes + 3) // 4 * 4  # padded to 4 bytes
        if self.pos > len(self.data):
            raise EOFError

    def name(self) -> str:
        n = self.count()
        start = self.pos
        self.skip(n)
        return self.data[start:start + n].decode("utf-8", "replace")

    def list_of(self, tag: int) -> int:
        found, n = self.int32(), self.count()
        if found not in (0, tag) or (found == 0 and n != 0):
            raise ValueError("unexpected list tag in the header")
        return n

    def attributes(self) -> None:
        for _ in range(self.list_of(_ATTRIBUTE)):
            self.name()
            kind, n = self.int32(), self.count()
            if kind not in _TYPE_SIZE:
                raise ValueError(f"unknown attribute type {kind}")
            self.skip(n * _TYPE_SIZE[kind])


def check_complete(path) -> None:
    """Raise :class:`IncompleteInputError` if a classic NetCDF file is shorter than its header says.

    Files of other formats (NetCDF-4/HDF5, GRIB, ...) are left alone.  A header that cannot be
    parsed is refused with :class:`InputFileError`.
    """
    path = Path(path)
    with open(path, "rb") as fh:
        magic = fh.read(4)
        if magic not in (b"CDF\x01", b"CDF\x02"):
            return
        fh.seek(0)
        data = fh.read(_MAX_HEADER)
    size = path.stat().st_size
    header = _Header(data, 4 if magic[3] == 1 else 8)
    try:
        numrecs = header.uint32()
        dims = []
        for _ in range(header.list_of(_DIMENSION)):
            header.name()
            dims.append(header.count())
        header.attributes()
        variables = []
        for _ in range(header.list_of(_VARIABLE)):
            header.name()
            ids = [header.count() for _ in range(header.count())]
            header.attributes()
            kind, vsize, begin = header.int32(), header.uint32(), header.offset()
            if kind not in _TYPE_SIZE or any(i >= len(dims) for i in ids):
                raise ValueError("a variable refers to an unknown type or dimension")
            variables.append((ids, kind, vsize, begin))
    except (EOFError, ValueError, struct.error) as exc:
        raise InputFileError(path, f"the classic NetCDF header is damaged or cut short ({exc or 'ends early'})") from None
    record = [v for v in variables if v[0] and dims[v[0][0]] == 0]
    recsize = sum(v[2] for v in record) if len(record) != 1 else _data_bytes(record[0], dims)
    if numrecs == _STREAMING:
        return
    needed = header.pos
    for ids, kind, vsize, begin in variables:
        nbytes = _data_bytes((ids, kind, vsize, begin), dims)
        if ids and dims[ids[0]] == 0:  # a record variable: numrecs slices, recsize apart
            end = begin + (numrecs - 1) * recsize + nbytes if numrecs else begin
        else:
            end = begin + nbytes
        needed = max(needed, end)
    if size < needed:
        whole = 0
        if record and recsize:
            whole = max(0, (size - min(v[3] for v in record)) // recsize)
        raise IncompleteInputError(
            f"{path}: the file is cut short: {size} bytes where its header needs {needed}; "
            f"it states {numrecs} record(s) along its unlimited dimension but holds at most "
            f"{min(whole, numrecs)} whole. The lost records would read as zeros; refusing it "
            "(copy the file again)")


def _data_bytes(var, dims) -> int:
    """Bytes of one variable's data (one record's worth for a record variable), unpadded."""
    ids, kind, _, _ = var
    n = _TYPE_SIZE[kind]
    for i in ids:
        if dims[i] != 0:
            n *= dims[i]
    return n
