"""Reading only what is asked for gives the same answers as reading everything.

GRIB files are opened through cfgrib filters on level type and short name (``io/grib.py``)
and fields on levels are cut to the requested levels before any value is read
(``io/analysis.py``).  The second route here is the full read: every upper-air and
single-level field group of the file, as cfgrib opens it without a short-name filter.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

from datasets import data_file
from parcelcast.io import grib
from parcelcast.io.analysis import open_analysis

pytestmark = pytest.mark.realdata

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ENS = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"

#: the roles the commands ask for (cli/advect.py, track.py, profile.py)
ADVECT = ("temperature", "u", "v")
GEOSTROPHIC = ("temperature", "geopotential")
TRACK = ("temperature", "surface_pressure", "u", "v", "geopotential")


def _full_filters(scan, roles=None, overrides=None):
    """Every upper-air and single-level field of the file: no short-name filter."""
    types = {m["typeOfLevel"] for m in scan.messages}
    return {part: {"typeOfLevel": sorted(types & set(level_types))}
            for part, level_types in (("upper", grib._LEVEL_TYPES_UPPER),
                                      ("single", grib._LEVEL_TYPES_SINGLE))
            if types & set(level_types)}


def _full_read(monkeypatch, path, roles, **kwargs):
    with monkeypatch.context() as patch:
        patch.setattr(grib, "grib_filters", _full_filters)
        return open_analysis(path, roles=roles, **kwargs)


@pytest.mark.parametrize("name, roles", [(GFS, ADVECT), (GFS, TRACK), (GFS, None), (ENS, GEOSTROPHIC)],
                         ids=["gfs-advect", "gfs-track", "gfs-all", "era5-geostrophic"])
def test_filtered_grib_read_is_identical_to_the_full_read(monkeypatch, name, roles):
    path = data_file(name)
    filtered = open_analysis(path, roles=roles)
    full = _full_read(monkeypatch, path, roles)
    xr.testing.assert_identical(filtered, full)


def test_filter_leaves_out_the_fields_no_role_uses():
    """GFS (PROVENANCE.md): t, u, v on 26 isobaric levels, many surface fields besides."""
    scan = grib.scan_messages(data_file(GFS))
    filters = grib.grib_filters(scan, ADVECT)
    assert filters == {"upper": {"typeOfLevel": ["isobaricInhPa"], "shortName": ["t", "u", "v"]}}


def test_scan_sees_each_field_of_multi_field_messages():
    """PROVENANCE.md: the GFS file has gh, t, u, v, absv on 26 levels and w on 21 (it says 21
    for r too, but cfgrib finds r on 25 levels, 1000-10 hPa: checked here against cfgrib).
    NCEP packs u and v into one GRIB 2 message; the scan must see both."""
    import cfgrib

    scan = grib.scan_messages(data_file(GFS))
    count = {}
    for m in scan.messages:
        if m["typeOfLevel"] == "isobaricInhPa":
            count[m["shortName"]] = count.get(m["shortName"], 0) + 1
    assert {k: count[k] for k in ("gh", "t", "u", "v", "absv", "w")} == {
        "gh": 26, "t": 26, "u": 26, "v": 26, "absv": 26, "w": 21}
    (r,) = cfgrib.open_datasets(str(data_file(GFS)), backend_kwargs={
        "indexpath": "", "filter_by_keys": {"shortName": "r", "typeOfLevel": "isobaricInhPa"}})
    assert count["r"] == r.sizes["isobaricInhPa"]


@pytest.mark.parametrize("name, roles, level", [(GFS, ADVECT, 850.0), (ENS, GEOSTROPHIC, 500.0)],
                         ids=["gfs", "era5"])
def test_one_level_read_equals_the_level_of_the_full_read(monkeypatch, name, roles, level):
    path = data_file(name)
    one = open_analysis(path, roles=roles, levels=level * 100.0)
    full = _full_read(monkeypatch, path, roles)
    assert one.sizes["level"] == 1
    xr.testing.assert_identical(one.drop_attrs().sel(level=level * 100.0),
                                full.drop_attrs().sel(level=level * 100.0))


def test_missing_level_keeps_the_file_whole_so_selection_lists_what_exists():
    from parcelcast.errors import SelectionError
    from parcelcast.selection import select_level

    ds = open_analysis(data_file(ENS), roles=GEOSTROPHIC, levels=70_000.0)
    assert list(ds["level"].values) == [85_000.0, 50_000.0]  # PROVENANCE.md: 850 and 500 hPa
    with pytest.raises(SelectionError, match="850, 500 hPa"):
        select_level(ds, 700.0)


def test_advect_answer_from_a_filtered_read_equals_the_full_read(monkeypatch):
    from parcelcast.advection import advection_on_level
    from parcelcast.cli.advect import point_summary

    path = data_file(GFS)
    roles = ADVECT + ("surface_pressure", "orography")  # as cli/advect.py asks
    answers = []
    for ds in (open_analysis(path, roles=roles, levels=85_000.0), _full_read(monkeypatch, path, roles)):
        answers.append(point_summary(advection_on_level(ds, 850.0, None, "actual"), 50.0, 5.0))
    assert answers[0] == answers[1]
    assert np.isfinite(answers[0]["advection_K_per_h"])


@pytest.mark.parametrize("name", [GFS, ENS], ids=["gfs", "era5"])
def test_scan_names_equal_eccodes_read_message_by_message(name):
    """The scan looks names up once per parameter; the second route reads every key of every
    field with eccodes (multi-field messages included), as cfgrib does when indexing."""
    import eccodes

    keys = ("shortName", "cfVarName", "cfName", "typeOfLevel", "level")
    expected = []
    with open(data_file(name), "rb") as handle:
        eccodes.codes_grib_multi_support_on()
        try:
            while (gid := eccodes.codes_grib_new_from_file(handle)) is not None:
                expected.append({key: eccodes.codes_get(gid, key) for key in keys})
                eccodes.codes_release(gid)
        finally:
            eccodes.codes_grib_multi_support_off()
    assert grib.scan_messages(data_file(name)).messages == expected


def test_standardise_reads_no_values_so_a_one_level_read_decodes_that_level_only():
    """cfgrib's groups stay lazy through ``coordinates.standardise`` (a scalar GRIB valid
    time becomes a dimension only after the cut to the levels used, since xarray reads
    every value to add one): the 850 hPa read holds one level of each field in memory."""
    from parcelcast.io import coords

    path = data_file(GFS)
    groups = grib.open_grib(path, ADVECT)
    upper = [coords.standardise(g, path) for g in groups.upper]
    assert not any(var.variable._in_memory for g in upper for var in g.data_vars.values())
    assert all(g["time"].ndim == 0 for g in upper)  # the GRIB valid time, still scalar
    ds = open_analysis(path, roles=ADVECT, levels=85_000.0)
    assert dict(ds["temperature"].sizes) == {"time": 1, "level": 1, "lat": 73, "lon": 144}
    assert ds["time"].values[0] == np.datetime64("2011-10-11T00:00", "ns")
