"""The public Python API: the library's functions, taking xarray data as notebooks hold it.

What belongs here: thin wrappers that accept what a notebook user has, then call the library
unchanged.

* Coordinates named by CF rather than by parcelcast (``latitude``, ``longitude``, ``nav_lat``
  with ``standard_name = "latitude"``, ``units = "degrees_north"`` or ``axis = "Y"``) are
  found through cf_xarray's criteria (CF 1.11 sections 4.1, 4.2) and the result is given back
  with the caller's names.
* pint-xarray quantified arrays (``da.pint.quantify()``: the data are a ``pint.Quantity``)
  are accepted: their units become the ``units`` attribute the library checks, and the
  result comes back quantified.

The wrapped functions keep their names, signatures and documentation
(``help(parcelcast.advection)``).
"""

from __future__ import annotations

import functools

__all__ = ["advection", "geostrophic_wind", "value_at", "area_mean", "layer_mean_temperature",
           "to_library_form"]

_AXES = {"lat": "latitude", "lon": "longitude"}


def _is_quantified(obj) -> bool:
    """True if ``obj`` (DataArray or Dataset) holds pint quantities in its data or coordinates."""
    variables = getattr(obj, "variables", None)
    if variables is None:
        variables = {getattr(obj, "name", None): getattr(obj, "variable", None),
                     **dict(getattr(obj, "coords", {}))}
    return any(hasattr(getattr(v, "data", None), "magnitude")
               and hasattr(getattr(v, "data", None), "units") for v in variables.values())


def _dequantify(obj):
    """A pint-quantified DataArray or Dataset as plain numbers with ``units`` attributes."""
    if not _is_quantified(obj):
        return obj
    import pint_xarray  # noqa: F401 - quantified data come from pint-xarray: it is installed

    return obj.pint.dequantify(format="~P")


def _cf_names(obj) -> dict[str, str]:
    """``{caller's name: parcelcast's name}`` for the latitude and longitude coordinates."""
    import cf_xarray  # noqa: F401 - registers the .cf accessor

    renames = {}
    for ours, cf_key in _AXES.items():
        if ours in obj.coords or ours in obj.dims:
            continue
        names = obj.cf.coordinates.get(cf_key, []) or [
            n for n in obj.cf.axes.get("Y" if ours == "lat" else "X", [])
            if n in obj.coords and obj[n].ndim <= 2]
        if len(names) == 1:
            renames[names[0]] = ours
    return renames


def to_library_form(obj):
    """``(obj, renames)``: a DataArray or Dataset with lat/lon named as parcelcast names them
    and plain numbers with ``units`` (pint quantities taken apart); ``renames`` maps the
    caller's coordinate names to parcelcast's."""
    import xarray as xr

    if not isinstance(obj, (xr.Dataset, xr.DataArray)):
        return obj, {}
    obj = _dequantify(obj)
    renames = _cf_names(obj)
    return (obj.rename(renames) if renames else obj), renames


def _registry_of(args):
    """The pint registry of the first quantified argument (results are given back in it)."""
    for arg in args:
        data = getattr(arg, "data", None)
        if hasattr(data, "_REGISTRY"):
            return data._REGISTRY
    return None


def _back(result, renames: dict, registry):
    import xarray as xr

    if isinstance(result, (xr.DataArray, xr.Dataset)):
        present = {ours: theirs for theirs, ours in renames.items()
                   if ours in result.coords or ours in result.dims}
        if present:
            result = result.rename(present)
        if registry is not None and isinstance(result, xr.DataArray) and result.attrs.get("units"):
            from parcelcast.units import parse_units

            units = f"{parse_units(result.attrs['units']):~P}"  # CF spelling -> pint's
            attrs = {k: v for k, v in result.attrs.items() if k != "units"}
            result = result.copy(data=registry.Quantity(result.values, units))
            result.attrs = attrs
    elif isinstance(result, tuple):
        return tuple(_back(r, renames, registry) for r in result)
    return result


def _accepting_cf_and_pint(function):
    """Wrap ``function`` so that its xarray arguments may use CF names and pint quantities."""
    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        renames: dict[str, str] = {}
        registry = _registry_of(args)

        def convert(value):
            converted, names = to_library_form(value)
            renames.update(names)
            return converted

        args = tuple(convert(a) for a in args)
        kwargs = {k: convert(v) for k, v in kwargs.items()}
        return _back(function(*args, **kwargs), renames, registry)

    return wrapper


def _wrapped(module: str, name: str):
    import importlib

    return _accepting_cf_and_pint(getattr(importlib.import_module(module), name))


advection = _wrapped("parcelcast.advection", "advection")
geostrophic_wind = _wrapped("parcelcast.geostrophic", "geostrophic_wind")
value_at = _wrapped("parcelcast.sampling", "value_at")
area_mean = _wrapped("parcelcast.sampling", "area_mean")
layer_mean_temperature = _wrapped("parcelcast.layers", "layer_mean_temperature")
