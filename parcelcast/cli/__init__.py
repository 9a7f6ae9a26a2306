"""The ``parcelcast`` command line: a thin dispatcher over the library.

Each command lives in its own module of this package, which provides
``add_arguments(parser)`` and ``run(args) -> int``.  Modules are imported only
when their command is used, so ``parcelcast --help`` stays fast (no xarray,
matplotlib, cartopy or dask at start-up).
"""

from __future__ import annotations

import argparse
import importlib
import logging
import os
import sys

#: command name -> (module, one-line help)
COMMANDS: dict[str, tuple[str, str]] = {
    "brief": ("parcelcast.cli.brief", "the morning briefing from a config file (HTML, Markdown, JSON)"),
    "advect": ("parcelcast.cli.advect", "horizontal advection (-V.grad T) on a level, map or point"),
    "track": ("parcelcast.cli.track", "back or forward air-parcel trajectories"),
    "profile": ("parcelcast.cli.profile", "analyse a vertical profile (CSV or analysis column)"),
    "split": ("parcelcast.cli.split", "split a local temperature change into advective and other parts"),
    "climate": ("parcelcast.cli.climate", "the split at a station for every window of a long record, by month"),
    "review": ("parcelcast.cli.review", "build a case review from a case TOML file"),
    "demo": ("parcelcast.cli.demo", "build the invented demo scenario and run the main job on it"),
    "prepare": ("parcelcast.cli.prepare", "compile the numba kernels once into the cache folder"),
}

DISCLAIMER = (
    "parcelcast output is guidance for trained forecasters, not an official forecast or "
    "warning; defer to your national weather service and licensed practice."
)


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """Build the parser; only ``command``'s module is imported (if given)."""
    parser = argparse.ArgumentParser(
        prog="parcelcast",
        description="Why the air over a station is warming or cooling: advection, "
        "trajectories, profiles and the local-trend split.",
        epilog=DISCLAIMER,
    )
    _add_global_options(parser, False)
    from parcelcast import __version__

    parser.add_argument("--version", action="version", version=f"parcelcast {__version__}")
    parser.add_argument("--debug", action="store_true",
                        help="on an error, print the Python traceback as well (anywhere on the line)")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, (module, help_text) in COMMANDS.items():
        p = sub.add_parser(name, help=help_text, description=help_text, epilog=DISCLAIMER)
        _add_global_options(p, argparse.SUPPRESS)  # also accepted after the command
        if name == command:
            importlib.import_module(module).add_arguments(p)
    return parser


def _add_global_options(parser: argparse.ArgumentParser, default) -> None:
    """``--quiet`` and ``--verbose``: how much is said on stderr besides results and errors."""
    talk = parser.add_mutually_exclusive_group()
    talk.add_argument("--quiet", "-q", action="store_true", default=default,
                      help="no notes and no progress on stderr (errors and warnings still)")
    talk.add_argument("--verbose", "-v", action="store_true", default=default,
                      help="also say what is being done, step by step (debug messages)")


class _StderrHandler(logging.StreamHandler):
    """Writes to whatever ``sys.stderr`` is at the time of each message."""

    @property
    def stream(self):
        return sys.stderr

    @stream.setter
    def stream(self, value):  # set by StreamHandler.__init__; sys.stderr is looked up instead
        pass


class _Formatter(logging.Formatter):
    """``parcelcast: note: ...`` for information, ``warning``/``error``/``debug`` otherwise."""

    def format(self, record: logging.LogRecord) -> str:
        record.kind = "note" if record.levelno == logging.INFO else record.levelname.lower()
        return super().format(record)


def configure_logging(quiet: bool = False, verbose: bool = False) -> None:
    """Notes and warnings of parcelcast's own logger to stderr; other libraries' loggers are
    left as they are (Python shows their warnings, as always)."""
    logger = logging.getLogger("parcelcast")
    logger.setLevel(logging.WARNING if quiet else logging.DEBUG if verbose else logging.INFO)
    if not any(getattr(h, "parcelcast_cli", False) for h in logger.handlers):
        handler = _StderrHandler()
        handler.setFormatter(_Formatter("parcelcast: %(kind)s: %(message)s"))
        handler.parcelcast_cli = True
        logger.addHandler(handler)
        logger.propagate = False  # shown once, by our handler


def console() -> None:
    """The ``parcelcast`` command: :func:`main`, then the process ends at once.

    When :func:`main` returns, every output is written whole and closed and the drawing
    processes have been joined; the at-exit handlers still run (logging is flushed).  What
    is skipped is the interpreter freeing each object of every imported module, which a
    finished command does not need and which costs 0.1-0.3 s (a tenth to a third of a
    one-point question).
    """
    import atexit

    status = main()
    atexit._run_exitfuncs()  # the handlers an ordinary exit runs, before os._exit skips the rest
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except OSError:  # a reader that went away (``parcelcast ... | head``): nothing to tell it
            pass
    os._exit(status)


def main(argv: list[str] | None = None) -> int:
    """The command line (``argv`` without the program name); returns the exit status."""
    from parcelcast.cli._common import attach_negative_values

    argv = attach_negative_values(list(sys.argv[1:] if argv is None else argv))
    command = next((a for a in argv if not a.startswith("-")), None)
    if command not in COMMANDS:
        command = None
    debug = "--debug" in argv  # accepted anywhere on the line
    argv = [a for a in argv if a != "--debug"]
    args = build_parser(command).parse_args(argv)
    if args.command is None:
        build_parser().print_help()
        return 2  # usage
    configure_logging(args.quiet, args.verbose)
    from parcelcast.cache import configure_numba_cache
    from parcelcast.cli._common import run_command
    from parcelcast.io.lazy_dask import import_pint_without_dask

    configure_numba_cache()  # before any kernel module imports numba
    import_pint_without_dask()  # dask only for commands that chunk

    module = importlib.import_module(COMMANDS[args.command][0])
    return run_command(module.run, args, debug)


if __name__ == "__main__":  # pragma: no cover
    console()
