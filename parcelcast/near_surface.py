"""The split at the surface level when only the 2-m temperature is there (no 10-m wind).

With 2-m temperature alone the observed change at the station can be computed, and nothing
else: the advective part needs the 10-m wind, and without it the residual (what the
sun, the night, cloud and everything else did) cannot be told apart from the advection.
:func:`observed_only_split` returns the split's usual parts with those left missing
(``None``) and says why, so a reader sees what was and was not computed.
"""

from __future__ import annotations

import numpy as np

NO_WIND = ("not available: the input has no 10-m wind (GRIB 10u/10v, NetCDF u10/v10 or CF "
           "eastward_wind/northward_wind at a height of 10 m)")


def observed_only_split(ds, lat: float, lon: float, start, end, station=None) -> dict:
    """The surface split without wind, in the layout of :func:`parcelcast.budget.trend_split`.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis with ``near_surface_temperature`` (K).
    lat, lon : float
        The station, degrees north / east (bilinear value).
    start, end : numpy.datetime64
        The window (UTC), inside the analysis times (linear interpolation between them).
    station : StationSeries, optional
        The station's own series: its change replaces the analysed one.

    Returns
    -------
    dict
        ``eulerian`` with ``observed_change_K`` (K, member mean; None if missing) and
        ``advective_K``, ``vertical_K``, ``residual_K`` None with the reason in
        ``residual_note`` and ``not_computed``; ``lagrangian`` and ``consistency`` None.
    """
    from parcelcast.budget.windows import check_window, interpolation_weights
    from parcelcast.sampling import value_at
    from parcelcast.selection import member_mean, select_level

    check_window(ds, start, end)
    temperature = select_level(ds, "surface")["temperature"]
    times = temperature["time"].values

    def at(when):
        weights = interpolation_weights(times, when)
        used = np.flatnonzero(weights)
        point = value_at(temperature.isel(time=used), lat, lon)
        return (point * weights[used]).sum("time", skipna=False)

    change = at(end) - at(start)
    observed = float(member_mean(change))
    source = "analysis"
    euler = {}
    if station is not None:
        observed = station.value_at(end) - station.value_at(start)
        source = f"station series {station.source}"
        euler["station_gaps"] = station.gap_text()
    if "member" in change.dims and station is None:
        euler["observed_change_members_K"] = [float(x) for x in change.values]
    euler.update({
        "observed_change_K": observed if np.isfinite(observed) else None,
        "point_observed_change_K": float(member_mean(change)),
        "advective_K": None, "vertical_K": None, "residual_K": None,
        "vertical_available": False,
        "observed_source": source,
        "residual_note": f"{NO_WIND}, so the advective part cannot be separated from the rest",
        "not_computed": {
            "advective": NO_WIND,
            "vertical": "not at the surface level (no omega term for 2-m temperature)",
            "residual": "needs the advective part (no 10-m wind)",
            "lagrangian": "needs the 10-m wind for the back trajectory",
        },
    })
    return {"eulerian": euler, "lagrangian": None, "consistency": None,
            "advective_difference_K": None}
