"""Air-parcel trajectories: isobaric, 3-D (omega) and isentropic; back and forward.

Layers (one job per module):

* :mod:`~parcelcast.trajectories.sphere` - positions as unit vectors, distances;
* :mod:`~parcelcast.trajectories.interpolate` - grid geometry and interpolation;
* :mod:`~parcelcast.trajectories.schemes` - Petterssen and Runge-Kutta steps;
* :mod:`~parcelcast.trajectories.integrate` - the driver (time step, statuses, recording);
* :mod:`~parcelcast.trajectories.fields` - canonical dataset -> kernel input;
* :mod:`~parcelcast.trajectories.ensemble` - clouds of starts and spread;
* :mod:`~parcelcast.trajectories.api` - :func:`compute_trajectories` (CF DSG dataset);
* :mod:`~parcelcast.trajectories.output` - NetCDF, CSV, GeoJSON and JSON writers;
* :mod:`~parcelcast.trajectories.analytic` - analytic flows for tests.

See ``design_notes/trajectories.md``.
"""

from __future__ import annotations

import importlib

__all__ = [
    # labelled entry point
    "compute_trajectories",
    # kernel
    "integrate",
    "FieldSource",
    "GridGeometry",
    "STATUS_NAMES",
    # ensembles
    "cloud_starts",
    "spread",
    # output
    "write_trajectories",
    "to_json_dict",
    # errors
    "TrajectoryError",
    "StartPointError",
]

_WHERE = {
    "compute_trajectories": "parcelcast.trajectories.api",
    "integrate": "parcelcast.trajectories.integrate",
    "FieldSource": "parcelcast.trajectories.integrate",
    "GridGeometry": "parcelcast.trajectories.interpolate",
    "STATUS_NAMES": "parcelcast.trajectories.interpolate",
    "cloud_starts": "parcelcast.trajectories.ensemble",
    "spread": "parcelcast.trajectories.ensemble",
    "write_trajectories": "parcelcast.trajectories.output",
    "to_json_dict": "parcelcast.trajectories.output",
    "TrajectoryError": "parcelcast.trajectories.errors",
    "StartPointError": "parcelcast.trajectories.errors",
}


def __getattr__(name):
    if name in _WHERE:
        return getattr(importlib.import_module(_WHERE[name]), name)
    raise AttributeError(f"module 'parcelcast.trajectories' has no attribute {name!r}")
