"""Drawing several figures at once, by processes that got ready while the data were read.

What belongs here: :class:`FigureWorkers`.  Entered before a command reads and computes,
it forks one *drawing host* process, which loads what drawing needs (:func:`preload`:
xarray, matplotlib on Agg, cartopy, the coastline shapes) and draws a tiny map to warm
matplotlib's first-use caches, on the other core while this process works.  When the
jobs come (:meth:`FigureWorkers.draw`: each a module-level function and its picklable
arguments, returning a small picklable result), the host forks one warm copy of itself per
core, which inherit the jobs, and sends the results back in order.  A first figure in a cold
process costs about as much as two more; this way no figure pays for it, and this
process never imports matplotlib.  Forking at the start, while this process is small and
runs no other threads, is also the safe moment to fork.

Where ``fork`` is not available (Windows; macOS prefers not to) or only one core is, the
jobs run one after the other here; the results are the same either way.
"""

from __future__ import annotations

import multiprocessing
import os
import sys

#: the jobs being drawn, inherited by the host's forked children (empty otherwise)
_JOBS: list = []


def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        return os.cpu_count() or 1


def preload(scales=("50m", "110m")) -> None:
    """Import what drawing needs (xarray for the jobs' data, matplotlib on Agg, cartopy,
    the drawing modules) and read the packaged coastlines and borders (cartopy caches the
    shapes per process)."""
    import cartopy.feature as cfeature
    import xarray  # noqa: F401  (the jobs' data arrive as xarray objects)

    from parcelcast.io.lazy_dask import defer_dask_import

    defer_dask_import()  # as in the command's own process: no dask unless the data are dask's
    import parcelcast.render.skewt  # noqa: F401
    import parcelcast.render.trajectory_maps  # noqa: F401
    from parcelcast.render.geography import use_packaged_shapes
    from parcelcast.render.maps import pyplot

    pyplot()
    use_packaged_shapes()
    for scale in scales:
        for feature in (cfeature.COASTLINE, cfeature.BORDERS):
            list(feature.with_scale(scale).geometries())


def warm_up() -> None:
    """Draw and encode a tiny map (geography, filled and line contours, text with a halo,
    a colour bar) and throw it away: fonts, renderer and projection caches are then ready."""
    import io

    import cartopy.crs as ccrs
    import numpy as np
    from matplotlib import patheffects
    from PIL import Image

    from parcelcast.render.maps import finish_map, new_map, pyplot

    area = [40.0, 60.0, -10.0, 20.0]
    fig, ax = new_map(area, figsize=(2.0, 2.0))
    lon, lat = np.meshgrid(np.linspace(-10.0, 20.0, 4), np.linspace(40.0, 60.0, 4))
    filled = ax.contourf(lon, lat, lat, transform=ccrs.PlateCarree())
    ax.clabel(ax.contour(lon, lat, lon, transform=ccrs.PlateCarree()), fontsize=7)
    ax.text(0.5, 0.5, "x", transform=ax.transAxes,
            path_effects=[patheffects.withStroke(linewidth=2, foreground="white")])
    finish_map(ax, area)
    fig.colorbar(filled, ax=ax)
    fig.canvas.draw()
    Image.fromarray(np.asarray(fig.canvas.buffer_rgba())).save(io.BytesIO(), format="png")
    pyplot().close(fig)


def _call(index: int):
    function, args = _JOBS[index]
    return function(*args)


def _draw_here(jobs, workers: int) -> list:
    """The jobs' results, drawn by up to ``workers`` forked copies of this process."""
    global _JOBS
    workers = min(workers, len(jobs))
    if workers < 2:
        return [function(*args) for function, args in jobs]
    from concurrent.futures import ProcessPoolExecutor

    _JOBS = jobs
    try:
        with ProcessPoolExecutor(workers, mp_context=multiprocessing.get_context("fork")) as pool:
            return list(pool.map(_call, range(len(jobs))))
    finally:
        _JOBS = []


def _host(connection, workers: int) -> None:
    """The drawing host: get ready, then draw each list of jobs received until told to stop
    (``None``) or until the other end closes."""
    preload()
    warm_up()
    while True:
        try:
            jobs = connection.recv()
        except EOFError:
            return
        if jobs is None:
            return
        try:
            connection.send(("ok", _draw_here(jobs, workers)))
        except BaseException as error:  # handed back to the caller, raised there
            connection.send(("error", error))


class FigureWorkers:
    """Processes for drawing, started on entering the ``with`` block (see the module).

    ``workers``: how many figures are drawn at once (default: the cores this process may
    use).  With fewer than two, or without ``fork``, nothing is started and :meth:`draw`
    draws here.
    """

    def __init__(self, workers: int | None = None):
        self.workers = workers or _cores()
        self._host = self._connection = None

    def __enter__(self) -> FigureWorkers:
        if self.workers >= 2 and sys.platform == "linux" and \
                "fork" in multiprocessing.get_all_start_methods():
            context = multiprocessing.get_context("fork")
            self._connection, theirs = context.Pipe()
            self._host = context.Process(target=_host, args=(theirs, self.workers),
                                         name="parcelcast-drawing")
            self._host.start()
            theirs.close()
        return self

    def __exit__(self, *exc) -> None:
        if self._host is None:
            return
        if exc[0] is not None:  # the command failed: nothing left to draw, no need to wait
            self._host.terminate()
        try:
            self._connection.send(None)
        except OSError:  # the host has gone already
            pass
        self._connection.close()
        self._host.join(timeout=10.0)
        if self._host.is_alive():
            self._host.terminate()
            self._host.join()
        self._host = self._connection = None

    def draw(self, jobs) -> list:
        """Results of ``function(*args)`` for each ``(function, args)`` in ``jobs``, in order;
        jobs are handed out in the order given (put the slowest first)."""
        jobs = list(jobs)
        if self._host is None:
            preload()
            return [function(*args) for function, args in jobs]
        self._connection.send(jobs)
        try:
            status, payload = self._connection.recv()
        except EOFError:
            from parcelcast.errors import ParcelcastError

            raise ParcelcastError("the drawing process ended without drawing the figures "
                                  f"(exit status {self._host.exitcode})") from None
        if status == "error":
            raise payload
        return payload
