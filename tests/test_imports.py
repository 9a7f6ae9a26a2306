"""eccodes and PROJ in one process (issue 2, 'Pitfalls'): some eccodes wheels bundle their own
PROJ, and loading pyproj/cartopy after eccodes aborted the process.  One subprocess loads
eccodes by opening a GRIB file through ``open_analysis``, then imports and uses pyproj and
cartopy.crs; an abort shows as a negative return code (signal)."""

from __future__ import annotations

import subprocess
import sys

import pytest

from datasets import data_file

SCRIPT = r"""
import sys
from parcelcast.io.analysis import open_analysis
ds = open_analysis(sys.argv[1])
assert "eccodes" in sys.modules or "gribapi" in sys.modules, "eccodes was not loaded"
import pyproj
import cartopy.crs as ccrs
# use PROJ: WGS84 -> Lambert conformal and back (pyproj round trip, a second route to itself)
lcc = pyproj.CRS.from_proj4("+proj=lcc +lat_1=45 +lat_2=55 +lat_0=50 +lon_0=0 +ellps=WGS84")
to_lcc = pyproj.Transformer.from_crs("EPSG:4326", lcc, always_xy=True)
x, y = to_lcc.transform(2.0, 51.5)
lon, lat = to_lcc.transform(x, y, direction="INVERSE")
assert abs(lon - 2.0) < 1e-9 and abs(lat - 51.5) < 1e-9
xy = ccrs.LambertConformal().transform_point(2.0, 51.5, ccrs.PlateCarree())
assert all(abs(v) < 1e7 for v in xy)
print("ok", float(ds["near_surface_temperature"].count()))
"""


@pytest.mark.realdata
def test_eccodes_then_pyproj_and_cartopy_in_one_process():
    path = data_file("fields-with-missing-values.grb1")
    done = subprocess.run([sys.executable, "-c", SCRIPT, str(path)], capture_output=True,
                          text=True, timeout=120)
    assert done.returncode == 0, (done.returncode, done.stderr[-2000:])
    # 32,760 - 21,699 = 11,061 valid points (PROVENANCE.md)
    assert done.stdout.split() == ["ok", "11061.0"]
