"""Why values are missing: counts of missing grid points by reason.

Missing values are never filled; outputs count them and say why.  Each missing grid
point is counted once, under the first reason (in the order given) that holds there;
a point missing for none of them is counted under :data:`OTHER`.
"""

from __future__ import annotations

POLE_ROWS = "pole rows (eastward derivative undefined)"
EQUATORIAL_BAND = "equatorial band of the geostrophic wind"
MISSING_IN_FILE = "missing in the file"
OTHER = "next to a missing point (the derivative needs its neighbours)"


def missing_by_reason(result, causes, horizontal_dims, other: str = OTHER) -> dict[str, int]:
    """Missing horizontal grid points of ``result``, counted by reason.

    Parameters
    ----------
    result : xarray.DataArray (..., y, x)
        A grid point counts as missing when it is NaN at any leading index (member, time).
    causes : sequence of (str, xarray.DataArray of bool)
        Reasons in order of precedence, each with where it holds (broadcastable to
        ``result``; True at any leading index counts).
    horizontal_dims : tuple of str
        The two horizontal dimensions (``grid.dims``).
    other : str
        The reason given to missing points that none of ``causes`` explains.

    Returns
    -------
    dict
        ``{reason: count}`` for reasons with a count above zero, in the order given
        (``other`` last); the counts add up to the number of missing grid points.
    """
    def anywhere(da):
        return da.any([d for d in da.dims if d not in horizontal_dims])

    missing = anywhere(result.isnull())
    left = missing
    counts: dict[str, int] = {}
    for reason, where in causes:
        hit = left & anywhere(where)
        n = int(hit.sum())
        if n:
            counts[reason] = counts.get(reason, 0) + n
        left = left & ~hit
    if int(left.sum()):
        counts[other] = int(left.sum())
    return counts


def reasons_text(counts: dict[str, int]) -> str:
    """``"12 below the ground, 288 pole rows (...)"`` for one line of text (``"none"`` if empty)."""
    return ", ".join(f"{n} {reason}" for reason, n in counts.items()) or "none"
