"""The parcel column loops of :mod:`parcelcast.thermo._parcel_loops`, compiled with numba.

Imported on first use, and only when many columns are lifted (``parcel.COMPILED_FROM_COLUMNS``):
numba takes about half a second to start and load the cached machine code, more than the
loops take as plain Python for a few columns.  Each function of ``_parcel_loops`` is compiled
as it is written there (``cache=True``, numba's IEEE arithmetic); the compiled functions call
each other's compiled versions, since they are built with a namespace in which each name is
replaced by its compiled version.  numba's cache files carry the name of ``_parcel_loops``.
"""

from __future__ import annotations

import types

import numba
import numpy as np

from parcelcast.thermo import _parcel_loops

_NJIT = dict(cache=True, nogil=True, error_model="numpy")  # IEEE division: x/0 -> inf/NaN, as numpy


def _compile(module) -> dict:
    """Compiled versions of the functions defined in ``module``, by name."""
    space = dict(vars(module))  # the globals of the compiled functions: helpers compiled too
    for name, plain in vars(module).items():
        if isinstance(plain, types.FunctionType) and plain.__module__ == module.__name__:
            copy = types.FunctionType(plain.__code__, space, name, plain.__defaults__, plain.__closure__)
            copy.__qualname__, copy.__doc__ = plain.__qualname__, plain.__doc__
            inline = "always" if name in module.INLINE else "never"
            space[name] = numba.njit(inline=inline, **_NJIT)(copy)
    return space


_COMPILED = _compile(_parcel_loops)
interpolate_columns = _COMPILED["interpolate_columns"]
parcel_starts = _COMPILED["parcel_starts"]
pseudoadiabat_lookup_columns = _COMPILED["pseudoadiabat_lookup_columns"]
lift_columns = _COMPILED["lift_columns"]


def warm_up() -> None:
    """Compile (or load from the cache) every kernel once, e.g. before timing: through the
    public functions, with enough columns that they take the compiled loops."""
    from parcelcast.thermo.moist import pseudoadiabat_lookup
    from parcelcast.thermo.parcel import COMPILED_FROM_COLUMNS, interpolate_at_pressure, lift_parcels

    p = np.array([100000.0, 90000.0, 80000.0])
    t = np.tile([300.0, 292.0, 285.0], (COMPILED_FROM_COLUMNS, 1))
    lift_parcels(p, t, t - 5.0)
    interpolate_at_pressure(p, t, 95000.0)
    pseudoadiabat_lookup(np.full(COMPILED_FROM_COLUMNS, 290.0), 90000.0, p)
