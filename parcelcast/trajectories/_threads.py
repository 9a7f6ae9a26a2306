"""Share independent parcels among threads for a compiled kernel that releases the GIL.

``share_parcels(n, work)`` calls ``work(lo, hi)`` on contiguous ranges that cover
``0..n`` once: the calling thread takes the first range, a small process-wide pool of
worker threads the others.  The number of threads is numba's
(:func:`numba.get_num_threads`: ``NUMBA_NUM_THREADS``, or :func:`numba.set_num_threads`
in the calling thread), so one setting governs every parcelcast kernel; fewer are used
when there are too few parcels to be worth a thread.

Plain threads rather than numba's ``prange``: waiting threads sleep instead of spinning,
which matters on a shared, busy machine (there numba's OpenMP layer made a 2-thread run
several times slower than one thread), and the kernel stays callable from any thread
(e.g. dask workers).
"""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor

#: below this many parcels per thread, the hand-over costs more than it saves
MIN_PARCELS_PER_THREAD = 500

_pool: ThreadPoolExecutor | None = None


def thread_count(n: int) -> int:
    """Threads to use for ``n`` parcels (1 .. numba's thread count)."""
    import numba

    return max(1, min(numba.get_num_threads(), n // MIN_PARCELS_PER_THREAD))


def share_parcels(n: int, work) -> None:
    """Run ``work(lo, hi)`` over ``0..n`` in contiguous ranges, one per thread; wait for all."""
    global _pool
    threads = thread_count(n)
    if threads == 1:
        work(0, n)
        return
    if _pool is None or _pool._max_workers < threads - 1:
        _pool = ThreadPoolExecutor(max_workers=threads - 1, thread_name_prefix="parcelcast")
    bounds = [n * k // threads for k in range(threads + 1)]
    futures = [_pool.submit(work, lo, hi) for lo, hi in zip(bounds[1:-1], bounds[2:])]
    work(bounds[0], bounds[1])
    for future in futures:
        future.result()
