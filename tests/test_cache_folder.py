"""The cache folder: XDG location, private (0700), refused when others can write it, bounded.

cfgrib reads its index files with pickle (so does numba its cache index): a file planted
in a folder others can write would run code, so such a folder or file is refused.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from datasets import cli_command, data_file
from parcelcast import cache
from parcelcast.cache import UnsafeCacheError


@pytest.fixture
def xdg(tmp_path, monkeypatch) -> Path:
    monkeypatch.delenv("PARCELCAST_CACHE", raising=False)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    return tmp_path / "xdg"


def test_cache_follows_xdg_cache_home_and_is_private(xdg):
    """XDG Base Directory Specification: user cache files under $XDG_CACHE_HOME."""
    root = cache.cache_root()
    assert root == xdg / "parcelcast"
    assert (root.stat().st_mode & 0o777) == 0o700
    assert (cache.cache_folder("grib-index").stat().st_mode & 0o777) == 0o700


def test_parcelcast_cache_overrides(tmp_path, monkeypatch):
    monkeypatch.setenv("PARCELCAST_CACHE", str(tmp_path / "mine"))
    assert cache.cache_folder("grib-index") == tmp_path / "mine" / "grib-index"


def test_own_folder_opened_to_others_for_reading_is_made_private(xdg):
    root = xdg / "parcelcast"
    root.mkdir(parents=True, mode=0o755)
    root.chmod(0o755)
    cache.cache_root()
    assert (root.stat().st_mode & 0o777) == 0o700


@pytest.mark.parametrize("mode", [0o777, 0o775, 0o757], ids=["all", "group", "others"])
def test_folder_others_can_write_is_refused(xdg, mode):
    root = xdg / "parcelcast"
    root.mkdir(parents=True)
    root.chmod(mode)
    with pytest.raises(UnsafeCacheError, match="can be written by others"):
        cache.cache_root()


@pytest.mark.realdata
def test_planted_index_file_others_can_write_is_refused_before_cfgrib_reads_it(xdg, tmp_path):
    """A pickled 'index' that would run code if unpickled; open_analysis must refuse it."""
    import pickle

    from parcelcast.io.analysis import open_analysis
    from parcelcast.io.grib import _file_key

    path = data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1")
    marker = tmp_path / "code-ran"

    class Payload:
        def __reduce__(self):
            return (Path.touch, (marker,))

    planted = cache.cache_folder("grib-index") / f"{_file_key(path)}.5b7b6.idx"
    planted.write_bytes(pickle.dumps(Payload()))
    planted.chmod(0o666)
    with pytest.raises(UnsafeCacheError, match="can be written by others"):
        open_analysis(path, roles=("temperature", "geopotential"))
    assert not marker.exists()


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() != 0,
                    reason="giving a folder to another user needs root")
def test_folder_of_another_user_is_refused(xdg):
    root = xdg / "parcelcast"
    root.mkdir(parents=True, mode=0o700)
    os.chown(root, 12345, 12345)
    with pytest.raises(UnsafeCacheError, match="belongs to another user"):
        cache.cache_root()


@pytest.mark.realdata
def test_index_and_scan_files_are_private_whatever_the_umask(xdg):
    from parcelcast.io.analysis import open_analysis

    old = os.umask(0o000)
    try:
        open_analysis(data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"),
                      roles=("temperature", "geopotential"))
    finally:
        os.umask(old)
    written = [p for name in ("grib-index", "grib-scan") for p in cache.cache_folder(name).iterdir()]
    assert written and all((p.stat().st_mode & 0o077) == 0 for p in written)


def test_prune_removes_the_oldest_files_first(tmp_path):
    folder = tmp_path / "grib-index"
    folder.mkdir()
    for age, name in enumerate(["newest", "middle", "oldest"]):
        item = folder / name
        item.write_bytes(b"x" * 1000)
        os.utime(item, ns=(10**18 - age * 10**12, 10**18 - age * 10**12))
    removed = cache.prune(folder, limit=2000)
    assert [p.name for p in removed] == ["oldest"]
    assert sorted(p.name for p in folder.iterdir()) == ["middle", "newest"]


def test_cache_size_bound_from_the_environment(monkeypatch):
    monkeypatch.setenv("PARCELCAST_CACHE_MAX_MB", "1.5")
    assert cache.max_bytes() == 1_500_000
    monkeypatch.setenv("PARCELCAST_CACHE_MAX_MB", "lots")
    with pytest.raises(Exception, match="PARCELCAST_CACHE_MAX_MB"):
        cache.max_bytes()


@pytest.mark.slow
def test_prepare_compiles_every_kernel_into_our_cache_folder(tmp_path):
    """`parcelcast prepare` (the README set-up runs it) leaves numba's cache in our folder."""
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env["PARCELCAST_CACHE"] = str(tmp_path / "cache")
    done = subprocess.run([*cli_command(), "prepare", "--json"], capture_output=True, text=True,
                          env=env, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    report = json.loads(done.stdout)
    assert report["cache"] == str(tmp_path / "cache" / "numba")
    compiled = {p.name.split(".")[0] for p in (tmp_path / "cache" / "numba").rglob("*.nbi")}
    assert compiled == {"_advection_kernel", "_kernel", "_parcel_loops"}  # the parcel loops keep their file's name


@pytest.mark.realdata
def test_scan_entry_of_another_version_is_scanned_again(xdg):
    """An entry lacking a key the scan now records (e.g. the shape of the Earth) is not trusted."""
    from parcelcast.io import grib

    path = data_file("era5-ens-20170101-20170102-z-t-850-500-3deg.grb1")
    fresh = grib.cached_scan(path)
    entry = cache.cache_folder("grib-scan") / f"{grib._file_key(path)}.json"
    record = json.loads(entry.read_text())
    del record["earth"]
    entry.write_text(json.dumps(record))
    again = grib.cached_scan(path)
    assert again.earth == fresh.earth and again.earth


def _counted_build(calls):
    import numpy as np

    def build():
        calls.append(1)
        return np.arange(6.0).reshape(2, 3) / 7.0

    return build


def test_cached_array_is_built_once_then_read_back_exactly(xdg, tmp_path):
    import numpy as np

    source = tmp_path / "code.py"
    source.write_text("x = 1\n")
    calls = []
    first = cache.cached_array("t", [source], _counted_build(calls), (2, 3))
    again = cache.cached_array("t", [source], _counted_build(calls), (2, 3))
    assert calls == [1] and np.array_equal(first, again) and again.dtype == np.float64
    (kept,) = cache.cache_folder("tables").glob("t.*.npy")
    assert (kept.stat().st_mode & 0o777) == 0o600
    source.write_text("x = 2\n")  # the code changed: built again, under another name
    cache.cached_array("t", [source], _counted_build(calls), (2, 3))
    assert calls == [1, 1] and len(list(cache.cache_folder("tables").glob("t.*.npy"))) == 2


@pytest.mark.parametrize("damage", ["truncated", "other-shape", "pickled"])
def test_cached_array_that_does_not_read_as_expected_is_built_again(xdg, tmp_path, damage):
    import numpy as np

    source = tmp_path / "code.py"
    source.write_text("x = 1\n")
    calls = []
    expected = cache.cached_array("t", [source], _counted_build(calls), (2, 3))
    (kept,) = cache.cache_folder("tables").glob("t.*.npy")
    if damage == "truncated":
        kept.write_bytes(kept.read_bytes()[:40])
    elif damage == "other-shape":
        np.save(kept, np.zeros(4))
    else:  # an object array needs pickle, which is never used to read
        np.save(kept, np.array([{"a": 1}], dtype=object), allow_pickle=True)
    assert np.array_equal(cache.cached_array("t", [source], _counted_build(calls), (2, 3)), expected)
    assert calls == [1, 1]
    assert np.array_equal(np.load(kept, allow_pickle=False), expected)  # replaced


def test_cached_array_others_can_write_is_not_read(xdg, tmp_path):
    source = tmp_path / "code.py"
    source.write_text("x = 1\n")
    calls = []
    cache.cached_array("t", [source], _counted_build(calls), (2, 3))
    (kept,) = cache.cache_folder("tables").glob("t.*.npy")
    kept.chmod(0o666)
    cache.cached_array("t", [source], _counted_build(calls), (2, 3))
    assert calls == [1, 1]  # built, not read


def test_pseudoadiabat_table_from_the_cache_equals_a_fresh_integration(xdg):
    """The kept table is the one ``pseudoadiabat`` integrates (second route: integrate again)."""
    import numpy as np

    from parcelcast.thermo import moist

    moist._table.cache_clear()
    try:
        kept = moist._table()
        assert list(cache.cache_folder("tables").glob("pseudoadiabats.*.npy"))
        moist._table.cache_clear()
        read_back = moist._table()
    finally:
        moist._table.cache_clear()
    fresh = moist.pseudoadiabat(moist._TABLE_T1000, 100000.0, np.exp(moist._TABLE_LNP), max_step=0.01)
    assert np.array_equal(read_back, fresh) and np.array_equal(kept, fresh)
