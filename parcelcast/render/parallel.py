"""Drawing several figures at once in forked worker processes (two cores: about half the time).

What belongs here: :func:`draw_in_parallel`, which runs independent drawing jobs (a plain
function and its arguments, each returning a small picklable result) in worker processes
started by ``fork`` *after* matplotlib, cartopy and the coastline shapes are loaded once in
this process (:func:`preload`), so no worker pays those imports again and nothing large is
pickled: the workers inherit the jobs.  Where ``fork`` is not available (Windows; macOS
prefers not to) or only one core is, the jobs run one after the other here; the results
are the same either way, in the order of the jobs.
"""

from __future__ import annotations

import multiprocessing
import os
import sys

#: the jobs of the running call, inherited by the forked workers (empty otherwise)
_JOBS: list = []


def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        return os.cpu_count() or 1


def preload(scales=("50m", "110m")) -> None:
    """Import matplotlib (Agg) and cartopy and read the packaged coastlines and borders
    (cartopy caches the shapes per process), so forked workers start with them."""
    import cartopy.feature as cfeature

    from parcelcast.render.geography import use_packaged_shapes
    from parcelcast.render.maps import pyplot

    pyplot()
    use_packaged_shapes()
    for scale in scales:
        for feature in (cfeature.COASTLINE, cfeature.BORDERS):
            list(feature.with_scale(scale).geometries())


def _run(index: int):
    function, args = _JOBS[index]
    return function(*args)


def draw_in_parallel(jobs, workers: int | None = None) -> list:
    """Results of ``function(*args)`` for each ``(function, args)`` in ``jobs``, in order.

    Jobs are handed out longest-first as given (put the slowest first); ``workers``
    defaults to the cores this process may use (at most one per job).
    """
    jobs = list(jobs)
    workers = min(len(jobs), workers or _cores())
    if workers < 2 or sys.platform != "linux" or "fork" not in multiprocessing.get_all_start_methods():
        return [function(*args) for function, args in jobs]
    from concurrent.futures import ProcessPoolExecutor

    global _JOBS
    _JOBS = jobs
    try:
        with ProcessPoolExecutor(workers, mp_context=multiprocessing.get_context("fork")) as pool:
            return list(pool.map(_run, range(len(jobs))))
    finally:
        _JOBS = []
