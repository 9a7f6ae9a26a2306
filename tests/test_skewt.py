"""The skew-T log-p diagram renders offline (Agg) and draws what it should."""

from __future__ import annotations

import numpy as np
import pytest

import matplotlib
matplotlib.use("Agg")

from parcelcast.profiles import Profile, analyse, validate  # noqa: E402
from parcelcast.render import skewt  # noqa: E402


@pytest.fixture()
def case():
    p = np.array([1000, 925, 850, 700, 500, 400, 300, 200.0]) * 100
    t = np.array([26, 21, 16, 4, -12, -23, -38, -55.0]) + 273.15
    td = np.array([19, 16, 11, -4, -28, -38, -52, np.nan]) + 273.15
    u = np.array([0, 4, 8, 12, 20, 25, 30, 35.0])
    v = np.array([6, 8, 8, 6, 4, 2, 0, 0.0])
    prof = validate(Profile(pressure=p, height=np.full(8, np.nan), temperature=t, dewpoint=td, u=u, v=v,
                            latitude=45.0, source="synthetic"))
    return prof, analyse(prof)


def test_diagram_draws_all_parts(case):
    import matplotlib.pyplot as plt

    prof, res = case
    gridded = [{"bottom_hPa": lay["bottom_hPa"], "top_hPa": lay["top_hPa"],
                "advection_K_per_h": 0.5 * lay["advection_K_per_h"]} for lay in res["layers"]]
    fig, axes, art = skewt.profile_diagram(prof, res, gridded=gridded)
    try:
        assert set(axes) == {"main", "advection"}
        assert art["temperature"].get_color() == skewt.COLOURS["temperature"]
        assert art["dewpoint"].get_color() == skewt.COLOURS["dewpoint"]
        assert art["parcel"] is not None and len(art["guides"]) > 30
        assert len(art["positive"].get_paths()) >= 1  # this sounding has CAPE
        # 8 levels; 925 hPa is ln(1000/925) = 0.078 above 1000 hPa, closer than the barb spacing
        # ln(1050/100)/22 = 0.107, so it is left out: 7 barbs
        assert art["winds"]["barbs"].get_offsets().shape[0] == 7
        # the advection profile: one step per layer (two points each), the gridded points beside it
        x, p = art["advection"]["line"].get_data()
        values = [lay["advection_K_per_h"] for lay in res["layers"]]
        np.testing.assert_allclose(np.asarray(x)[::2], values)
        gx, gp = art["advection"]["points"].get_data()
        np.testing.assert_allclose(gx, 0.5 * np.array(values))
        np.testing.assert_allclose(gp, [np.sqrt(g["bottom_hPa"] * g["top_hPa"]) for g in gridded])
        # the temperature line sits where skewed_x puts it
        x, y = art["temperature"].get_data()
        np.testing.assert_allclose(x, skewt.skewed_x(prof.temperature - 273.15, prof.pressure / 100))
    finally:
        plt.close(fig)


def test_barbs_point_into_the_wind(case):
    """WMO plotting convention (WMO-No. 485 / common practice): the staff points towards where
    the wind comes from; a westerly's staff extends west (left) of the level, feathers there."""
    import matplotlib.pyplot as plt

    prof, _ = case
    fig, ax = plt.subplots()
    try:
        westerly = validate(Profile(pressure=prof.pressure, height=prof.height,
                                    temperature=prof.temperature, dewpoint=prof.dewpoint,
                                    u=np.full(prof.nlev, 25.0), v=np.zeros(prof.nlev),
                                    latitude=45.0, source="synthetic"))
        barbs = skewt.draw_winds(westerly, ax)["barbs"]
        shaft = barbs.get_paths()[0].vertices
        assert shaft[:, 0].min() < -5.0 and shaft[:, 0].max() <= 1e-9  # staff to the west
    finally:
        plt.close(fig)


def test_functions_take_ax_and_return_artists(case):
    import matplotlib.pyplot as plt

    prof, res = case
    fig, ax = plt.subplots()
    try:
        lines = skewt.draw_sounding(prof, ax=ax)
        assert lines["temperature"].axes is ax
        drawn = skewt.draw_advection_profile(res["layers"])
        assert drawn["line"].axes is drawn["warm"].axes
        assert drawn["points"] is None  # no gridded values given
    finally:
        plt.close("all")


def test_save_png_atomically(case, tmp_path):
    prof, res = case
    out = tmp_path / "sub" / "skewt.png"
    skewt.save_profile_diagram(prof, res, out)
    data = out.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20000
    assert [p.name for p in out.parent.iterdir()] == ["skewt.png"]  # no temporary left
