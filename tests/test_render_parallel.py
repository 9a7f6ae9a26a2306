"""Figures drawn by the drawing processes come back in order, the same as drawn here;
a failure in a drawing job is raised in the caller.  (Plain arithmetic stands in for the
drawing: the machinery is what is tested; the real figures are tested in test_brief.py.)"""

from __future__ import annotations

import os
import sys

import pytest

from parcelcast.errors import ParcelcastError
from parcelcast.render.parallel import FigureWorkers


def _square_and_pid(x):
    return x * x, os.getpid()


def _fails(message):
    raise ParcelcastError(message)


def test_results_come_back_in_order_from_other_processes():
    jobs = [(_square_and_pid, (x,)) for x in range(5)]
    with FigureWorkers(workers=2) as workers:
        drawn = workers.draw(jobs)
        again = workers.draw(jobs[:2])  # the host serves more than one round
    with FigureWorkers(workers=1) as here:
        serial = here.draw(jobs)
    assert [value for value, _ in drawn] == [value for value, _ in serial] == [0, 1, 4, 9, 16]
    assert [value for value, _ in again] == [0, 1]
    if sys.platform == "linux":  # where the drawing processes are forked
        assert all(pid != os.getpid() for _, pid in drawn)
    assert all(pid == os.getpid() for _, pid in serial)


def test_a_failing_job_is_raised_here():
    with FigureWorkers(workers=2) as workers:
        with pytest.raises(ParcelcastError, match="no such level"):
            workers.draw([(_square_and_pid, (2,)), (_fails, ("no such level",))])


def test_leaving_without_drawing_ends_the_host():
    with FigureWorkers(workers=2) as workers:
        host = workers._host
    if host is not None:
        assert not host.is_alive() and host.exitcode == 0


def test_a_failing_command_stops_the_host_at_once():
    with pytest.raises(ParcelcastError):
        with FigureWorkers(workers=2) as workers:
            host = workers._host
            raise ParcelcastError("no temperature in the file")
    if host is not None:
        assert not host.is_alive()
