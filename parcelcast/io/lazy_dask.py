"""Keep dask out of a run that does not chunk.

xarray asks "is this a dask array?" whenever it wraps or decodes lazily-read file data,
and to answer it imports dask (with dask.array, scipy.fft and more: about 0.3 s, a third
of the time Python takes to import the libraries a one-point question needs).  No object
can be a dask array before dask is imported, so the answer can wait: two of xarray's
look-ups (its cache of duck-array modules and ``is_dask_collection``) answer "no" until
dask is in ``sys.modules``, and ask dask from then on (opening with ``chunks=`` imports it).
Both are xarray internals: if they are not where we expect, xarray is left as it is.
"""

from __future__ import annotations

import sys


class _DaskWhenImported:
    """Stand-in for xarray's record of the dask module, looked up on each use."""

    _record = None

    def _real(self):
        if self._record is None and "dask.array" in sys.modules:
            from xarray.namedarray.pycompat import DuckArrayModule

            self._record = DuckArrayModule("dask")
        return self._record

    def __getattr__(self, name):
        real = self._real()
        if real is not None:
            return getattr(real, name)
        from packaging.version import Version

        return {"module": None, "version": Version("0.0.0"), "type": (), "available": False}[name]


def _when_dask_imported(ask_dask):
    """``is_dask_collection`` that is False while dask is not imported."""

    def is_dask_collection(x) -> bool:
        return "dask" in sys.modules and ask_dask(x)

    is_dask_collection.deferred = True
    return is_dask_collection


def defer_dask_import() -> None:
    """Install both look-ups unless xarray is laid out otherwise (then nothing changes)."""
    try:
        from xarray.namedarray import pycompat, utils
    except ImportError:  # another xarray layout: it imports dask as it always did
        return
    cache = getattr(pycompat, "_cached_duck_array_modules", None)
    if isinstance(cache, dict) and "dask" not in cache and "dask.array" not in sys.modules:
        cache["dask"] = _DaskWhenImported()
    ask_dask = getattr(utils, "is_dask_collection", None)
    if callable(ask_dask) and not getattr(ask_dask, "deferred", False):
        utils.is_dask_collection = _when_dask_imported(ask_dask)


def import_pint_without_dask() -> None:
    """Import pint so that it does not import dask (command line only).

    pint imports dask's core (0.1-0.3 s) whenever dask is installed, only to give quantities
    that wrap dask arrays their ``compute``/``persist`` methods.  The command line never
    makes such quantities (pint gives it conversion factors), so it imports pint while
    dask is hidden.  A library user's pint is left as it is: this runs only from
    ``parcelcast.cli.main``, before anything imported pint or dask.
    """
    if "pint" in sys.modules or "dask" in sys.modules:
        return
    sys.modules["dask"] = None  # importlib.util.find_spec("dask") is then None
    try:
        import pint  # noqa: F401
    finally:
        if sys.modules.get("dask", 0) is None:
            del sys.modules["dask"]
