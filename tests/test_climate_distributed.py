"""``scheduler=ADDRESS``: the same climate run on a dask.distributed cluster gives results
identical to the local run (a LocalCluster on the loopback address, one in-process worker)."""

from __future__ import annotations

import pytest

from climate_records import wave_record

import distributed  # noqa: E402


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                                  protocol="tcp", host="127.0.0.1", dashboard_address=None) as local:
        yield local


def test_station_windows_identical_on_the_cluster(cluster, tmp_path):
    from parcelcast.climate import climate_split

    path = tmp_path / "wave.nc"
    wave_record(days=6, omega_pa_s=0.2).to_netcdf(path)
    local = list(climate_split(path, 50.0, 10.0, 850.0, 12, time_chunk=4))
    remote = list(climate_split(path, 50.0, 10.0, 850.0, 12, time_chunk=4,
                                scheduler=cluster.scheduler_address))
    assert len(remote) == len(local) == 12
    assert remote == local  # same floats, bit for bit, and the same reasons


def test_split_maps_identical_on_the_cluster(cluster, tmp_path):
    import numpy as np

    from parcelcast.climate import climate_maps

    path = tmp_path / "wave.nc"
    wave_record(days=2, omega_pa_s=0.2).to_netcdf(path)
    local = list(climate_maps(path, 850.0, 24))
    remote = list(climate_maps(path, 850.0, 24, scheduler=cluster.scheduler_address))
    assert len(remote) == len(local) == 2
    for a, b in zip(local, remote):
        for name in a.data_vars:
            np.testing.assert_array_equal(a[name].values, b[name].values)


def test_an_unreachable_scheduler_is_a_clear_error(tmp_path, monkeypatch):
    from parcelcast.climate import climate_split, scheduler

    monkeypatch.setattr(scheduler, "CONNECT_TIMEOUT_S", 1.0)
    from parcelcast.errors import ParcelcastError

    path = tmp_path / "wave.nc"
    wave_record(days=1).to_netcdf(path)
    with pytest.raises(ParcelcastError, match="could not reach the dask scheduler at tcp://127.0.0.1:9"):
        list(climate_split(path, 50.0, 10.0, 850.0, 12, scheduler="tcp://127.0.0.1:9"))


def test_command_line_scheduler_option(cluster, tmp_path, capsys):
    import json

    from parcelcast.cli import main

    path = tmp_path / "wave.nc"
    wave_record(days=3, omega_pa_s=0.2).to_netcdf(path)
    args = ["climate", str(path), "--at", "50,10", "--level", "850", "--window", "24", "--json"]
    outputs = []
    for extra in ([], ["--scheduler", cluster.scheduler_address]):
        assert main(args + extra) == 0
        outputs.append(json.loads(capsys.readouterr().out))
    assert outputs[0] == outputs[1] and len(outputs[0]["windows"]) == 3
