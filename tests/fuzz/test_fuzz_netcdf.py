"""Fuzzing ``open_analysis`` on NetCDF files (``parcelcast.io.analysis`` and ``io.coords``).

Files are written by xarray/netCDF4 (netCDF-4 and classic) from a small valid analysis with
faults drawn at random: broken or missing units, wrong or swapped dimensions, NaN/inf/huge
values in data and coordinates, missing coordinates, a 1-D and a 2-D latitude together, no
time coordinate, duplicated times, non-monotonic or repeated coordinates; and at byte level:
files cut short, bytes overwritten, pieces repeated (also the classic completeness check
alone, on a file with record variables).  ``open_analysis`` must return a canonical dataset
(``fuzz_contract.check_canonical_dataset``) or raise parcelcast's own error naming the file.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
import xarray as xr
from hypothesis import given
from hypothesis import strategies as st

from fuzz_contract import check_canonical_dataset, fuzz_settings, outcome, read_bytes_as_file
from parcelcast.io.analysis import open_analysis
from parcelcast.io.netcdf_classic import check_complete

pytestmark = pytest.mark.slow

NT, NZ, NY, NX = 2, 2, 4, 5
VARIABLES = ("t", "u", "v", "z")
UNITS = {"t": "K", "u": "m s-1", "v": "m s-1", "z": "m2 s-2"}
STANDARD_NAMES = {"t": "air_temperature", "u": "eastward_wind", "v": "northward_wind",
                  "z": "geopotential"}
BAD_UNITS = ["", "K", "degC", "degF", "m s-1", "knots", "Pa", "hPa", "m", "gpm", "1", "%",
             "furlongs per fortnight", "m s**-1 s", "degrees_north", "kelvin kelvin", "s-1 m",
             "hours since 2024-01-15", "hours since garbage", "days since 0000-00-00",
             "seconds since 2262-04-12", "years since 1-1-1", "since", "\u00b0C", "1e400 K",
             "log(Pa)", "m**1000"]
AWKWARD_VALUES = [np.nan, np.inf, -np.inf, 1e300, -1e300, 0.0, -999.0, 9.96921e36, 1e-300]


def base_dataset(rng_seed: int = 0) -> dict:
    """The valid raw analysis as a dict of (dims, values, attrs), easy to damage."""
    rng = np.random.default_rng(rng_seed)
    lat = np.linspace(40.0, 52.0, NY)
    lon = np.linspace(-5.0, 15.0, NX)
    shape = (NT, NZ, NY, NX)
    dims = ("time", "plev", "latitude", "longitude")
    values = {
        "t": 270.0 + rng.normal(0.0, 3.0, shape),
        "u": rng.normal(5.0, 5.0, shape),
        "v": rng.normal(0.0, 5.0, shape),
        "z": np.array([1_450.0, 5_550.0])[None, :, None, None] * 9.80665 + rng.normal(0, 50, shape),
    }
    spec = {name: [dims, values[name], {"units": UNITS[name], "standard_name": STANDARD_NAMES[name]}]
            for name in VARIABLES}
    spec["time"] = [("time",), np.array([0.0, 6.0]), {"units": "hours since 2024-01-15 00:00",
                                                      "standard_name": "time"}]
    spec["plev"] = [("plev",), np.array([850.0, 500.0]), {"units": "hPa",
                                                         "standard_name": "air_pressure"}]
    spec["latitude"] = [("latitude",), lat, {"units": "degrees_north", "standard_name": "latitude"}]
    spec["longitude"] = [("longitude",), lon, {"units": "degrees_east",
                                               "standard_name": "longitude"}]
    return spec


COORDS = ("time", "plev", "latitude", "longitude")
_COUNTER = iter(range(10**9))


def fresh_path(scratch):
    """A new file name per input: a dataset returned earlier may still hold its file open
    (xarray reads lazily), and HDF5 refuses to overwrite an open file."""
    return scratch / f"analysis-{next(_COUNTER)}.nc"


def _damage(draw, spec: dict) -> None:
    """One fault, in place."""
    kind = draw(st.sampled_from([
        "units", "no_units", "values", "coord_values", "drop_coord", "two_d_lat", "no_time",
        "duplicate_time", "shuffle_coord", "repeat_coord", "transpose", "rename_dim", "drop_dim",
        "extra_dim", "standard_name", "dtype", "attr_type", "drop_var"]))
    names = sorted(spec)
    if kind == "units":
        spec[draw(st.sampled_from(names))][2]["units"] = draw(st.sampled_from(BAD_UNITS))
    elif kind == "no_units":
        spec[draw(st.sampled_from(names))][2].pop("units", None)
    elif kind in ("values", "coord_values"):
        name = draw(st.sampled_from(VARIABLES if kind == "values" else COORDS))
        if name not in spec:
            return
        values = np.array(spec[name][1], dtype=np.float64)
        flat = values.reshape(-1)
        for _ in range(draw(st.integers(1, 3))):
            where = draw(st.sampled_from(["one", "all", "slab"]))
            value = draw(st.sampled_from(AWKWARD_VALUES) | st.floats(allow_nan=True))
            if where == "one":
                flat[draw(st.integers(0, flat.size - 1))] = value
            elif where == "all":
                flat[:] = value
            else:
                flat[flat.size // 2:] = value
        spec[name][1] = values
    elif kind == "drop_coord":
        spec.pop(draw(st.sampled_from(COORDS)), None)
    elif kind == "two_d_lat":  # a 2-D latitude beside the 1-D one
        lat = spec.get("latitude", base_dataset()["latitude"])[1]
        spec["lat2d"] = [("latitude", "longitude"), np.repeat(np.asarray(lat)[:, None], NX, 1),
                         {"units": "degrees_north", "standard_name": "latitude"}]
        if draw(st.booleans()):
            spec["lon2d"] = [("latitude", "longitude"), np.tile(np.linspace(-5, 15, NX), (NY, 1)),
                             {"units": "degrees_east", "standard_name": "longitude"}]
    elif kind == "no_time":
        spec.pop("time", None)
        for name in VARIABLES:
            if name in spec and "time" in spec[name][0]:
                spec[name][0] = spec[name][0][1:]
                spec[name][1] = spec[name][1][0]
    elif kind == "duplicate_time":
        if "time" in spec:
            spec["time"][1] = np.array([6.0, 6.0])
    elif kind in ("shuffle_coord", "repeat_coord"):
        name = draw(st.sampled_from(COORDS))
        if name in spec:
            values = np.array(spec[name][1])
            if kind == "shuffle_coord":
                spec[name][1] = np.array(draw(st.permutations(list(values))))
            else:
                values[-1] = values[0]
                spec[name][1] = values
    elif kind == "transpose":
        name = draw(st.sampled_from(VARIABLES))
        if name in spec:
            order = draw(st.permutations(list(range(len(spec[name][0])))))
            spec[name][0] = tuple(spec[name][0][i] for i in order)
            spec[name][1] = np.transpose(spec[name][1], order)
    elif kind == "rename_dim":  # one variable on dimensions of its own name
        name = draw(st.sampled_from(VARIABLES))
        if name in spec:
            i = draw(st.integers(0, len(spec[name][0]) - 1))
            dims = list(spec[name][0])
            dims[i] = draw(st.sampled_from(["x", "y", "lev", "month", "member", "dim_0"]))
            if len(set(dims)) == len(dims):
                spec[name][0] = tuple(dims)
    elif kind == "drop_dim":
        name = draw(st.sampled_from(VARIABLES))
        if name in spec and len(spec[name][0]) > 1:
            i = draw(st.integers(0, len(spec[name][0]) - 1))
            spec[name][0] = spec[name][0][:i] + spec[name][0][i + 1:]
            spec[name][1] = np.take(spec[name][1], 0, axis=i)
    elif kind == "extra_dim":
        name = draw(st.sampled_from(VARIABLES))
        if name in spec:
            extra = draw(st.sampled_from(["member", "number", "month", "height", "nv"]))
            if extra not in spec[name][0]:
                spec[name][0] = (extra, *spec[name][0])
                spec[name][1] = np.stack([spec[name][1]] * 2)
    elif kind == "standard_name":
        spec[draw(st.sampled_from(names))][2]["standard_name"] = draw(st.sampled_from(
            ["air_temperature", "eastward_wind", "latitude", "longitude", "time", "air_pressure",
             "geopotential", "grid_eastward_wind", "", "nonsense"]))
    elif kind == "dtype":
        name = draw(st.sampled_from(names))
        spec[name][1] = np.asarray(spec[name][1]).astype(draw(st.sampled_from(
            ["float32", "int16", "int64", "int8", "uint8"])), casting="unsafe")
    elif kind == "attr_type":
        spec[draw(st.sampled_from(names))][2]["units"] = draw(st.sampled_from(
            [np.int32(3), np.float64(1.5), np.array([1.0, 2.0])]))
    elif kind == "drop_var":
        spec.pop(draw(st.sampled_from(VARIABLES)), None)


@st.composite
def damaged_analysis(draw):
    spec = base_dataset(draw(st.integers(0, 3)))
    for _ in range(draw(st.integers(1, 3))):
        _damage(draw, spec)
    fmt = draw(st.sampled_from(["NETCDF4", "NETCDF4", "NETCDF3_CLASSIC", "NETCDF3_64BIT"]))
    fill = draw(st.sampled_from([None, None, -999.0, np.nan]))
    return spec, fmt, fill


def write(spec: dict, fmt: str, fill, path) -> bool:
    """Write the raw spec as it is (no time decoding/encoding by xarray); False if even
    xarray/netCDF4 refuse to write it (such a file cannot reach a user)."""
    coords = {k: tuple(v) for k, v in spec.items() if k in COORDS or k.endswith("2d")}
    data = {k: tuple(v) for k, v in spec.items() if k not in coords}
    try:
        ds = xr.Dataset(data, coords=coords)
        encoding = {name: {"_FillValue": fill if ds[name].dtype.kind == "f" else None}
                    for name in ds.variables}
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ds.to_netcdf(path, format=fmt, engine="netcdf4", encoding=encoding)
    except (ValueError, TypeError, OverflowError, RuntimeError, KeyError):
        return False
    return True


@fuzz_settings(250)
@given(case=damaged_analysis())
def test_netcdf_damaged_structure(scratch, case):
    spec, fmt, fill = case
    path = fresh_path(scratch)
    if not write(spec, fmt, fill, path):
        return
    ds, _ = outcome("NetCDF", open_analysis, path, names=[path])
    if ds is not None:
        check_canonical_dataset(ds)


_VALID_FILES: dict[str, bytes] = {}


def valid_bytes(fmt: str, scratch) -> bytes:
    """Bytes of the valid analysis in one format (written once per run)."""
    if fmt not in _VALID_FILES:
        path = scratch / f"valid-{fmt}.nc"
        assert write(base_dataset(), fmt, None, path)
        _VALID_FILES[fmt] = path.read_bytes()
    return _VALID_FILES[fmt]


@fuzz_settings(500)
@given(fmt=st.sampled_from(["NETCDF4", "NETCDF3_CLASSIC", "NETCDF3_64BIT"]),
       cut=st.floats(0.0, 1.0), edits=st.lists(st.tuples(st.floats(0.0, 1.0),
                                                         st.binary(min_size=1, max_size=4)),
                                               max_size=3))
def test_netcdf_damaged_bytes(scratch, fmt, cut, edits):
    data = bytearray(valid_bytes(fmt, scratch))
    for where, new in edits:
        at = int(where * (len(data) - len(new)))
        data[at:at + len(new)] = new
    if cut < 0.5:  # half the inputs cut short somewhere
        data = data[: int(cut * 2 * len(data))]
    read_bytes_as_file(fresh_path(scratch), bytes(data), "NetCDF", open_analysis, check_canonical_dataset)


@fuzz_settings(600)
@given(fmt=st.sampled_from(["NETCDF3_CLASSIC", "NETCDF3_64BIT"]), cut=st.floats(0.0, 1.0),
       edits=st.lists(st.tuples(st.floats(0.0, 1.0), st.integers(0, 255)), max_size=8),
       repeat=st.none() | st.tuples(st.floats(0.0, 1.0), st.floats(0.0, 1.0)))
def test_classic_header_check(scratch, fmt, cut, edits, repeat):
    """The completeness check of classic files alone (fast, so many inputs): a file with record
    variables (an unlimited time dimension) cut short, with bytes overwritten (the header's
    counts and offsets included), or with a piece repeated."""
    data = bytearray(_record_file(fmt, scratch))
    for where, value in edits:
        data[int(where * (len(data) - 1))] = value
    if repeat is not None:
        a, b = sorted(int(x * len(data)) for x in repeat)
        data = data[:b] + data[a:]
    if cut < 0.5:
        data = data[: int(cut * 2 * len(data))]
    path = fresh_path(scratch)
    path.write_bytes(bytes(data))
    outcome("NetCDF header", check_complete, path, names=[path])


def _record_file(fmt: str, scratch) -> bytes:
    """Bytes of the valid analysis with time as the record (unlimited) dimension."""
    key = f"{fmt}-record"
    if key not in _VALID_FILES:
        path = scratch / f"valid-{key}.nc"
        spec = base_dataset()
        coords = {k: tuple(v) for k, v in spec.items() if k in COORDS}
        ds = xr.Dataset({k: tuple(v) for k, v in spec.items() if k not in coords}, coords=coords)
        ds.to_netcdf(path, format=fmt, engine="netcdf4", unlimited_dims=["time"])
        _VALID_FILES[key] = path.read_bytes()
    return _VALID_FILES[key]
