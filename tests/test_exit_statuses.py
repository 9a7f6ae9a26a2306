"""Errors on the command line (issue 10 item 2): one documented exit status per class, no
traceback without --debug, hints that fit the file, and file-system conditions named."""

from __future__ import annotations

import os
import re
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from datasets import cli_command, data_file, raw_cf, small_atmosphere, write_netcdf
from parcelcast.cli import main
from parcelcast.errors import EXIT_STATUS, InputFileError
from parcelcast.io.atomic import FOLDER_MARKER, atomic_folder, atomic_path

README = Path(__file__).resolve().parents[1] / "README.md"


@pytest.fixture()
def nc(tmp_path):
    lat, lon, t, u, v = small_atmosphere(seed=4)
    return write_netcdf(raw_cf(lat, lon, t, u, v), tmp_path / "in.nc")


def _advect(capsys, *args):
    status = main(["advect", *map(str, args)])
    return status, capsys.readouterr().err


def test_readme_documents_every_status():
    text = README.read_text(encoding="utf-8")
    table = dict(re.findall(r"^\| `(\d)` \| ([a-z ]+?) \|", text, flags=re.M))
    assert {int(k) for k in table} == set(EXIT_STATUS.values())
    for name, status in EXIT_STATUS.items():
        assert table[str(status)].replace(" ", "_") == name


def test_one_status_per_class(nc, tmp_path, capsys):
    garbage = tmp_path / "garbage.nc"
    garbage.write_bytes(b"this is not a weather file\n")
    no_wind = write_netcdf(raw_cf(*small_atmosphere(seed=4)).drop_vars(["u", "v"]),
                           tmp_path / "nowind.nc")
    cases = {
        "usage": ([nc, "--level", "850", "--at", "91,0"], "latitude 91.0 is outside"),
        "unreadable_input": ([garbage, "--level", "850"], "not a NetCDF or GRIB file"),
        "missing_quantity": ([no_wind, "--level", "850"], "'u'"),
        "nothing_to_compute": ([nc, "--level", "300"], "300"),
        "cannot_write": ([nc, "--level", "850", "--map", tmp_path], "it is a folder"),
    }
    for name, (args, needle) in cases.items():
        try:
            status, err = _advect(capsys, *args)
        except SystemExit as exc:  # argparse: usage
            status, err = exc.code, capsys.readouterr().err
        assert status == EXIT_STATUS[name], (name, err)
        assert needle in err and "Traceback" not in err, (name, err)


def test_geostrophic_hint_when_the_file_has_geopotential(tmp_path, capsys):
    lat, lon, t, u, v = small_atmosphere(seed=4)
    raw = raw_cf(lat, lon, t, u, v).drop_vars(["u", "v"])
    raw["z"] = raw["t"] * 0 + 15000.0
    raw["z"].attrs = {"standard_name": "geopotential", "units": "m2 s-2"}
    status, err = _advect(capsys, write_netcdf(raw, tmp_path / "tz.nc"), "--level", "850")
    assert status == EXIT_STATUS["missing_quantity"]
    assert "--wind geostrophic" in err


def test_no_malformed_hint_for_several_roles(capsys):
    path = data_file("era5-t2m-2019-03-hourly-uk.grb1")  # 2-m temperature only
    status, err = _advect(capsys, path, "--level", "850")
    assert status == EXIT_STATUS["missing_quantity"]
    assert "--var temperature, u" not in err and "--var ROLE=NAME" in err


def test_monthly_climatology_refused_by_track(capsys):
    path = data_file("erainterim-monthly-jan-jul-uvz.nc")  # a 'month' dimension, no time
    status = main(["track", str(path), "--from", "50,10", "--level", "850", "--back", "24"])
    err = capsys.readouterr().err
    assert status == EXIT_STATUS["missing_quantity"]
    assert "no time coordinate" in err and "'month'" in err and "Traceback" not in err


@pytest.mark.parametrize("where, needle", [
    ("missing/out.nc", "does not exist"),
    ("in.nc/out.nc", "is a file, not a folder"),
    ("in.nc", "one of the inputs"),
])
def test_outputs_that_cannot_be_written(nc, capsys, where, needle):
    before = nc.read_bytes()
    status, err = _advect(capsys, nc, "--level", "850", "--out", nc.parent / where)
    assert status == EXIT_STATUS["cannot_write"] and needle in err
    assert nc.read_bytes() == before and not (nc.parent / "missing").exists()


def test_output_equal_to_input_refused_in_every_command(nc, capsys):
    for argv in (["advect", nc, "--level", "850", "--map", nc],
                 ["track", nc, "--from", "40,0", "--level", "850", "--back", "6", "--out", nc],
                 ["profile", nc, "--at", "40,0", "--plot", nc]):
        assert main([str(a) for a in argv]) == EXIT_STATUS["cannot_write"]
        assert "one of the inputs" in capsys.readouterr().err


def test_unwritable_folder(nc, capsys):
    status, err = _advect(capsys, nc, "--level", "850", "--out", "/proc/out.nc")
    assert status == EXIT_STATUS["cannot_write"] and "/proc/out.nc" in err
    if os.geteuid() != 0:  # root writes anywhere: the permission check needs an ordinary user
        ro = nc.parent / "ro"
        ro.mkdir(mode=0o500)
        status, err = _advect(capsys, nc, "--level", "850", "--out", ro / "out.nc")
        assert status == EXIT_STATUS["cannot_write"] and "not writable" in err


def test_internal_fault_without_and_with_debug(monkeypatch, capsys):
    import parcelcast.cli.advect as advect

    monkeypatch.setattr(advect, "run", lambda args: {}["boom"])
    assert main(["advect", "x.nc", "--level", "850"]) == EXIT_STATUS["internal"]
    err = capsys.readouterr().err
    assert "internal error" in err and "--debug" in err and "Traceback" not in err
    assert main(["advect", "x.nc", "--level", "850", "--debug"]) == EXIT_STATUS["internal"]
    assert "Traceback" in capsys.readouterr().err


def test_non_utf8_inputs(tmp_path, capsys):
    csv = tmp_path / "sounding.csv"
    csv.write_bytes("pressure_hPa,temperature_degC,dewpoint_degC\n1000,\xe9,1\n".encode("latin-1"))
    assert main(["profile", str(csv)]) == EXIT_STATUS["unreadable_input"]
    assert "not UTF-8" in capsys.readouterr().err
    case = tmp_path / "case.toml"
    case.write_bytes('[case]\ntitle = "caf\xe9"\n'.encode("latin-1"))
    assert main(["review", str(case), "--out", str(tmp_path / "r")]) == EXIT_STATUS["unreadable_input"]
    assert "not UTF-8" in capsys.readouterr().err


CASE = """[case]
analyses = {analyses}
[station]
lat = {lat}
lon = 2.0
[window]
start = 2026-03-14T06:00:00Z
end = 2026-03-15T03:00:00Z
"""


@pytest.mark.parametrize("analyses, lat, needle", [
    ('["a.nc"]', '"fifty-one"', "[station] lat must be a number in -90..90"),
    ('["a.nc"]', "true", "[station] lat must be a number"),
    ('["a.nc"]', "nan", "[station] lat must be a number"),
    ("[]", "51.0", "analyses must be a non-empty list"),
    ('"a.nc"', "51.0", "analyses must be a non-empty list"),
    ("[1, 2]", "51.0", "analyses must be a non-empty list"),
])
def test_case_file_with_wrong_types(tmp_path, analyses, lat, needle):
    from parcelcast.review import read_case

    path = tmp_path / "case.toml"
    path.write_text(CASE.format(analyses=analyses, lat=lat), encoding="utf-8")
    with pytest.raises(InputFileError) as err:
        read_case(path)
    assert needle in str(err.value) and str(path) in str(err.value)


# --------------------------------------------------------------------- whole outputs, folders
def test_folder_swapped_in_whole(tmp_path):
    target = tmp_path / "review"
    with atomic_folder(target) as out:
        (out / "a.txt").write_text("old a")
        (out / "b.txt").write_text("old b")
    with pytest.raises(RuntimeError), atomic_folder(target) as out:  # dies half-way
        (out / "a.txt").write_text("new a")
        raise RuntimeError("killed")
    assert (target / "a.txt").read_text() == "old a" and (target / "b.txt").read_text() == "old b"
    with atomic_folder(target) as out:
        (out / "a.txt").write_text("new a")
    assert sorted(p.name for p in target.iterdir()) == [FOLDER_MARKER, "a.txt"]  # no old b
    assert sorted(p.name for p in tmp_path.iterdir()) == ["review"]  # no temporary siblings


def test_foreign_folder_never_replaced(tmp_path):
    mine = tmp_path / "notes"
    mine.mkdir()
    (mine / "todo.txt").write_text("keep me")
    with pytest.raises(Exception, match="was not written by parcelcast"), atomic_folder(mine):
        pass
    assert (mine / "todo.txt").read_text() == "keep me"


def test_part_file_removed_when_terminated(tmp_path):
    """SIGTERM during a write: the command exits 130 and leaves no .part file behind."""
    script = textwrap.dedent(f"""
        import sys, time, types
        from parcelcast.cli._common import run_command
        from parcelcast.io.atomic import atomic_path

        def run(args):
            with atomic_path({str(tmp_path / 'out.nc')!r}) as tmp:
                tmp.write_text("half")
                print("writing", flush=True)
                time.sleep(30)

        sys.exit(run_command(run, types.SimpleNamespace(command="advect")))
    """)
    proc = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=os.environ)
    assert proc.stdout.readline().strip() == "writing"
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=30)
    assert proc.returncode == 130 and "interrupted" in err
    assert list(tmp_path.iterdir()) == []


def test_part_file_removed_on_failure(tmp_path):
    with pytest.raises(ZeroDivisionError), atomic_path(tmp_path / "x.nc") as tmp:
        tmp.write_text("half")
        1 / 0
    assert list(tmp_path.iterdir()) == []


def test_version_and_debug_in_help():
    done = subprocess.run([*cli_command(), "--help"], capture_output=True, text=True, timeout=60)
    assert "--version" in done.stdout and "--debug" in done.stdout
    time.sleep(0)


def test_leftovers_of_a_killed_writer_are_removed(tmp_path):
    """SIGKILL leaves a .part file (no clean-up can run); the next write of the target removes
    it, but never the part file of a process still running."""
    done = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True, timeout=60)
    dead = int(done.stdout)  # a process that has ended
    stale = tmp_path / f".out.nc.{dead}.abc123.part"
    stale.write_text("half")
    running = tmp_path / f".out.nc.{os.getppid()}.def456.part"  # our parent: alive
    running.write_text("being written")
    with atomic_path(tmp_path / "out.nc") as tmp:
        tmp.write_text("whole")
    assert not stale.exists() and running.exists()
    assert (tmp_path / "out.nc").read_text() == "whole"
