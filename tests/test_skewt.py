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
    fig, axes, art = skewt.profile_diagram(prof, res)
    try:
        assert set(axes) == {"main", "wind", "advection"}
        assert art["temperature"].get_color() == skewt.COLOURS["temperature"]
        assert art["dewpoint"].get_color() == skewt.COLOURS["dewpoint"]
        assert art["parcel"] is not None and len(art["guides"]) > 30
        assert len(art["positive"].get_paths()) >= 1  # this sounding has CAPE
        assert art["winds"]["quiver"].N == 8
        assert len(art["advection"]) == len(res["layers"]) == 4
        # the temperature line sits where skewed_x puts it
        x, y = art["temperature"].get_data()
        np.testing.assert_allclose(x, skewt.skewed_x(prof.temperature - 273.15, prof.pressure / 100))
    finally:
        plt.close(fig)


def test_functions_take_ax_and_return_artists(case):
    import matplotlib.pyplot as plt

    prof, res = case
    fig, ax = plt.subplots()
    try:
        lines = skewt.draw_sounding(prof, ax=ax)
        assert lines["temperature"].axes is ax
        bars = skewt.draw_layer_advection(res["layers"])
        assert all(b.axes is bars[0].axes for b in bars)
    finally:
        plt.close("all")


def test_save_png_atomically(case, tmp_path):
    prof, res = case
    out = tmp_path / "sub" / "skewt.png"
    skewt.save_profile_diagram(prof, res, out)
    data = out.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20000
    assert [p.name for p in out.parent.iterdir()] == ["skewt.png"]  # no temporary left
