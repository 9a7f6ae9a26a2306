"""Distances on the sphere (the grid's geometry, shared by sampling and trajectories).

Cell-area weights belong to each grid class (``area_weights`` in ``latlon.py`` and
``projected.py``).  ``parcelcast.trajectories.sphere`` re-exports
:func:`great_circle_distance` so that older imports keep working.
"""

from __future__ import annotations

import numpy as np

from parcelcast.constants import EARTH_RADIUS


def great_circle_distance(lat1, lon1, lat2, lon2, radius: float = EARTH_RADIUS) -> np.ndarray:
    """Great-circle distance (m) between points in degrees, by the haversine formula.

    Accurate for small and large separations except near antipodes (Sinnott 1984).

    References
    ----------
    Sinnott, R. W. (1984). Virtues of the haversine. Sky and Telescope 68(2), 159.
    """
    p1, p2 = np.deg2rad(lat1), np.deg2rad(lat2)
    dl = np.deg2rad(np.asarray(lon2, dtype=np.float64) - lon1)
    h = np.sin((p2 - p1) / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    return 2.0 * radius * np.arcsin(np.sqrt(np.clip(h, 0.0, 1.0)))

