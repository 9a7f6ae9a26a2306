"""The public Python API (issue 10 item 6 / brief item 7): names a notebook can rely on, CF
coordinate names through cf_xarray, pint-xarray quantified input.

Expected values come from the analytic uniform gradient of ``datasets.uniform_gradient``
(advection derived by hand there, Holton & Hakim 2013 eq. 2.18 metric)."""

from __future__ import annotations

import inspect
import pydoc
import subprocess
import sys

import numpy as np
import pytest

import parcelcast
from datasets import uniform_gradient


def test_advection_is_the_function_in_any_import_order():
    for first in ("import parcelcast.advection", "from parcelcast.advection import advection_on_level",
                  "import parcelcast"):
        code = (f"{first}\nimport inspect, parcelcast\nfrom parcelcast import advection\n"
                "assert inspect.isfunction(advection), advection\n"
                "assert parcelcast.advection is advection\n"
                "from parcelcast.advection import advection_array  # the module stays importable\n")
        done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
        assert done.returncode == 0, done.stderr[-1500:]


def test_all_names_resolve_and_help_lists_them():
    text = pydoc.render_doc(parcelcast, renderer=pydoc.plaintext)
    for name in parcelcast.__all__:
        obj = getattr(parcelcast, name)
        assert not inspect.ismodule(obj), name  # no module hides behind a public name
        assert name in text, name
    assert "advection" in dir(parcelcast)


def test_wrapped_functions_keep_their_documentation():
    from parcelcast.advection import advection as library_function

    assert parcelcast.advection.__doc__ == library_function.__doc__
    assert parcelcast.advection.__wrapped__ is library_function
    assert list(inspect.signature(parcelcast.advection).parameters)[:3] == ["scalar", "u", "v"]


def _cf_named(ds, lat_name, lon_name, by):
    """The canonical fields renamed as a CF file might name them, found only by ``by``."""
    out = ds.isel(time=0, level=0).rename(lat=lat_name, lon=lon_name)
    lat_attrs = {"standard_name": "latitude"} if by == "standard_name" else {"units": "degrees_north"}
    lon_attrs = {"standard_name": "longitude"} if by == "standard_name" else {"units": "degrees_east"}
    out[lat_name].attrs = lat_attrs
    out[lon_name].attrs = lon_attrs
    return out


@pytest.mark.parametrize("names, by", [(("latitude", "longitude"), "standard_name"),
                                       (("nav_lat", "nav_lon"), "units"),
                                       (("y_coord", "x_coord"), "standard_name")])
def test_cf_coordinate_names(names, by):
    ds, exact = uniform_gradient()
    cf = _cf_named(ds, *names, by)
    result = parcelcast.advection(cf["temperature"], cf["u"], cf["v"])
    assert result.dims == names  # the caller's names come back
    inner = (slice(1, -1), slice(1, -1))
    np.testing.assert_allclose(result.values[inner], exact[inner], rtol=1e-9, atol=1e-14)
    at = parcelcast.value_at(cf["temperature"], 10.0, 5.0)
    assert float(at) == pytest.approx(float(ds["temperature"].isel(time=0, level=0).interp(lat=10.0, lon=5.0)))


def test_pint_quantified_input():
    import cf_xarray.units as cf_units
    import pint_xarray  # noqa: F401  (registers the .pint accessor)
    ds, exact = uniform_gradient()
    cf = _cf_named(ds, "latitude", "longitude", "standard_name")
    cf["latitude"].attrs["units"] = "degrees_north"
    cf["longitude"].attrs["units"] = "degrees_east"
    registry = cf_units.units
    t = (cf["temperature"] - 273.15).assign_attrs(units="degC").pint.quantify(unit_registry=registry)
    u = (cf["u"] / 0.514444).assign_attrs(units="knot").pint.quantify(unit_registry=registry)
    v = cf["v"].pint.quantify(unit_registry=registry)
    result = parcelcast.advection(t, u, v)
    assert hasattr(result.data, "units")  # quantified in, quantified out
    per_hour = result.data.to("K/h").magnitude
    inner = (slice(1, -1), slice(1, -1))
    np.testing.assert_allclose(per_hour[inner], exact[inner] * 3600.0, rtol=1e-6, atol=1e-10)


def test_quantified_input_with_wrong_dimension_is_refused():
    import cf_xarray.units as cf_units
    import pint_xarray  # noqa: F401  (registers the .pint accessor)
    from parcelcast.errors import UnitsError

    ds, _ = uniform_gradient()
    cf = _cf_named(ds, "latitude", "longitude", "standard_name")
    wind_in_metres = cf["u"].assign_attrs(units="m").pint.quantify(unit_registry=cf_units.units)
    with pytest.raises(UnitsError, match="wind"):
        parcelcast.advection(cf["temperature"], wind_in_metres, cf["v"])
