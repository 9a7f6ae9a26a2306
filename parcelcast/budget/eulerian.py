"""The Eulerian split: the change at the station and its parts, from gridded analyses.

On a pressure level (Holton and Hakim 2013, eq. 3.6 rearranged):

    dT/dt = -V.grad T + omega S_p + Q/c_p,      S_p = R_d T/(c_p p) - dT/dp

The observed local change over [start, end] is split into the time integral of -V.grad T
(horizontal advection), of omega S_p (vertical motion, only where omega is in the analysis,
else "not available", never 0) and the residual, which makes the parts add up exactly.  The
residual is diabatic heating plus errors, plus the vertical term when it is not computed.
:func:`eulerian_split` is the split for one station over one window from a canonical
dataset; :func:`split_fields` gives the same parts as maps.
"""

from __future__ import annotations

import numpy as np

from parcelcast.budget.windows import (bounding_times, check_window, interpolate_in_time,
                                       interpolation_weights, simpson_nodes, weighted)
from parcelcast.selection import level_label


WINDS = ("actual", "geostrophic")
#: what the residual holds: never "diabatic" alone
RESIDUAL_NOTE = "diabatic heating plus errors"
RESIDUAL_NOTE_NO_OMEGA = ", plus the vertical-motion term (not computed: no omega)"
#: what the residual holds at the surface level (2-m temperature), said plainly
SURFACE_RESIDUAL = ("at the surface the residual holds the diurnal cycle (sunshine by day, "
                    "night-time cooling) as well as everything else: cloud, evaporation, "
                    "surface fluxes, mixing with the air above, and errors")
TIME_INTEGRATION = ("fields interpolated linearly in time between analyses; Simpson's rule on "
                    "each piece of the window between analysis times (exact for the products)")


def check_wind(wind: str) -> None:
    """Refuse a wind choice other than 'actual' or 'geostrophic' (nothing is assumed)."""
    from parcelcast.errors import ParcelcastError

    if wind not in WINDS:
        raise ParcelcastError(f"wind {wind!r} is not known; choose one of: {', '.join(WINDS)}")


def at_surface(ds, level, wind):
    """At the surface level (``"surface"``) the 2-m temperature and 10-m wind as
    ``temperature``, ``u``, ``v`` (``selection.select_level``); else ``ds`` unchanged."""
    from parcelcast.selection import check_surface_wind, is_surface, select_level

    if not is_surface(level):
        return ds
    check_surface_wind(wind)
    return select_level(ds, level)


def split_fields(ds, level_hpa: float, start, end, wind: str = "actual"):
    """The split as maps over the analysis area for the window [start, end].

    Time integration: temperature, wind and omega are interpolated linearly in time between
    analyses; the advection -V.grad T and omega S_p of the interpolated fields are integrated
    by Simpson's rule on each piece of the window between analysis times, which is exact
    for these products (quadratic in time, see :mod:`parcelcast.budget.windows`).

    Returns
    -------
    xarray.Dataset
        ``observed_change``, ``advective``, ``vertical`` (absent without omega) and
        ``residual`` in K over the window, (member,) lat, lon; attrs say how.
    """
    import xarray as xr

    from parcelcast.advection import advection
    from parcelcast.io.analysis import require
    from parcelcast.selection import select_level

    check_wind(wind)
    check_window(ds, start, end)
    ds = at_surface(ds, level_hpa, wind)  # level_hpa "surface": 2-m temperature, 10-m wind
    require(ds, "temperature", purpose="the trend split")
    ds = bounding_times(ds, start, end)  # compute only what the window uses
    temperature = select_level(ds, level_hpa)["temperature"]
    if wind == "actual":
        require(ds, "u", "v", purpose="advection by the actual wind")
        level = select_level(ds, level_hpa)
        u, v = level["u"], level["v"]
    else:
        from parcelcast.geostrophic import geostrophic_wind

        u, v = geostrophic_wind(select_level(ds[["geopotential"]], level_hpa))  # linear in z
    times = ds["time"].values
    nodes, node_weights = simpson_nodes(times, start, end)
    adv = advection(*(interpolate_in_time(x, nodes) for x in (temperature, u, v)))
    observed = (weighted(temperature, interpolation_weights(times, end))
                - weighted(temperature, interpolation_weights(times, start)))
    advective = weighted(adv, node_weights)
    parts = {"observed_change": observed, "advective": advective}
    vertical = _vertical_factors(ds, level_hpa)
    if vertical is not None:
        omega, stability = (interpolate_in_time(x, nodes) for x in vertical)
        parts["vertical"] = weighted(omega * stability, node_weights)
        parts["residual"] = observed - advective - parts["vertical"]
    else:
        parts["residual"] = observed - advective
    from parcelcast.ground import mask_window_below_ground

    out = mask_window_below_ground(xr.Dataset(parts), select_level(ds, level_hpa))
    descriptions = {
        "observed_change": "local temperature change over the window",
        "advective": "time integral of horizontal advection -V.grad T",
        "vertical": "time integral of omega * static stability (vertical motion)",
        "residual": "observed change minus the other parts: " + RESIDUAL_NOTE
                    + ("" if vertical is not None else RESIDUAL_NOTE_NO_OMEGA),
    }
    for name in out.data_vars:
        out[name].attrs = {"units": "K", "long_name": descriptions[name]}
    out.attrs = {**out.attrs, "start": str(start)[:19], "end": str(end)[:19], "level_hPa": level_hpa,
                 "level": level_label(level_hpa),
                 "wind": wind, "time_integration": TIME_INTEGRATION,
                 "source_files": ds.attrs.get("source_files", "")}
    return out


def _vertical_factors(ds, level_hpa: float):
    """(omega in Pa s-1, S_p in K Pa-1) on the level, whose product is the vertical term
    (K s-1); None when the analysis has no omega."""
    if "omega" not in ds.data_vars or "level" not in ds.dims or ds.sizes["level"] < 2:
        return None
    import xarray as xr

    from parcelcast.selection import select_level
    from parcelcast.thermo import static_stability

    stability = xr.apply_ufunc(
        static_stability, ds["temperature"], ds["level"],
        input_core_dims=[["level"], ["level"]], output_core_dims=[["level"]],
        dask="parallelized", output_dtypes=[np.float64],
        dask_gufunc_kwargs={"allow_rechunk": True},  # dT/dp needs whole columns
    ).transpose(*ds["temperature"].dims)
    level = select_level(xr.Dataset({"omega": ds["omega"], "stability": stability}), level_hpa)
    return level["omega"], level["stability"]


def eulerian_split(ds, lat: float, lon: float, level_hpa: float, start, end,
                   wind: str = "actual", radius_km: float | None = None, station=None) -> dict:
    """The Eulerian split at a point (bilinear) or over a radius around it.

    ``station`` (a :class:`parcelcast.io.station.StationSeries`) replaces the analysed
    observed change by the station's own; the residual then also holds the difference
    between the station and the analysis level (said in ``residual_note``).
    Values are member means where the analysis has members (``*_members_K`` lists each;
    a missing member makes the mean missing).  ``point_observed_change_K`` and
    ``point_advective_K`` (and their members) are always the analysed values at the point
    itself, for the comparison with the Lagrangian view.
    """
    import xarray as xr

    from parcelcast.sampling import value_at
    from parcelcast.selection import is_surface

    fields = split_fields(ds, level_hpa, start, end, wind)
    at, area = _at_station(fields, lat, lon, radius_km)
    parts = {name: at[name] for name in at.data_vars}
    result = {"observed_source": "analysis",
              "residual_note": SURFACE_RESIDUAL if is_surface(level_hpa) else RESIDUAL_NOTE
              + ("" if "vertical" in parts else RESIDUAL_NOTE_NO_OMEGA)}
    point = value_at(fields[["observed_change", "advective"]], lat, lon)
    result.update(_values("point_observed_change_K", point["observed_change"]))
    result.update(_values("point_advective_K", point["advective"]))
    if station is not None:
        observed = station.value_at(end) - station.value_at(start)
        result["observed_source"] = f"station series {station.source}"
        result["station_gaps"] = station.gap_text()
        result["residual_note"] += (", plus the difference between the station series and the "
                                    f"{level_label(level_hpa)} analysis")
        parts["observed_change"] = xr.full_like(parts["advective"], observed)
        others = parts["advective"] + (parts["vertical"] if "vertical" in parts else 0.0)
        parts["residual"] = parts["observed_change"] - others
    for name, key in (("observed_change", "observed_change_K"), ("advective", "advective_K"),
                      ("vertical", "vertical_K"), ("residual", "residual_K")):
        if name in parts:
            result.update(_values(key, parts[name]))
        else:
            result[key] = None
    result["vertical_available"] = "vertical" in parts
    result["at_surface"] = is_surface(level_hpa)
    from parcelcast.ground import point_reason

    result["missing_reason"] = point_reason(fields, lat, lon) if radius_km is None else None
    result["below_ground_check"] = fields.attrs["below_ground_check"]
    if area is not None:
        result["area"] = area
    return result


def _values(key: str, value) -> dict:
    """``{key: member mean}`` plus ``{key_members: [...]}`` when there are members."""
    from parcelcast.selection import member_mean

    out = {key: float(member_mean(value))}
    if "member" in value.dims:
        out[key.replace("_K", "_members_K")] = [float(x) for x in value.values]
    return out


def _at_station(fields, lat, lon, radius_km):
    """The parts at the point, or their area means over one common set of grid points
    (a point missing in any part is left out of every part, so the parts still add up)."""
    from parcelcast.sampling import area_mean, value_at

    if radius_km is None:
        return value_at(fields, lat, lon), None
    import xarray as xr

    valid = None
    for name in fields.data_vars:
        valid = fields[name].notnull() if valid is None else valid & fields[name].notnull()
    means, info = {}, None
    for name in fields.data_vars:
        means[name], info = area_mean(fields[name].where(valid), lat, lon, radius_km=radius_km,
                                      reasons=_ground_reason(fields))
    return xr.Dataset(means), info


def _ground_reason(fields):
    from parcelcast.ground import BELOW_GROUND

    return [(BELOW_GROUND, fields["below_ground"])] if "below_ground" in fields.coords else []
