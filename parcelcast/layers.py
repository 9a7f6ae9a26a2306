"""Layer means between two pressure levels: temperature from thickness, and wind.

Hypsometric equation (Wallace and Hobbs 2006, eq. 3.24):

    Phi_top - Phi_bottom = R_d <T_v> ln(p_bottom / p_top)

so the layer-mean *virtual* temperature is ``<T_v> = dPhi / (R_d ln(p_b/p_t))``.
It exceeds the mean of the air temperature by the moisture term (about 0.61 q T,
a few tenths of a kelvin to about 2 K in warm moist air).
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import DRY_AIR_GAS_CONSTANT


def layer_mean_temperature(ds, bottom_pa: float, top_pa: float):
    """Layer-mean virtual temperature (K) between two levels from the geopotential thickness.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical dataset with ``geopotential`` on both levels.
    bottom_pa, top_pa : float
        Pressures of the layer's bottom and top (Pa), bottom > top.
    """
    from parcelcast.io.analysis import require

    require(ds, "geopotential", purpose="the layer-mean temperature")
    if not bottom_pa > top_pa:
        raise ValueError("the bottom pressure must exceed the top pressure")
    from parcelcast.selection import select_level

    phi = ds[["geopotential"]]
    thickness = (select_level(phi, top_pa / 100.0)["geopotential"].drop_vars("level")
                 - select_level(phi, bottom_pa / 100.0)["geopotential"].drop_vars("level"))
    mean = thickness / (DRY_AIR_GAS_CONSTANT * np.log(bottom_pa / top_pa))
    mean.attrs = {
        "units": "K", "standard_name": "virtual_temperature",
        "long_name": f"layer-mean virtual temperature {bottom_pa / 100:g}-{top_pa / 100:g} hPa "
        "(hypsometric, from thickness)",
    }
    mean.name = "layer_mean_temperature"
    return mean


def layer_mean(da, bottom_pa: float, top_pa: float):
    """Mean of a field over levels between two pressures, weighted in ln p (trapezoid).

    Equivalent to weighting by thickness in an isothermal layer; levels missing from
    the file simply do not enter (the levels used are stated in the attrs).
    """
    levels = da["level"].values
    inside = (levels <= bottom_pa + 1.0) & (levels >= top_pa - 1.0)
    if inside.sum() < 2:
        from parcelcast.errors import SelectionError

        raise SelectionError("layer", f"{bottom_pa / 100:g}-{top_pa / 100:g} hPa",
                             "at least two levels inside it")
    sub = da.isel(level=np.flatnonzero(inside))
    x = -np.log(sub["level"].values)  # increases upward
    weights = np.zeros_like(x)
    dx = np.diff(x)
    weights[:-1] += dx / 2
    weights[1:] += dx / 2
    import xarray as xr

    w = xr.DataArray(weights / weights.sum(), dims="level", coords={"level": sub["level"]})
    out = (sub * w).sum("level", skipna=False)
    out.attrs = dict(da.attrs)
    out.attrs["comment"] = ("ln(p)-weighted mean over levels "
                            + ", ".join(f"{p / 100:g}" for p in sub["level"].values) + " hPa")
    return out
