"""Pressure levels that lie below the ground: found, masked and explained.

Pressure-level files hold values at every level everywhere, also where the level lies
below the ground (850 hPa under the Andes or Tibet): the model extrapolates them, they
are not air.  What belongs here: deciding where a level is below the ground, and making
those values missing with the reason :data:`BELOW_GROUND`.

How it is decided, in order (the first the file allows):

1. surface pressure in the file: the level is below the ground where its pressure is
   higher than the surface pressure (``p_level > p_surface``);
2. geopotential at the level and the geopotential of the ground (orography, surface
   geopotential): below where ``Phi_level < Phi_surface``;
3. neither: it cannot be checked, and results say so (:data:`NOT_CHECKED`).

Values at the point itself are masked; derivatives at a point next to a below-ground
point still use the file's values there (the stencil is not shortened).
"""

from __future__ import annotations

import numpy as np

#: the reason given for every value masked here (``--at`` answers, counts, JSON)
BELOW_GROUND = "below the ground"
#: how each check is described in outputs
BY_SURFACE_PRESSURE = ("checked against the file's surface pressure (a level at a higher "
                       "pressure than the surface is below the ground)")
BY_OROGRAPHY = ("checked against the file's orography (a level whose geopotential is "
                "below the ground's is below the ground)")
NOT_CHECKED = ("cannot be checked: the file has neither surface pressure nor "
               "geopotential with orography")

_MASK_ATTRS = {
    "long_name": "the pressure level lies below the ground here (values masked)",
    "flag_values": np.array([0, 1], np.int8),
    "flag_meanings": "above_ground below_ground",
}


def below_ground(ds):
    """Where the pressure level(s) of ``ds`` lie below the ground.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis, whole (``level`` dimension) or one level (scalar ``level``
        coordinate, Pa), with ``surface_pressure`` (Pa) or ``geopotential`` and
        ``orography`` (m2 s-2).

    Returns
    -------
    (xarray.DataArray or None, str)
        Boolean mask, True below the ground (dims of the level fields; a NaN surface
        value counts as not below), and how it was decided (one of
        :data:`BY_SURFACE_PRESSURE`, :data:`BY_OROGRAPHY`, :data:`NOT_CHECKED`).
    """
    if "level" not in ds.coords:
        return None, NOT_CHECKED
    if "surface_pressure" in ds.data_vars:
        mask = ds["level"] > ds["surface_pressure"]
        method = BY_SURFACE_PRESSURE
    elif "geopotential" in ds.data_vars and "orography" in ds.data_vars:
        mask = ds["geopotential"] < ds["orography"]
        method = BY_OROGRAPHY
    else:
        return None, NOT_CHECKED
    mask = mask.drop_vars([c for c in mask.coords if c not in mask.dims and c != "level"])
    mask.attrs = {**_MASK_ATTRS, "method": method}
    mask.name = "below_ground"
    return mask, method


def mask_below_ground(fields, mask, method: str):
    """Set every level field of ``fields`` (Dataset) to NaN where ``mask`` is True.

    Adds the variable ``below_ground`` (the mask, broadcast to the horizontal grid) and
    the attribute ``below_ground_check`` (how it was decided); without a mask only the
    attribute (saying it could not be checked).  Surface fields stay as they are.
    """
    on_levels = [name for name in fields.data_vars if "level" in fields[name].coords
                 and name not in ("surface_pressure", "orography")]
    out = _masked(fields, on_levels, mask, method)
    if mask is not None:
        out["below_ground"] = mask
    return out


def mask_window_below_ground(parts, level):
    """Split parts (Dataset over a time window) NaN where the level lies below the ground at
    any analysis time of ``level`` (the canonical dataset at the split's level, window times).

    The mask becomes the coordinate ``below_ground`` (so loops over the parts see only the
    parts) and ``below_ground_check`` says how it was decided.
    """
    mask, method = below_ground(level)
    if mask is not None and "time" in mask.dims:
        mask = mask.any("time")
    out = _masked(parts, list(parts.data_vars), mask, method)
    if mask is None:
        return out
    return out.assign_coords(below_ground=mask.drop_vars([c for c in mask.coords if c not in mask.dims]))


def _masked(ds, names, mask, method: str):
    """A copy of ``ds`` with ``names`` NaN where ``mask`` (None: unchanged) and the attribute
    ``below_ground_check`` = ``method``."""
    out = ds.copy()
    out.attrs["below_ground_check"] = method
    if mask is None:
        return out
    for name in names:
        attrs = dict(out[name].attrs)
        out[name] = out[name].where(~mask)
        out[name].attrs = {**attrs, "below_ground": f"NaN where {BELOW_GROUND} ({method})"}
    return out


def point_reason(fields, lat: float, lon: float, grid=None) -> str | None:
    """:data:`BELOW_GROUND` (with the surface pressure when known) if any of the grid points
    used for the value at ``lat, lon`` lies below the ground, else None."""
    if "below_ground" not in fields:
        return None
    from parcelcast.sampling import corner_box

    if not bool(corner_box(fields["below_ground"], lat, lon, grid).any()):
        return None
    level = f"the {float(fields['level'].values) / 100.0:g} hPa level" if "level" in fields.coords \
        else "the level"
    text = f"{BELOW_GROUND}: {level} lies below the surface"
    if "surface_pressure" in fields.data_vars:
        from parcelcast.sampling import value_at
        from parcelcast.selection import member_mean

        ps = float(member_mean(value_at(fields["surface_pressure"], lat, lon, grid)).min()) / 100.0
        if np.isfinite(ps):
            text += f" (surface pressure {ps:.0f} hPa here)"
    return text


def start_below_ground(ds, lat, lon, pressure_pa: float, time=None):
    """Which of several start points (per analysis member) lie below the ground.

    Parameters
    ----------
    ds : xarray.Dataset
        Canonical analysis on a latitude-longitude grid.
    lat, lon : array_like (n,)
        Start points, degrees.
    pressure_pa : array_like (n,) or float
        Start pressures, Pa.
    time : numpy.datetime64, optional
        Start time (the analysis times around it are blended linearly); default: the
        first analysis time.

    Returns
    -------
    (ndarray of bool (n_members, n), ndarray (n_members, n), str)
        Below the ground?, the surface pressure there (Pa; NaN when decided from the
        orography or not checked) and how it was decided.
    """
    from parcelcast.sampling import value_at

    lat = np.atleast_1d(np.asarray(lat, dtype=np.float64))
    lon = np.atleast_1d(np.asarray(lon, dtype=np.float64))
    p = np.broadcast_to(np.asarray(pressure_pa, dtype=np.float64), lat.shape)
    n_members = ds.sizes.get("member", 1)
    nan = np.full((n_members, lat.size), np.nan)
    if "surface_pressure" in ds.data_vars:
        field, method = _at_time(ds["surface_pressure"], time), BY_SURFACE_PRESSURE
    elif "geopotential" in ds.data_vars and "orography" in ds.data_vars and "level" in ds.dims:
        field, method = _at_time(ds[["geopotential", "orography"]], time), BY_OROGRAPHY
    else:
        return np.zeros(nan.shape, dtype=bool), nan, NOT_CHECKED
    below = np.zeros(nan.shape, dtype=bool)
    surface = nan.copy()
    for k in range(lat.size):
        at = value_at(field, float(lat[k]), float(lon[k]))
        if method == BY_SURFACE_PRESSURE:
            ps = np.broadcast_to(np.asarray(at.values, dtype=np.float64), (n_members,))
            surface[:, k] = ps
            below[:, k] = p[k] > ps
        else:
            phi = at["geopotential"]
            if "member" not in phi.dims:
                phi = phi.expand_dims(member=1)
            levels = np.asarray(phi["level"].values, dtype=np.float64)
            phi = phi.transpose("member", "level").values
            ground = np.broadcast_to(np.asarray(at["orography"].values, dtype=np.float64), (n_members,))
            for m in range(n_members):  # geopotential at the start pressure, linear in ln p
                phi_p = np.interp(np.log(p[k]), np.log(levels[::-1]), phi[m, ::-1])
                below[m, k] = phi_p < ground[m]
    return below, surface, method


def _at_time(obj, time):
    """``obj`` linearly interpolated to ``time`` along its ``time`` dimension (if any)."""
    if "time" not in obj.dims:
        return obj
    times = obj["time"].values
    if time is None:
        return obj.isel(time=0)
    t = np.datetime64(time, "ns")
    k = int(np.clip(np.searchsorted(times, t, side="right") - 1, 0, max(times.size - 2, 0)))
    if times.size == 1 or t == times[k]:
        return obj.isel(time=k)
    w = float((t - times[k]) / (times[k + 1] - times[k]))
    return obj.isel(time=k) * (1.0 - w) + obj.isel(time=k + 1) * w
