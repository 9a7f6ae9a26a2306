"""``parcelcast brief``: the morning briefing on the demo and on the real files.

Checks against something outside the briefing code:
* the demo's known budget (``parcelcast/demo.py``: the only non-advective heating is the
  imposed diurnal course, ``demo.diurnal_heating``), as in ``test_review.py``;
* the other commands on the same inputs: every level equals ``advect --at``, the trajectory
  origin equals ``track --json``, the split equals ``split --json``;
* the real files (``../shared/data``, PROVENANCE.md): the single-time GFS forecast allows no
  trajectory (said why), the 4-time ERA5 ensemble with geostrophic winds gives a 24-h one;
* the page as a browser shows it: headless Chromium (Debian package ``chromium``) screenshot,
  its size and its share of coloured pixels (the maps) against the same page without images.
"""

from __future__ import annotations

import contextlib
import io
import json
import os
import re
import shutil
import subprocess
import time
from pathlib import Path

import numpy as np
import pytest

from datasets import data_file
from parcelcast import demo, formatting
from parcelcast.cli import DISCLAIMER, main

GFS = "gfs-20111008T00-f072-global-2p5deg.grb2"
ERA5 = "era5-ens-20170101-20170102-z-t-850-500-3deg.grb1"
REQUIRED = {"station", "valid_time", "levels", "trajectories", "split", "profile", "figures",
            "summary", "cautions", "warnings"}


def _run(argv) -> tuple[int, str]:
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = main(argv)
    return code, out.getvalue()


def _json(argv) -> dict:
    code, text = _run(argv + ["--json"])
    assert code == 0
    return json.loads(text)


def _config(folder: Path, name: str, lat: float, lon: float, analyses: str, wind: str,
            levels, area_lat, area_lon, hours: float = 24, extra: str = "") -> Path:
    path = folder / "brief.toml"
    path.write_text(f"""[station]
name = "{name}"
lat = {lat}
lon = {lon}
[data]
analyses = ["{analyses}"]
wind = "{wind}"
[brief]
levels_hPa = {list(levels)}
area_lat = {list(area_lat)}
area_lon = {list(area_lon)}
trajectory_hours = {hours}
{extra}""")
    return path


def _brief(folder: Path, config: Path) -> dict:
    out = folder / "briefing"
    start = time.perf_counter()
    code, text = _run(["brief", str(config), "--out", str(out)])
    print(f"\nparcelcast brief {config}: {time.perf_counter() - start:.1f} s")  # reported, not asserted
    assert code == 0
    doc = json.loads((out / "brief.json").read_text(), parse_constant=_refuse)
    assert doc["summary"][0] in text
    return {"out": out, "doc": doc}


def _refuse(constant):
    raise ValueError(f"{constant} is not JSON")


@pytest.fixture(scope="module")
def demo_brief(tmp_path_factory):
    folder = tmp_path_factory.mktemp("brief-demo")
    demo.write_scenario(folder / "demo-analysis.nc")
    config = _config(folder, demo.STATION_NAME, demo.STATION_LAT, demo.STATION_LON,
                     "demo-analysis.nc", "actual", [850, 700], [40.0, 62.0], [-18.0, 22.0])
    return {"folder": folder, **_brief(folder, config)}


def _real_brief(tmp_path_factory, name: str, wind: str, levels, extra: str = "") -> dict:
    """The briefing at Harbour Point (50 N, 5 E; invented name) from one shared-data file."""
    path = data_file(name)
    folder = tmp_path_factory.mktemp("brief-real")
    config = _config(folder, "Harbour Point", 50.0, 5.0, str(path), wind, levels,
                     [40.0, 60.0], [-10.0, 20.0], extra=extra)
    return {"file": path, **_brief(folder, config)}


@pytest.fixture(scope="module")
def gfs_brief(tmp_path_factory):
    return _real_brief(tmp_path_factory, GFS, "actual", [850, 700], extra="surface = true")


@pytest.fixture(scope="module")
def era5_brief(tmp_path_factory):
    return _real_brief(tmp_path_factory, ERA5, "geostrophic", [850, 500])


# ----------------------------------------------------------------------------- contents
def _check_outputs(run):
    out, doc = run["out"], run["doc"]
    assert REQUIRED <= set(doc)
    assert {"name", "lat", "lon"} <= set(doc["station"])
    for name in ("brief.html", "brief.md", "brief.json"):
        assert (out / name).stat().st_size > 0
    html = (out / "brief.html").read_text()
    markdown = (out / "brief.md").read_text()
    for page in (html, markdown):
        assert "not an official forecast" in page and "national weather service" in page
    assert DISCLAIMER == doc["disclaimer"]
    assert _headings(html, markdown)[0] == _headings(html, markdown)[1]  # one template, two pages
    for figure in doc["figures"]:
        assert (out / figure["file"]).read_bytes()[:4] == b"\x89PNG"
        assert f"]({figure['file']})" in markdown  # Markdown beside its images
        if figure["kind"] in ("advection_map", "trajectory_map"):
            assert figure["coastlines"].startswith("Natural Earth")  # drawn from the package
            assert len(figure["area"]) == 4
    # self-contained HTML: every image inside, nothing fetched from elsewhere
    outside = re.sub(r"data:image/png;base64,[A-Za-z0-9+/=]+", "data:", html)
    assert html.count("data:image/png;base64,") == len(doc["figures"])
    assert not re.search(r"(src|href)\s*=\s*[\"'](?!data:)|url\(|https?://|//cdn", outside)
    assert not list(out.parent.glob(".briefing.*"))  # no temporary folder left beside it
    return doc


def _headings(html: str, markdown: str) -> tuple[list[str], list[str]]:
    """Section headings of the HTML page and of the Markdown page, in order."""
    import html as html_module

    return ([html_module.unescape(h) for h in re.findall(r"<h2>(.*?)</h2>", html)],
            re.findall(r"^## (.*)$", markdown, flags=re.M))


def _check_levels_agree_with_advect(doc, path, wind):
    for level in doc["levels"]:
        name = "surface" if level["level_hPa"] is None else f"{level['level_hPa']:g}"
        at = _json(["advect", str(path), "--level", name, "--wind", wind,
                    "--at", f"{doc['station']['lat']},{doc['station']['lon']}"])
        assert level["level"] == at["level"] and level["level_hPa"] == at["level_hPa"]
        assert at["time"] == doc["valid_time"]
        assert level["advection_K_per_h"] == at["advection_K_per_h"]
        assert level["missing_points_by_reason"] == at["missing_points_by_reason"]
        assert level["temperature_K"] == at["temperature_K"]
        assert level["temperature_degC"] == pytest.approx(at["temperature_K"] - 273.15, abs=0.006)
        assert (level["u_m_s"], level["v_m_s"]) == (at["u_m_s"], at["v_m_s"])
        direction = float(formatting.wind_direction(at["u_m_s"], at["v_m_s"]))
        assert level["wind_direction_deg"] == pytest.approx(direction, abs=0.05)
        speed_kt = np.hypot(at["u_m_s"], at["v_m_s"]) * 3600.0 / 1852.0  # 1 kt = 1852 m/h
        assert level["wind_speed_kt"] == pytest.approx(speed_kt, abs=0.05)


def test_demo_briefing(demo_brief):
    doc = _check_outputs(demo_brief)
    assert doc["station"]["name"] == "Tamsin Cross"
    assert {f["kind"] for f in doc["figures"]} >= {"advection_map", "trajectory_map"}
    assert doc["trajectories"]["available"] and doc["split"]["available"]
    # the demo's only non-advective heating is the imposed diurnal course; omega = 0
    split = doc["split"]
    start = (np.datetime64(split["start"].rstrip("Z")) - demo.START) / np.timedelta64(1, "s")
    end = (np.datetime64(split["end"].rstrip("Z")) - demo.START) / np.timedelta64(1, "s")
    imposed = demo.diurnal_heating(end, 850.0)[0] - demo.diurnal_heating(start, 850.0)[0]
    assert split["residual_K"] == pytest.approx(imposed, abs=0.05)  # trapezoid error, as test_review
    assert split["vertical_K"] == pytest.approx(0.0, abs=1e-6)
    assert any("850 hPa" in s and "advection" in s for s in doc["summary"])


def test_demo_briefing_agrees_with_advect(demo_brief):
    _check_levels_agree_with_advect(demo_brief["doc"], demo_brief["folder"] / "demo-analysis.nc", "actual")


@pytest.mark.realdata
def test_gfs_briefing_has_no_trajectory_and_says_why(gfs_brief):
    doc = _check_outputs(gfs_brief)
    assert doc["valid_time"] == "2011-10-11T00:00:00Z"
    traj = doc["trajectories"]
    assert traj["available"] is False and "one analysis time" in traj["reason"]
    assert traj["origin_lat"] is None and traj["complete"] is False
    assert doc["split"]["available"] is False and "one analysis time" in doc["split"]["reason"]
    assert any("No back trajectory" in s for s in doc["summary"])
    assert doc["profile"]["available"] is True  # 26 levels with humidity
    kinds = [f["kind"] for f in doc["figures"]]
    assert kinds == ["advection_map", "advection_map", "advection_map", "profile_diagram"]
    # surface = true: the 2-m temperature and 10-m wind after the pressure levels, as
    # `advect --level surface` (GFS has both, PROVENANCE.md)
    assert [lev["level"] for lev in doc["levels"]] == ["850 hPa", "700 hPa", "surface"]
    assert doc["levels"][-1]["available"] and doc["levels"][-1]["level_hPa"] is None
    assert any(s.startswith("At the surface (2-m temperature, 10-m wind):") for s in doc["summary"])
    assert doc["figures"][2]["file"] == "advection-surface.png" and doc["figures"][2]["level"] == "surface"
    _check_levels_agree_with_advect(doc, gfs_brief["file"], "actual")


def test_the_surface_level_with_the_geostrophic_wind_says_why_not():
    from parcelcast.brief.assemble import level_entry
    from parcelcast.brief.config import BriefConfig

    config = BriefConfig("Harbour Point", 50.0, 5.0, ["x.grb"], wind="geostrophic", surface=True)
    entry = level_entry(None, config, "surface", None)
    assert entry["available"] is False and entry["level_hPa"] is None
    assert '[data] wind = "actual"' in entry["reason"]


@pytest.mark.realdata
def test_era5_briefing_has_a_24h_back_trajectory(era5_brief):
    doc = _check_outputs(era5_brief)
    path = era5_brief["file"]
    traj = doc["trajectories"]
    assert traj["available"] is True and traj["hours"] == 24
    assert traj["arrival_time"] == "2017-01-02T12:00:00Z" and traj["origin_time"] == "2017-01-01T12:00:00Z"
    track = _json(["track", str(path), "--from", "50.0,5.0", "--level", "850", "--back", "24",
                   "--members", "5", "--wind", "geostrophic"])
    origin = track["members"][0]["points"][0]  # ascending time: the origin first
    assert traj["origin_lat"] == pytest.approx(origin["lat"], abs=1e-3)
    assert traj["origin_lon"] == pytest.approx(((origin["lon"] + 180) % 360) - 180, abs=1e-3)
    assert traj["origin_pressure_hPa"] == pytest.approx(origin["pressure_hPa"], abs=0.01)
    assert traj["complete"] is track["complete"]
    assert traj["hours_covered"] == track["hours_covered"]
    split = _json(["split", str(path), "--at", "50.0,5.0", "--level", "850", "--wind", "geostrophic",
                   "--start", "2017-01-01T12", "--end", "2017-01-02T12"])
    for key in ("observed_change_K", "advective_K", "vertical_K", "residual_K"):
        assert doc["split"][key] == split[key], key
    assert doc["split"]["lagrangian"]["non_advective_K"] == split["lagrangian"]["non_advective_K"]
    assert doc["profile"]["available"] is False and "level" in doc["profile"]["reason"]
    _check_levels_agree_with_advect(doc, path, "geostrophic")


# ----------------------------------------------------------------------------- whole or nothing
def test_a_failed_briefing_leaves_the_folder_as_it_was(demo_brief, monkeypatch, tmp_path):
    from parcelcast.brief import write as brief_write

    out = demo_brief["out"]
    before = {p.name: p.stat().st_size for p in out.iterdir()}

    def broken(*args, **kwargs):
        raise RuntimeError("disk full (simulated)")

    monkeypatch.setattr(brief_write, "page", broken)
    config = demo_brief["folder"] / "brief.toml"
    # an unexpected fault: the command line reports it (status 1, errors.EXIT_STATUS) without a traceback
    assert main(["brief", str(config), "--out", str(out)]) == 1
    assert {p.name: p.stat().st_size for p in out.iterdir()} == before
    assert not list(out.parent.glob(".briefing.*"))


# ----------------------------------------------------------------------------- in a browser
def _chromium() -> str:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    message = "no headless Chromium (Debian package 'chromium'; .ci/run installs it)"
    if os.environ.get("PARCELCAST_REQUIRE_CHROMIUM"):
        pytest.fail(message)
    pytest.skip(message)


def _screenshot(html: Path, png: Path, profile: Path, size=(1100, 2600)):
    subprocess.run([_chromium(), "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                    "--no-first-run", "--disable-background-networking", "--disable-component-update",
                    "--disable-sync", f"--user-data-dir={profile}", f"--screenshot={png}",
                    f"--window-size={size[0]},{size[1]}", html.resolve().as_uri()],
                   capture_output=True, timeout=90, check=True)
    from PIL import Image

    with Image.open(png) as image:
        rgb = np.asarray(image.convert("RGB"), dtype=np.float64) / 255.0
    return rgb


def _coloured_share(rgb) -> float:
    """Share of pixels with clear colour (HSV saturation > 0.3 and not near black): the maps'
    reds and blues; text, rules and the page background are grey or nearly white."""
    high, low = rgb.max(axis=2), rgb.min(axis=2)
    saturation = np.where(high > 0, (high - low) / np.maximum(high, 1e-9), 0.0)
    return float(((saturation > 0.3) & (high > 0.2)).mean())


def test_the_page_shows_its_images_in_a_browser(demo_brief, tmp_path):
    html = demo_brief["out"] / "brief.html"
    rgb = _screenshot(html, tmp_path / "page.png", tmp_path / "profile")
    assert rgb.shape[:2] == (2600, 1100)
    bare = tmp_path / "bare.html"  # the same page without its images, as a baseline
    bare.write_text(re.sub(r"<img [^>]*>", "", html.read_text()))
    rgb_bare = _screenshot(bare, tmp_path / "bare.png", tmp_path / "profile")
    shown, baseline = _coloured_share(rgb), _coloured_share(rgb_bare)
    print(f"\ncoloured pixels: page {shown:.3f}, without images {baseline:.3f}")
    assert shown > 0.05 and shown > 10 * baseline
