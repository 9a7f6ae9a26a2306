"""The project's one pint registry and unit checks at the edges.

Kernels work on plain float64 SI arrays; everything that enters from a user or
a file passes through :func:`convert` (or :func:`check_quantity`), which knows
what kind of quantity is expected and says so when the units do not fit.

The registry is built explicitly by :func:`registry` on first use (not as an
import side effect) and understands the spellings found in CF and GRIB files
("m s**-1", "gpm", "degrees_north", "(0 - 1)", "%", "millibars", "K").
"""

from __future__ import annotations

import functools
import re

import numpy as np

from parcelcast.errors import UnitsError

#: Expected dimensionality (pint notation) and the SI unit we convert to, per kind.
QUANTITY_KINDS: dict[str, tuple[str, str]] = {
    "temperature": ("[temperature]", "K"),
    "speed": ("[length] / [time]", "m/s"),
    "geopotential": ("[length] ** 2 / [time] ** 2", "m**2/s**2"),
    "height": ("[length]", "m"),
    "pressure": ("[pressure]", "Pa"),
    "pressure_tendency": ("[pressure] / [time]", "Pa/s"),
    "fraction": ("", "dimensionless"),
    "mixing_ratio": ("", "kg/kg"),
    "angle": ("", "degree"),
    "time": ("[time]", "s"),
    "heating_rate": ("[temperature] / [time]", "K/s"),
}

# Spellings seen in GRIB/CF files that pint does not parse as they are.
_ALIASES = {
    "gpm": "m",  # geopotential metre: height, converted to geopotential by g0 elsewhere
    "(0 - 1)": "1",
    "0-1": "1",
    "proportion": "1",
    "fraction": "1",
    "kg kg**-1": "kg/kg",
    "kg/kg": "kg/kg",
    "millibars": "hPa",
    "millibar": "hPa",
    "mb": "hPa",
    "mbar": "hPa",
    "degrees_north": "degree",
    "degree_north": "degree",
    "degrees_east": "degree",
    "degree_east": "degree",
    "degrees_n": "degree",
    "degrees_e": "degree",
    "deg": "degree",
    "degc": "degC",
    "c": "degC",  # a bare "C" in a weather file is Celsius, not coulomb
    "deg c": "degC",
    "degrees c": "degC",
    "degrees_c": "degC",
    "f": "degF",
    "deg f": "degF",
    "degrees f": "degF",
    "degrees_f": "degF",
    "k": "K",
    "degrees_kelvin": "K",
    "kn": "knot",
    "deg_c": "degC",
    "celsius": "degC",
    "degrees_celsius": "degC",
    "degree_celsius": "degC",
    "degf": "degF",
    "deg_f": "degF",
    "degk": "K",
    "kt": "knot",
    "kts": "knot",
    "knots": "knot",
    "percent": "percent",
    "%": "percent",
}


@functools.lru_cache(maxsize=1)
def registry():
    """Return the project's single pint ``UnitRegistry`` (built on first call)."""
    import pint

    from parcelcast.cache import private_cache_files

    # pint keeps its parsed definitions (pickled) in our private cache: 0.03 s instead of 0.3 s
    with private_cache_files("pint") as folder:
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=folder)
    ureg.define("percent = 0.01 = %")
    ureg.define("gpm = meter")
    return ureg


def _normalise_spelling(units: str) -> str:
    text = units.strip()
    key = text.lower()
    if key in _ALIASES:
        return _ALIASES[key]
    # "m s**-1" / "m2 s-2" style (CF/UDUNITS): insert explicit multiplication and powers
    text = re.sub(r"\*\*", "^", text)
    text = re.sub(r"([A-Za-z])(-?\d+)", r"\1^\2", text)  # m2 -> m^2, s-1 -> s^-1
    text = re.sub(r"\s+", " * ", text.strip())
    return text


def parse_units(units: str | None, quantity: str = "value", source: str = ""):
    """Parse a units string (CF/UDUNITS, GRIB or pint spelling) into pint units.

    Raises :class:`UnitsError` naming ``quantity`` and ``source`` when the
    string is missing or not understood.
    """
    if units is None or str(units).strip() == "":
        raise UnitsError(quantity, units, "a stated unit", source)
    ureg = registry()
    try:
        return ureg.parse_units(_normalise_spelling(str(units)))
    except Exception as exc:  # pint raises several types for unknown spellings
        raise UnitsError(quantity, str(units), f"a unit pint understands ({exc})", source) from None


def convert(values, units: str | None, kind: str, quantity: str = "", source: str = "") -> np.ndarray:
    """Convert ``values`` given in ``units`` to the SI unit of ``kind``; float64 out.

    Parameters
    ----------
    values : array_like
        Plain numbers (NaN kept as NaN).
    units : str
        Units as written in the file or by the user.
    kind : str
        One of :data:`QUANTITY_KINDS` (e.g. ``"temperature"`` -> K, ``"speed"`` -> m/s).
    quantity, source : str
        Names used in the error message (e.g. ``"temperature"``, ``"file.nc variable t"``).
    """
    expected_dim, si_unit = QUANTITY_KINDS[kind]
    label = quantity or kind
    parsed = parse_units(units, label, source)
    ureg = registry()
    target = ureg.parse_units(si_unit)
    if parsed.dimensionality != target.dimensionality:
        raise UnitsError(label, str(units), f"{kind} ({si_unit} or compatible)", source)
    arr = np.asarray(values, dtype=np.float64)
    if parsed == target:
        return arr
    return ureg.Quantity(arr, parsed).to(target).magnitude


def check_quantity(value, kind: str, quantity: str = ""):
    """Return the SI magnitude of a pint Quantity of the expected ``kind``.

    Plain numbers are refused: public entry points that take physical values
    want them with units so nothing is assumed silently.
    """
    expected_dim, si_unit = QUANTITY_KINDS[kind]
    label = quantity or kind
    if not hasattr(value, "units"):
        raise UnitsError(label, None, f"{kind} as a pint Quantity (e.g. Q_(1.0, '{si_unit}'))")
    ureg = registry()
    target = ureg.parse_units(si_unit)
    if value.dimensionality != target.dimensionality:
        raise UnitsError(label, str(value.units), f"{kind} ({si_unit} or compatible)")
    return value.to(target).magnitude


def Q_(value, units: str):
    """Make a Quantity on the project's registry (``Q_(850, 'hPa')``)."""
    return registry().Quantity(value, units)
