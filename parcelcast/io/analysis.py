"""Open analyses (NetCDF or GRIB; one file, several, or a glob) into the canonical form.

The canonical form is described in ``design_notes/canonical_dataset.md``:
coordinates ``member, time, level (Pa, descending), lat (ascending), lon``
and float64 SI variables named by role (``temperature``, ``u``, ``v``,
``geopotential``, ``omega``, ...).  Conversions go through pint; values that
are impossible for their stated units are refused; missing values stay NaN.
"""

from __future__ import annotations

import glob
import warnings
from pathlib import Path

import numpy as np
import xarray as xr

from parcelcast.constants import STANDARD_GRAVITY
from parcelcast.errors import (
    GridError,
    ImplausibleValuesError,
    IncompleteInputError,
    InputFileError,
    ParcelcastError,
    UnitsError,
    VariableNotFoundError,
    warn,
)
from parcelcast.grid import earth as earth_radius
from parcelcast.io import coords as coordinates
from parcelcast.io.lazy_dask import defer_dask_import
from parcelcast.io.roles import HEIGHT_TOLERANCE_M, PLAUSIBLE_RANGE, ROLES, Role
from parcelcast.progress import progress
from parcelcast.units import QUANTITY_KINDS, convert, parse_units

defer_dask_import()

def expand_paths(paths) -> list[Path]:
    """Expand globs; every pattern must match at least one existing file."""
    if isinstance(paths, (str, Path)):
        paths = [paths]
    found: list[Path] = []
    for item in paths:
        text = str(item)
        if any(ch in text for ch in "*?["):
            matches = sorted(glob.glob(text))
            if not matches:
                raise InputFileError(text, "the pattern matches no file")
            found.extend(Path(m) for m in matches)
        else:
            path = Path(text)
            if not path.is_file():
                raise InputFileError(path, "no such file")
            found.append(path)
    return found


def detect_format(path: Path) -> str:
    """'grib' or 'netcdf' from the first bytes of the file."""
    with open(path, "rb") as handle:
        head = handle.read(8)
    if head.startswith(b"GRIB"):
        return "grib"
    if head[:3] == b"CDF" or head.startswith(b"\x89HDF"):
        return "netcdf"
    raise InputFileError(path, "not a NetCDF or GRIB file (unrecognised first bytes)")


def open_analysis(paths, overrides: dict[str, str] | None = None, roles=None,
                  allow_damaged: bool = False, chunks=None, levels=None, time=None) -> xr.Dataset:
    """Open analysis files into one canonical dataset, combined along time.

    Parameters
    ----------
    paths : str, Path or list of them
        Files or glob patterns (NetCDF classic/netCDF-4, GRIB 1/2).
    overrides : dict, optional
        ``{role: variable_name}`` naming a file's variable for a role
        (``{"temperature": "TMP"}``); the command line's ``--var``.
    roles : iterable of str, optional
        Roles to look for (default: all known).  Missing roles are simply absent;
        callers ask for what they need with :func:`require`.  Only these are read:
        a GRIB file's other fields are never decoded (``io/grib.py``).
    levels : float or sequence of float, optional
        Pressure levels (Pa) the caller will use.  Fields on levels are cut to these
        before any value is read, so memory follows the levels used, not the file's
        size; a field lacking one of them is kept whole (selection reports what exists).
    time : ``"latest"`` or numpy.datetime64, optional
        The one valid time the caller will use (``"latest"``: the file's last).  A single
        NetCDF file is cut to it before values are read, like ``levels``, so a one-time
        question on a long archive file reads one time; kept whole when a field lacks that time (the
        selection then lists the times there are) and when several files are combined (the
        combination checks every time).
    allow_damaged : bool
        A GRIB file in which some messages cannot be decoded is refused unless
        this is True (then the dataset's ``damaged`` attribute says what was lost).
    chunks : dict, optional
        Passed to xarray for dask-backed arrays (e.g. ``{"time": 1}``).

    Returns
    -------
    xarray.Dataset
        Canonical dataset; attrs ``source_files`` and ``missing_values``
        (count of NaN per variable, as text).
    """
    overrides = dict(overrides or {})
    unknown = set(overrides) - set(ROLES)
    if unknown:
        raise ParcelcastError(
            f"unknown role(s) in --var: {', '.join(sorted(unknown))}; "
            f"known roles: {', '.join(ROLES)}"
        )
    wanted = list(roles) if roles is not None else list(ROLES)
    files = expand_paths(paths)
    levels = None if levels is None else [float(p) for p in np.atleast_1d(levels)]
    time = time if len(files) == 1 else None
    pieces = []
    with progress("opening analyses", total=len(files)) as advance:
        for path in files:
            pieces.append(_open_one(path, overrides, wanted, allow_damaged, chunks, levels, time))
            advance()
    ds = pieces[0] if len(pieces) == 1 else _combine_along_time(pieces, files)
    ds.attrs["source_files"] = ";".join(str(p) for p in files)
    ds.attrs["Conventions"] = "CF-1.10"
    if chunks is None:
        ds.attrs["missing_values"] = "; ".join(
            f"{name}: {int(ds[name].isnull().sum())}" for name in ds.data_vars)
    else:  # counting would read every chunk now; results count their own missing points
        ds.attrs["missing_values"] = "not counted on opening (dask-backed input)"
    return ds


def require(ds: xr.Dataset, *roles: str, purpose: str = "") -> None:
    """Raise a clear error if any of ``roles`` is missing from a canonical dataset."""
    missing = [r for r in roles if r not in ds.data_vars]
    if not missing:
        return
    source = ds.attrs.get("source_files", "input")
    if ds.attrs.get("damaged"):
        raise IncompleteInputError(
            f"{source}: the file is damaged ({ds.attrs['damaged']}); "
            f"missing for {purpose or 'this calculation'}: {', '.join(missing)}"
        )
    raw = ds.attrs.get("raw_variables", "")
    hint = f"needed for {purpose}" if purpose else ""
    if {"u", "v"} & set(missing) and "geopotential" in ds.data_vars:
        hint += ("; " if hint else "") + ("the file has geopotential: --wind geostrophic "
                                          "advects with the geostrophic wind from it")
    raise VariableNotFoundError(
        missing[0], source, raw.split(",") if raw else list(ds.data_vars), hint=hint,
    )


# --------------------------------------------------------------------------------------
def _only_levels(raw_vars: dict, levels) -> dict:
    """The variables at ``levels`` (Pa) only, cut before any value is read (files open lazily).

    All are left whole when one lacks a requested level, so that level selection later
    reports the levels that exist (``selection.py``)."""
    on_levels = [name for name, var in raw_vars.items() if "level" in var.dims]
    if levels is None or not on_levels:
        return raw_vars
    index = {}
    for name in on_levels:
        have = np.asarray(raw_vars[name]["level"].values, dtype=np.float64)
        if any(np.min(np.abs(have - p)) > _LEVEL_TOLERANCE_PA for p in levels):
            return raw_vars
        index[name] = sorted({int(np.argmin(np.abs(have - p))) for p in levels})
    return {name: var.isel(level=index[name]) if name in index else var
            for name, var in raw_vars.items()}


def _only_time(raw_vars: dict, time) -> dict:
    """The variables at one valid time only (``"latest"``, or a datetime64), cut before
    any value is read.  All are left whole when one lacks that time (or, for the latest,
    when their last times differ), so that time selection later lists the times there are."""
    on_times = [name for name, var in raw_vars.items() if "time" in var.dims]
    if time is None or not on_times:
        return raw_vars
    stamps = {name: np.asarray(raw_vars[name]["time"].values, dtype="datetime64[ns]")
              for name in on_times}
    if isinstance(time, str):  # "latest"
        last = {stamps[name].max() for name in on_times}
        if len(last) != 1:
            return raw_vars
        target = last.pop()
    else:
        target = np.datetime64(time, "ns")
    index = {}
    for name in on_times:
        hit = np.flatnonzero(stamps[name] == target)
        if hit.size != 1:
            return raw_vars
        index[name] = [int(hit[0])]  # a list: the time dimension stays
    return {name: var.isel(time=index[name]) if name in index else var
            for name, var in raw_vars.items()}


#: a requested level matches a file's level within this (Pa); as selection.py's matching
_LEVEL_TOLERANCE_PA = 1.0


def _open_one(path: Path, overrides, wanted, allow_damaged, chunks, levels=None,
              time=None) -> xr.Dataset:
    fmt = detect_format(path)
    damaged = ""
    if fmt == "grib":
        from parcelcast.io.grib import open_grib

        groups = open_grib(path, wanted, overrides, allow_damaged)
        crs = groups.crs()
        from eccodes import CodesInternalError

        try:
            upper = [coordinates.standardise(g, path, crs) for g in groups.upper]
            single = [coordinates.standardise(g, path, crs) for g in groups.single]
        except (KeyError, CodesInternalError) as exc:  # values that do not decode (fuzzing)
            raise InputFileError(path, f"GRIB data cannot be decoded ({type(exc).__name__}: "
                                 f"{exc}); the file is damaged") from None
        grid_relative = groups.scan.winds_grid_relative
        earth = earth_radius.from_grib_keys(groups.scan.earth)
        raw_names = groups.names
        if groups.scan.damaged:
            damaged = (
                f"{groups.scan.decoded} GRIB field(s) decoded, {groups.scan.failed} message(s) could not be "
                f"({groups.scan.problem}); readable: {groups.scan.summary() or 'nothing'}"
            )
            if not allow_damaged:
                raise IncompleteInputError(
                    f"{path}: the GRIB file is damaged and opens only in part: {damaged}. "
                    "Fields and levels beyond those listed are missing; refusing to compute "
                    "from incomplete input."
                )
    else:
        from parcelcast.io.netcdf_classic import check_complete

        check_complete(path)  # a classic file cut short reads its lost records as zeros
        try:
            with warnings.catch_warnings():
                # a NaN _FillValue is dropped by xarray with a warning: NaN stays NaN anyway
                warnings.filterwarnings("ignore", category=xr.SerializationWarning)
                raw = xr.open_dataset(path, engine="netcdf4", chunks=chunks, decode_timedelta=True)
        except Exception as exc:
            raise InputFileError(path, f"NetCDF could not be read: {exc}") from None
        _refuse_non_text_units(raw, path)
        std = coordinates.standardise(raw, path)
        upper = [std]
        single = [std]
        grid_relative = None  # NetCDF: declared by each wind's standard_name
        earth = earth_radius.from_netcdf(raw)
        raw_names = sorted(std.data_vars)
    found, raw_vars = {}, {}
    for role_name in wanted:
        role = ROLES[role_name]
        var = _find_role(role, upper if role.on_levels else single, overrides, path)
        if var is not None:
            raw_vars[role_name] = var
    raw_vars = _only_levels(raw_vars, levels)
    if fmt != "grib":  # NetCDF's time is the valid time; GRIB's may be the reference time
        raw_vars = _only_time(raw_vars, time)
    for role_name, var in raw_vars.items():
        found[role_name] = _to_canonical(coordinates.time_as_dimension(var), ROLES[role_name], path)
    for role_name, name in overrides.items():
        if role_name in wanted and role_name not in found:
            raise VariableNotFoundError(role_name, str(path), raw_names,
                                        hint=f"--var {role_name}={name} names no variable")
    if not found:
        raise VariableNotFoundError(", ".join(wanted), str(path), raw_names,
                                    hint="no known quantity was recognised")
    ds = xr.Dataset(found)
    _check_horizontal(ds, raw_vars, path)
    ds = coordinates.normalise(ds, path)
    earth_radius.declare(ds, earth)
    if "x" in ds.dims:
        ds = _winds_to_earth(ds, raw_vars, grid_relative, path)
    for name in ds.data_vars:
        _refuse_infinite(ds[name], name, path)
        _check_plausible(ds[name], name, path)
    ds.attrs["raw_variables"] = ",".join(raw_names)
    if damaged:
        ds.attrs["damaged"] = damaged
    return ds


def _refuse_non_text_units(raw: xr.Dataset, path: Path) -> None:
    """CF ``units`` are text; a number or an array there cannot be read as units."""
    for name, var in raw.variables.items():
        units = var.attrs.get("units")
        if units is not None and not isinstance(units, str):
            raise UnitsError(f"variable '{name}'", repr(units)[:40],
                             "a CF units text attribute (such as 'K' or 'hPa')", str(path))


def _check_horizontal(ds: xr.Dataset, raw_vars: dict, path: Path) -> None:
    """Every quantity lies on the file's horizontal grid: dimensions ``lat, lon`` (1-D
    coordinates) or ``y, x`` (2-D ones); ``x``/``y`` are reserved for map-projected grids."""
    projected = "lat" in ds.coords and ds["lat"].ndim == 2
    horizontal = {"y", "x"} if projected else {"lat", "lon"}
    for name, var in ds.data_vars.items():
        stray = set() if projected else {"x", "y"} & set(var.dims)
        if not horizontal <= set(var.dims) or stray:
            raise GridError(
                f"{path}: variable '{raw_vars[name].name}' ({name}) has dimensions "
                f"({', '.join(map(str, raw_vars[name].dims))}); expected it on the horizontal "
                f"grid of the file, dimensions {' and '.join(sorted(horizontal))}"
                + (" (x and y belong to map-projected grids)" if stray else ""))


def _refuse_infinite(da: xr.DataArray, name: str, path: Path) -> None:
    """Infinity is no value of a quantity and no missing-value marker (missing is NaN)."""
    count = int(np.isinf(da).sum())
    if count:
        raise ImplausibleValuesError(
            name, f"{path} ({da.attrs.get('source', name)})",
            f"{count} infinite value(s); a missing value should be NaN or the _FillValue")


def _winds_to_earth(ds: xr.Dataset, raw_vars: dict, grib_grid_relative, path: Path) -> xr.Dataset:
    """On a projected grid, turn grid-relative winds into east/north components.

    Whether winds are grid-relative must be declared: CF ``grid_eastward_wind`` /
    ``grid_northward_wind`` (or ``eastward_wind``/``northward_wind`` for earth-relative),
    or the GRIB component flag.  Undeclared winds are refused, never guessed.
    """
    winds = [r for r in ("u", "v") if r in ds.data_vars]
    if not winds:
        return ds
    if len(winds) == 1:
        raise IncompleteInputError(f"{path}: only '{winds[0]}' of the wind was found; on a "
                                   "projected grid both components are needed to turn them east/north")
    if grib_grid_relative is not None:
        relative = grib_grid_relative
    else:
        names = {raw_vars[r].attrs.get("standard_name") for r in winds}
        if names <= {"grid_eastward_wind", "grid_northward_wind"}:
            relative = True
        elif names <= {"eastward_wind", "northward_wind"}:
            relative = False
        else:
            raise ParcelcastError(
                f"{path}: winds on a projected grid must say whether they are relative to the grid "
                "or to east/north: give them the CF standard_name grid_eastward_wind/"
                "grid_northward_wind or eastward_wind/northward_wind"
            )
    if not relative:
        return ds
    from parcelcast.grid.projected import ProjectedGrid

    u_east, v_north = ProjectedGrid.from_dataset(ds).winds_to_earth(ds["u"], ds["v"])
    for name, value in (("u", u_east), ("v", v_north)):
        value.attrs = dict(ds[name].attrs)
        value.attrs["comment"] = "rotated from grid-relative to east/north components"
        ds[name] = value
    return ds


def _find_role(role: Role, parts: list[xr.Dataset], overrides, path: Path):
    """Return the variable for ``role`` from the first part where it matches, else None."""
    if role.name in overrides:
        name = overrides[role.name]
        for part in parts:
            if name in part.data_vars:
                return part[name]
        return None
    matchers = (
        lambda n, v: v.attrs.get("standard_name") in role.standard_names and _height_fits(v, role),
        lambda n, v: v.attrs.get("GRIB_shortName") in role.grib_short_names,
        lambda n, v: n.lower() in role.common_names,
    )
    kinds = (role.kind, *role.also_kinds)
    misfit = None
    for match in matchers:
        for part in parts:
            for name, var in part.data_vars.items():
                if role.on_levels and "level" not in var.dims and "level" not in var.coords:
                    continue
                if not role.on_levels and "level" in var.dims:
                    continue
                if not match(name, var):
                    continue
                if _units_fit(var, kinds):
                    return var
                if misfit is None and str(name).lower() not in _SHARED_NAMES:
                    misfit = var
    if misfit is not None:  # recognised by name, but its units cannot be this quantity
        units = misfit.attrs.get("units") or misfit.attrs.get("GRIB_units")
        raise UnitsError(role.name, units, " or ".join(
            f"{k} ({QUANTITY_KINDS[k][1]})" for k in kinds), f"{path} variable '{misfit.name}'")
    return None


def height_above_ground(var: xr.DataArray) -> float | None:
    """Height (m) stated by a near-surface field's height coordinate (CF ``height`` or
    cfgrib's ``heightAboveGround``; one value), else None."""
    # a NetCDF variable names its own scalar coordinates (CF ``coordinates`` attribute, which
    # xarray keeps in the encoding); the dataset's others (a 10-m height beside a 2-m one) are not its
    own = var.encoding.get("coordinates", "").split() or list(var.coords)
    for name in coordinates.height_coordinates(var):
        if name in own:
            coord = var[name]
            units = coord.attrs.get("units") or "m"
            return float(convert(coord.values.reshape(-1)[:1], units, "height", "height coordinate")[0])
    return None


def _height_fits(var: xr.DataArray, role: Role) -> bool:
    """A near-surface role matched by standard name needs its height (roles.py); others pass."""
    if role.height_m is None:
        return True
    height = height_above_ground(var)
    return height is not None and abs(height - role.height_m) <= HEIGHT_TOLERANCE_M


#: names that several roles share (GRIB "w" is omega in Pa/s, elsewhere w in m/s): for these
#: the units decide the role, and a misfit is not an error.
_SHARED_NAMES = {n for r in ROLES.values() for n in r.common_names
                 if sum(n in other.common_names for other in ROLES.values()) > 1}


def _units_fit(var: xr.DataArray, kinds) -> bool:
    """True if the variable's units suit one of ``kinds`` (missing units: undecided -> True)."""
    units = var.attrs.get("units") or var.attrs.get("GRIB_units")
    if not units:
        return True
    try:
        parsed = parse_units(units)
    except UnitsError:
        return True  # reported properly when converted
    from parcelcast.units import registry

    ureg = registry()
    return any(parsed.dimensionality == ureg.parse_units(QUANTITY_KINDS[k][1]).dimensionality
               for k in kinds)


def _to_canonical(var: xr.DataArray, role: Role, path: Path) -> xr.DataArray:
    """Convert to the role's SI unit (affine, so dask arrays stay lazy) and set CF attrs."""
    source = f"{path} variable '{var.name}'"
    units = var.attrs.get("units") or var.attrs.get("GRIB_units")
    kinds = (role.kind, *role.also_kinds)
    out = None
    for kind in kinds:
        try:
            zero, one = convert([0.0, 1.0], units, kind, role.name, source)
        except UnitsError as exc:
            error = exc
            continue
        out = var.astype(np.float64) * (one - zero) + zero
        if kind == "height" and role.kind == "geopotential":
            out = out * STANDARD_GRAVITY  # geopotential height (gpm) -> geopotential
        break
    if out is None:
        if not units:
            raise UnitsError(role.name, None, f"{role.kind} ({QUANTITY_KINDS[role.kind][1]})", source)
        raise UnitsError(role.name, units,
                         " or ".join(f"{k} ({QUANTITY_KINDS[k][1]})" for k in kinds), source) from error
    out.attrs = {
        "units": role.units,
        "standard_name": role.standard_name,
        "long_name": role.long_name,
        "source": source + (f" ({units})" if units else ""),
    }
    heights = coordinates.height_coordinates(out)
    if heights:  # the height lives in the role's name and long_name
        out = out.squeeze([d for d in heights if d in out.dims]).drop_vars(heights)
    out.encoding = {}
    out.name = role.name
    return out


def _check_plausible(da: xr.DataArray, name: str, path: Path) -> None:
    """Refuse values impossible for the quantity, at every time and member (the first time
    the message names is the first that fails)."""
    source = f"{path} ({da.attrs.get('source', name)})"
    if da.size == 0:
        raise InputFileError(path, f"{name} holds no values (a dimension of length 0: "
                             f"{dict(da.sizes)})")
    if name in PLAUSIBLE_RANGE:
        low, high = PLAUSIBLE_RANGE[name]
        lo, hi = float(da.min(skipna=True)), float(da.max(skipna=True))
        if lo < low or hi > high:  # NaN (all missing) compares False and passes
            hint = ""
            if name in ("temperature", "near_surface_temperature") and hi < 100:
                hint = " (these look like degrees Celsius labelled as kelvin: correct the units)"
            raise ImplausibleValuesError(
                name, source,
                f"range {lo:.4g} .. {hi:.4g} {da.attrs['units']} after conversion"
                f"{_first_bad_time(da, low, high)}; expected within {low:g} .. {high:g}{hint}",
            )
    if name == "geopotential" and "level" in da.coords:
        if "time" in da.dims:
            for i in range(da.sizes["time"]):
                _check_geopotential(da.isel(time=i), source)
        else:
            _check_geopotential(da, source)


def _first_bad_time(da: xr.DataArray, low: float, high: float) -> str:
    if "time" not in da.dims:
        return ""
    bad = ((da < low) | (da > high)).any([d for d in da.dims if d != "time"])
    first = np.flatnonzero(np.asarray(bad.values))
    if not first.size:
        return ""
    return f", first at {str(da['time'].values[first[0]])[:16]} UTC"


def _check_geopotential(sample: xr.DataArray, source: str) -> None:
    """Compare with the standard-atmosphere height of each level (factor-of-g0 slips)."""
    levels = np.atleast_1d(sample["level"].values)
    for i, p in enumerate(levels):
        if not 10_000.0 <= p <= 85_000.0:
            continue
        # US Standard Atmosphere 1976, troposphere: z = (T0/L) (1 - (p/p0)^(R L / g0))
        standard_height = 44_330.8 * (1.0 - (p / 101_325.0) ** 0.190263)
        layer = sample.isel(level=i) if "level" in sample.dims else sample
        height = float(np.nanmedian(layer.values)) / STANDARD_GRAVITY
        if not 0.5 * standard_height < height < 2.0 * standard_height:
            raise ImplausibleValuesError(
                "geopotential", source,
                f"at {p / 100:g} hPa the median is {height:.0f} m of height after conversion, "
                f"the standard atmosphere has {standard_height:.0f} m: geopotential (m2 s-2) and "
                "geopotential height (m) may be confused; correct the units",
            )


def _combine_along_time(pieces: list[xr.Dataset], files: list[Path]) -> xr.Dataset:
    names = [set(p.data_vars) for p in pieces]
    common = set.intersection(*names)
    if not common:
        raise ParcelcastError("the files share no quantity: "
                              + "; ".join(f"{f}: {sorted(n)}" for f, n in zip(files, names)))
    for f, p in zip(files, pieces):
        if "time" not in p.dims:
            raise ParcelcastError(f"{f}: has no time coordinate; cannot combine files along time")
    reference = pieces[0]
    for f, p in zip(files[1:], pieces[1:]):
        for c in ("lat", "lon", "level"):
            if c in reference.coords and c in p.coords and not (
                reference[c].shape == p[c].shape and np.allclose(reference[c], p[c])
            ):
                raise ParcelcastError(f"{f}: its {c} coordinate differs from that of {files[0]}")
    dropped = set.union(*names) - common
    combined = xr.concat([p[sorted(common)] for p in pieces], dim="time", join="outer",
                         data_vars="all", coords="different", compat="equals",
                         combine_attrs="drop_conflicts")
    combined = combined.sortby("time")
    times = combined["time"].values
    if len(np.unique(times)) != len(times):
        _, first = np.unique(times, return_index=True)
        dup = sorted(set(range(len(times))) - set(first))
        raise ParcelcastError(
            f"the same valid time occurs in more than one file: "
            f"{', '.join(str(times[i])[:19] for i in dup)}"
        )
    if dropped:
        combined.attrs["not_in_every_file"] = ",".join(sorted(dropped))
        lacking = "; ".join(f"{f}: lacks {', '.join(sorted(common ^ n))}"
                            for f, n in zip(files, names) if n != set.union(*names))
        warn(f"left out because not every file has them: {', '.join(sorted(dropped))} ({lacking})")
    return combined
