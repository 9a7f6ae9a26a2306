"""Errors and warnings of parcelcast.

Every error a user can meet derives from :class:`ParcelcastError` and carries
the facts needed to act on it (which file, which variable, what was expected,
what was found) as attributes as well as in its message.  The command line
turns any ``ParcelcastError`` into a one-paragraph message and the exit status
of its class (:data:`EXIT_STATUS`, also listed in the README); a traceback is
printed only with ``--debug``.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterable


#: exit status of the command line for each class of outcome (README "Exit statuses")
EXIT_STATUS = {
    "ok": 0,
    "internal": 1,         # a fault in parcelcast itself (please report it; --debug shows where)
    "usage": 2,            # options missing, malformed, contradictory or out of range
    "unreadable_input": 3,  # a file missing, damaged, of unknown format, with wrong units or values
    "missing_quantity": 4,  # a quantity the calculation needs is not in the input
    "nothing_to_compute": 5,  # the level, time, window or point asked for is not in the data
    "cannot_write": 6,     # an output cannot be written (folder missing or read-only, would overwrite input)
}


class ParcelcastError(Exception):
    """Base class for errors a user can act on (exit status: unreadable input)."""

    exit_status = EXIT_STATUS["unreadable_input"]


class UsageError(ParcelcastError):
    """Options that cannot work together or lie outside their range (found after parsing)."""

    exit_status = EXIT_STATUS["usage"]


class OutputError(ParcelcastError):
    """An output cannot be written: its folder is missing or read-only, it is a folder, or it
    would replace one of the inputs."""

    exit_status = EXIT_STATUS["cannot_write"]

    def __init__(self, path, reason: str):
        self.path = str(path)
        self.reason = reason
        super().__init__(f"cannot write {self.path}: {reason}")


class InputFileError(ParcelcastError):
    """A file cannot be opened or decoded (missing, damaged, unknown format)."""

    def __init__(self, path, reason: str):
        self.path = str(path)
        self.reason = reason
        super().__init__(f"{self.path}: {reason}")


class VariableNotFoundError(ParcelcastError):
    """A quantity the calculation needs is not in the input."""

    exit_status = EXIT_STATUS["missing_quantity"]

    def __init__(self, role: str, source: str, found: Iterable[str], hint: str = ""):
        self.role = role
        self.source = source
        self.found = sorted(found)
        roles = [r.strip() for r in role.split(",")]
        if len(roles) == 1:
            wanted, how = f"'{role}'", f"Name it with --var {role}=NAME"
        else:  # none of several roles: say which, and how to name any one of them
            wanted = "any of " + ", ".join(f"'{r}'" for r in roles)
            how = f"Name them with --var ROLE=NAME (for example --var {roles[0]}=NAME)"
        msg = (
            f"{source}: no variable for {wanted} was found. Variables present: "
            f"{', '.join(self.found) or '(none)'}. {how}"
        )
        if hint:
            msg += f" ({hint})"
        super().__init__(msg + ".")


class UnitsError(ParcelcastError):
    """Units are missing, unknown, or impossible for the quantity."""

    def __init__(self, quantity: str, found: str | None, expected: str, source: str = ""):
        self.quantity = quantity
        self.found = found
        self.expected = expected
        self.source = source
        where = f"{source}: " if source else ""
        if found is None or found == "":
            what = "has no units"
        else:
            what = f"has units '{found}'"
        super().__init__(
            f"{where}{quantity} {what}; expected units of {expected}. "
            "State the units (for example add a CF 'units' attribute)."
        )


class ImplausibleValuesError(ParcelcastError):
    """Values are impossible for the stated units (e.g. degC data labelled K)."""

    def __init__(self, quantity: str, source: str, detail: str):
        self.quantity = quantity
        self.source = source
        super().__init__(f"{source}: {quantity} values are implausible: {detail}")


class MissingCoordinateError(ParcelcastError):
    """A coordinate the calculation needs (e.g. valid time) is not in the input."""

    exit_status = EXIT_STATUS["missing_quantity"]

    def __init__(self, coordinate: str, source: str, dims, why: str):
        self.coordinate = coordinate
        self.source = source
        self.dims = list(dims)
        super().__init__(f"{source}: has no {coordinate} coordinate (its dimensions: "
                         f"{', '.join(self.dims) or '(none)'}); {why}.")


class SelectionError(ParcelcastError):
    """A requested level, time, member or point is not available."""

    exit_status = EXIT_STATUS["nothing_to_compute"]

    def __init__(self, what: str, requested, available: str, source: str = ""):
        self.what = what
        self.requested = requested
        self.available = available
        where = f"{source}: " if source else ""
        super().__init__(f"{where}{what} {requested} is not available; available: {available}.")


class IncompleteInputError(ParcelcastError):
    """Input opened only in part (a damaged GRIB file, a NetCDF file cut short): unreadable input."""


class GridError(ParcelcastError):
    """The grid cannot be understood or is unsuitable for the operation."""


class ProfileError(ParcelcastError):
    """A vertical profile is invalid (with the offending row where known)."""


class ParcelcastWarning(UserWarning):
    """Warnings from parcelcast (turned into errors in the project's own tests)."""


def warn(message: str, stacklevel: int = 2) -> None:
    """Emit a :class:`ParcelcastWarning` pointing at the caller's line."""
    warnings.warn(message, ParcelcastWarning, stacklevel=stacklevel + 1)
