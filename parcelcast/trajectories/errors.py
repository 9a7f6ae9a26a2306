"""Errors of the trajectory calculation (all are :class:`parcelcast.errors.ParcelcastError`)."""

from __future__ import annotations

from parcelcast.errors import EXIT_STATUS, GridError, ParcelcastError


class TrajectoryError(ParcelcastError):
    """A trajectory request cannot be carried out as asked."""

    exit_status = EXIT_STATUS["nothing_to_compute"]


class TrajectoryGridError(GridError, TrajectoryError):
    """The analysis grid is unsuitable for trajectories (order, span, levels)."""

    exit_status = EXIT_STATUS["unreadable_input"]


class StartPointError(TrajectoryError):
    """A start point lies outside the grid, the levels or the analysis times."""

    def __init__(self, what: str, requested, available: str):
        self.what = what
        self.requested = requested
        self.available = available
        super().__init__(f"start {what} {requested} is outside the analysis: available {available}.")


class MissingInputError(TrajectoryError):
    """A field the chosen mode needs is absent (e.g. omega for 3-D trajectories)."""

    exit_status = EXIT_STATUS["missing_quantity"]

    def __init__(self, mode: str, needed: str, found):
        self.mode = mode
        self.needed = needed
        self.found = sorted(found)
        super().__init__(
            f"{mode} trajectories need {needed}; the analysis has: {', '.join(self.found) or '(none)'}."
        )


class BelowGroundStartError(TrajectoryError):
    """The start point lies below the ground at the requested level: there is no air to follow."""

    def __init__(self, point: str, how: str):
        self.point = point
        self.how = how
        super().__init__(f"start {point} lies below the ground ({how}); choose a level above "
                         "the surface there (a lower pressure)")
