"""Progress of long steps and notes to the user, both on stderr.

Progress bars (rich) appear only when stderr is a terminal and notes are not silenced;
in a pipe, a log file or a cron job nothing is drawn.  Notes go through the standard
logging module (logger ``parcelcast``): the command line shows them unless ``--quiet``
(see ``parcelcast/cli/__init__.py``); a library user configures logging as usual.
"""

from __future__ import annotations

import contextlib
import logging
import sys

LOGGER = logging.getLogger("parcelcast")


def note(message: str) -> None:
    """Tell the user something worth knowing that is not an error (silenced by ``--quiet``)."""
    LOGGER.info(message)


def shown() -> bool:
    """True if progress is drawn: stderr is a terminal and notes are not silenced."""
    stream = sys.stderr
    return bool(getattr(stream, "isatty", lambda: False)()) and LOGGER.isEnabledFor(logging.INFO)


@contextlib.contextmanager
def progress(description: str, total: int | None = None):
    """A progress bar for a step of ``total`` parts (None: unknown, a spinner).

    Yields ``advance(n=1)`` to call as parts finish; a no-op when nothing is shown.

    Example
    -------
    >>> with progress("opening files", total=2) as advance:
    ...     for _ in range(2):
    ...         advance()
    """
    if not shown():
        yield lambda n=1: None
        return
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, SpinnerColumn, TextColumn

    columns = [SpinnerColumn(), TextColumn("{task.description}")]
    if total is not None:
        columns += [BarColumn(), MofNCompleteColumn()]
    with Progress(*columns, console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task(description, total=total)
        yield lambda n=1: bar.advance(task, n)
