"""Where the tasks run: this machine's threads, or a dask.distributed cluster.

``address`` None runs the tasks on local threads (dask's threaded scheduler).  An
address (``tcp://host:8786``) connects a :class:`distributed.Client` to a running
cluster's scheduler; the workers need the same parcelcast version as the caller and
read access to the analysis files under the same paths.
"""

from __future__ import annotations

import contextlib

from parcelcast.errors import ParcelcastError


#: seconds to wait for the scheduler to answer
CONNECT_TIMEOUT_S = 10.0


@contextlib.contextmanager
def tasks_run_on(address: str | None):
    """Context in which ``dask.compute`` runs on ``address`` (or locally); yields the
    number of worker threads."""
    if address is None:
        import os

        import dask

        with dask.config.set(scheduler="threads"):
            yield os.cpu_count() or 1
        return
    try:
        from distributed import Client
    except ImportError as exc:  # pragma: no cover - distributed is a dependency
        raise ParcelcastError("--scheduler needs the 'distributed' package") from exc
    try:
        client = Client(address, timeout=CONNECT_TIMEOUT_S, set_as_default=True)
    except (OSError, TimeoutError) as exc:
        raise ParcelcastError(f"could not reach the dask scheduler at {address}: {exc}") from None
    try:
        threads = sum(client.nthreads().values()) or 1
        yield threads
    finally:
        client.close()
