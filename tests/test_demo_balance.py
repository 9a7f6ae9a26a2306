"""The demo atmosphere is in thermal-wind balance (issue 13 item 6).

Two checks: the balance itself, V(p_t) - V(p_b) = (R_d/f) k x grad(integral of T dln p)
(Holton and Hakim 2013, sec. 3.4), with the gradient taken by centred differences of the
demo's temperature and the ln p integral by scipy ``quad``; and the profile command on the
written file, whose thermal-wind advection must have the sign (and nearly the size) of the
gridded advection in every layer.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy.integrate import quad

from datasets import RD, cli_command
from parcelcast import demo

OMEGA = 7.292115e-5  # Earth's rotation (rad/s), IERS conventional value, recalled from memory
A = 6_371_000.0


@pytest.mark.parametrize("lat", [35.0, 51.5, 65.0])
@pytest.mark.parametrize("layer", [(1000.0, 850.0), (700.0, 500.0), (500.0, 300.0)])
def test_wind_shear_is_the_thermal_wind(lat, layer):
    pb, pt = layer
    lon, sec, h = 4.0, 5 * 3600.0, 1e-3  # degrees for the centred differences

    def mean_t(lo, la):  # integral of T dln p over the layer (K), quad on the demo's pattern
        return quad(lambda x: demo.pattern(lo, la, np.exp(x), sec)[0], np.log(pt), np.log(pb))[0]

    coslat = np.cos(np.deg2rad(lat))
    dx = (mean_t(lon + h, lat) - mean_t(lon - h, lat)) / (2 * np.deg2rad(h) * A * coslat)
    dy = (mean_t(lon, lat + h) - mean_t(lon, lat - h)) / (2 * np.deg2rad(h) * A)
    f = 2 * OMEGA * np.sin(np.deg2rad(lat))
    ub, vb = demo.wind(lon, lat, pb, sec)
    ut, vt = demo.wind(lon, lat, pt, sec)
    assert ut - ub == pytest.approx(-RD / f * dy, rel=1e-5, abs=1e-6)
    assert vt - vb == pytest.approx(RD / f * dx, rel=1e-5, abs=1e-6)


def test_profile_thermal_wind_and_gridded_advection_agree(tmp_path):
    import subprocess

    path = tmp_path / "demo.nc"
    demo.write_scenario(path)
    for at in ("51.5,2", "45,-10", "60,15"):
        done = subprocess.run([*cli_command(), "profile", str(path), "--at", at, "--json"],
                              capture_output=True, text=True, timeout=120)
        assert done.returncode == 0, done.stderr
        doc = json.loads(done.stdout)
        for tw, grid in zip(doc["layers"], doc["gridded_layers"]):
            a, b = tw["advection_K_per_h"], grid["advection_K_per_h"]
            assert np.sign(a) == np.sign(b), (at, tw, grid)
            # 1-degree grid, bilinear winds at the point, float32 storage: a few per cent
            assert a == pytest.approx(b, rel=0.1, abs=0.01), (at, tw, grid)
