"""The level a climate run asks for: a pressure level (hPa) or ``"surface"``.

All near-surface handling of the climate run is here.  ``"surface"`` means the 2-m
temperature carried by the 10-m wind.  Until the readers and ``parcelcast.selection``
select the near-surface level themselves, :func:`level_view` presents the near-surface
fields to the Eulerian split as a one-level dataset (``temperature`` from
``near_surface_temperature``, ``u``/``v`` from the near-surface wind when the input has
one) at a nominal level :data:`NOMINAL_SURFACE_HPA`, which never reaches the output
(the output says ``level: "surface"``, ``level_hPa: null``).
"""

from __future__ import annotations

from dataclasses import dataclass

from parcelcast.errors import ParcelcastError

SURFACE = "surface"
#: nominal pressure (hPa) under which the one-level near-surface view is filed; internal only
NOMINAL_SURFACE_HPA = 1013.25
#: surface fields that tell where a pressure level lies below the ground (parcelcast.ground)
GROUND = ("surface_pressure", "orography")
#: roles of the 10-m wind (named by the readers' near-surface level)
NEAR_SURFACE_WIND = ("near_surface_u", "near_surface_v")


@dataclass(frozen=True)
class LevelView:
    """What the split is run on: the dataset, the level (hPa) to pass, and why a part is
    missing for every window (``{"advective_K": "reason"}``), if so."""

    ds: object
    level_hpa: float
    missing: dict


def parse_level(text) -> float | str:
    """``"surface"`` or a pressure in hPa (for argparse and the library alike)."""
    if isinstance(text, str) and text.strip().lower() == SURFACE:
        return SURFACE
    try:
        value = float(text)
    except (TypeError, ValueError):
        raise ParcelcastError(f"level must be a pressure in hPa or 'surface'; got {text!r}") from None
    if not 0.0 < value <= 1100.0:
        raise ParcelcastError(f"level {value:g} hPa is outside 0..1100 hPa")
    return value


def roles_needed(level, wind: str) -> list[str]:
    """The roles to open for the split at ``level`` with ``wind`` (those the readers know)."""
    from parcelcast.io.roles import ROLES

    if level == SURFACE:
        return [r for r in ("near_surface_temperature", *NEAR_SURFACE_WIND) if r in ROLES]
    return (["temperature", "omega", *GROUND]
            + (["u", "v"] if wind == "actual" else ["geopotential"]))


def level_view(ds, level, wind: str) -> LevelView:
    """The dataset and level for the split, and which parts cannot be had at all."""
    if level != SURFACE:
        from parcelcast.io.analysis import require

        require(ds, "temperature", purpose=f"the split at {level:g} hPa")
        missing = {}
        needed = ("u", "v") if wind == "actual" else ("geopotential",)
        absent = [r for r in needed if r not in ds.data_vars]
        if absent:
            missing["advective_K"] = (f"no {' or '.join(absent)} in the input (needed for the "
                                      f"{wind} wind)")
        if "omega" not in ds.data_vars:
            missing["vertical_K"] = "no omega in the input"
        return LevelView(ds[[n for n in ds.data_vars if n in
                             ("temperature", "omega", *needed, *GROUND)]], float(level), missing)
    return _surface_view(ds, wind)


def _surface_view(ds, wind: str) -> LevelView:
    if wind != "actual":
        raise ParcelcastError("--level surface takes the actual 10-m wind; the geostrophic wind "
                              "needs geopotential on pressure levels")
    from parcelcast.io.analysis import require

    require(ds, "near_surface_temperature", purpose="the split at the surface (2-m temperature)")
    renamed = {"near_surface_temperature": "temperature"}
    missing = {"vertical_K": "not defined at the surface (no omega at 2 m)"}
    if all(r in ds.data_vars for r in NEAR_SURFACE_WIND):
        renamed.update(dict(zip(NEAR_SURFACE_WIND, ("u", "v"))))
    else:
        missing["advective_K"] = "no near-surface (10-m) wind in the input"
    view = ds[list(renamed)].rename(renamed).expand_dims(level=[NOMINAL_SURFACE_HPA * 100.0], axis=-3)
    view.attrs = dict(ds.attrs)
    return LevelView(view, NOMINAL_SURFACE_HPA, missing)
