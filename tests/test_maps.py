"""Maps a forecaster reads: area, coastlines (packaged Natural Earth), grey missing data,
isotherms in degC, barbs in knots, the named station; trajectory maps with 6-hourly marks.

Outside references: degC = K - 273.15 (SI Brochure 2.3.4); 1 kt = 1852 m/h; the WMO plotting
convention that a barb's staff points towards where the wind comes from (recalled from memory;
see test_skewt.py for the same check on the diagram).
"""

from __future__ import annotations

import numpy as np
import pytest

import matplotlib

matplotlib.use("Agg")

from datasets import canonical  # noqa: E402
from parcelcast.advection import advection_on_level  # noqa: E402
from parcelcast.render import maps  # noqa: E402


@pytest.fixture(scope="module")
def fields():
    """A westerly 20 m/s over a meridional temperature gradient on a 0..358 grid, with a block
    of missing values (as below-ground points are) south-west of the station."""
    lat = np.arange(20.0, 80.01, 2.0)
    lon = np.arange(0.0, 359.0, 2.0)
    lat2, lon2 = np.meshgrid(lat, lon, indexing="ij")
    t = 300.0 - 0.6 * (lat2 - 20.0) + 2.0 * np.sin(np.deg2rad(lon2) * 3)
    ds = canonical(lat, lon, t, np.full(t.shape, 20.0), np.zeros(t.shape))
    out = advection_on_level(ds, 850.0)
    west = ((lon2 + 180.0) % 360.0) - 180.0
    hole = (lat2 >= 42) & (lat2 <= 46) & (west >= -6) & (west <= 0)
    for name in ("temperature", "u", "v", "temperature_advection"):
        out[name] = out[name].where(~hole)
    return out


def test_crop_makes_longitudes_continuous_across_the_area(fields):
    cropped = maps.crop(fields, [40.0, 60.0, -10.0, 20.0])
    lon = cropped["lon"].values
    assert np.all(np.diff(lon) > 0) and lon.min() <= -10.0 and lon.max() >= 20.0


def test_advection_map_reads_like_a_chart(fields, tmp_path):
    import cartopy.crs as ccrs

    area = [40.0, 60.0, -10.0, 20.0]
    drawn = maps.advection_map(fields, station=("Harbour Point", 50.0, 5.0), area=area)
    ax = drawn["axes"]
    assert drawn["coastlines"] == "Natural Earth 1:50m coastlines and land borders (public domain)"
    drawn_ids = {a.get_gid() for a in ax.get_children()}
    assert {"coastlines", "borders"} <= drawn_ids
    # the coastline passes Cap Gris-Nez, 50.87 N 1.58 E (position recalled from memory):
    # some projected vertex lies within 10 km of it (the map is Lambert conformal, in metres)
    coast = next(a for a in ax.get_children() if a.get_gid() == "coastlines")
    vertices = np.concatenate([p.vertices for p in coast.get_paths()])
    cape = ax.projection.transform_point(1.58, 50.87, ccrs.PlateCarree())
    assert np.nanmin(np.hypot(*(vertices - cape).T)) < 10e3
    texts = [t.get_text() for t in ax.texts]
    assert any("Harbour Point" in t for t in texts)
    # isotherms in degC: the levels lie within the field's range in Celsius
    t_c = fields["temperature"].values - 273.15
    levels = drawn["isotherms"].levels
    assert levels.min() >= np.nanmin(t_c) - 2 and levels.max() <= np.nanmax(t_c) + 2
    # barbs in knots: 20 m/s = 38.9 kt (1 kt = 1852 m / 3600 s); cartopy turns the vectors
    # into the map projection, which keeps their length
    barbs = drawn["barbs"]
    assert np.allclose(np.hypot(barbs.u, barbs.v), 20.0 * 3600.0 / 1852.0)
    assert "valid" in ax.get_title() and "source" in ax.get_title()
    # grey where data are missing: the pixel at the hole's centre shows the axes background
    fig = drawn["figure"]
    fig.canvas.draw()
    image = np.asarray(fig.canvas.buffer_rgba())[..., :3]
    x, y = ax.projection.transform_point(-3.0, 44.0, ccrs.PlateCarree())
    px, py = ax.transData.transform((x, y))
    height = image.shape[0]
    grey = np.array([int(maps.MISSING_GREY[i:i + 2], 16) for i in (1, 3, 5)])
    sample = image[int(height - py), int(px)].astype(int)
    assert np.abs(sample - grey).max() <= 8, sample
    x, y = ax.projection.transform_point(10.0, 55.0, ccrs.PlateCarree())
    px, py = ax.transData.transform((x, y))
    assert np.abs(image[int(height - py), int(px)].astype(int) - grey).max() > 8
    maps.save_figure(fig, tmp_path / "map.png")
    assert (tmp_path / "map.png").read_bytes()[:4] == b"\x89PNG"


def test_area_is_checked():
    from parcelcast.errors import ParcelcastError

    with pytest.raises(ParcelcastError, match="LAT0 < LAT1"):
        maps.check_area([60.0, 40.0, 0.0, 10.0])
    with pytest.raises(ParcelcastError, match="4 numbers"):
        maps.check_area([1.0, 2.0])


def test_trajectory_map_marks_every_6_hours_and_keeps_the_legend_outside(tmp_path):
    from parcelcast.render.trajectory_maps import trajectory_map
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.trajectories.analytic import solid_body_dataset
    from parcelcast.units import Q_

    ds = solid_body_dataset(hours=24, step_hours=6, resolution=2.0, levels_hpa=(850.0,))
    paths = compute_trajectories(ds, 50.0, 5.0, Q_(850, "hPa"), Q_(-24, "h"), members=3)
    drawn = trajectory_map(paths, station=("Harbour Point", 50.0, 5.0))
    assert drawn["coastlines"].startswith("Natural Earth")
    dots = sum(len(m.get_xdata()) for m in drawn["marks"] if hasattr(m, "get_marker"))
    assert dots == 4  # -6, -12, -18, -24 h on the central path
    labels = sorted(t.get_text().strip() for t in drawn["marks"] if hasattr(t, "get_text"))
    assert labels == ["-12 h", "-18 h", "-24 h", "-6 h"]
    widths = sorted(float(np.max(line.get_linewidths())) for line in drawn["lines"])
    assert widths[-1] > 3 * widths[0]  # central bold, members thin
    fig, ax = drawn["figure"], drawn["axes"]
    fig.canvas.draw()
    legend = ax.get_legend().get_window_extent()
    assert legend.y1 <= ax.get_window_extent().y0  # below the map, never over the tracks
    maps.save_figure(fig, tmp_path / "tracks.png")
    assert (tmp_path / "tracks.png").read_bytes()[:4] == b"\x89PNG"


def test_advect_and_track_draw_maps_of_an_area(tmp_path, capsys):
    """``advect --map --area`` and ``track --map --area`` write PNG maps (command line)."""
    from parcelcast.cli import main
    from parcelcast.trajectories.analytic import solid_body_dataset

    ds = solid_body_dataset(hours=12, step_hours=6, resolution=2.0, levels_hpa=(850.0, 500.0))
    for name, std in (("u", "eastward_wind"), ("v", "northward_wind"), ("temperature", "air_temperature")):
        ds[name].attrs.update(standard_name=std)
    ds["temperature"].attrs["units"] = "K"
    ds.lat.attrs.update(standard_name="latitude", units="degrees_north")
    ds.lon.attrs.update(standard_name="longitude", units="degrees_east")
    ds.level.attrs.update(units="Pa")
    path = tmp_path / "solid.nc"
    ds.to_netcdf(path)
    assert main(["advect", str(path), "--level", "850", "--at", "50,5", "--map", str(tmp_path / "a.png"),
                 "--area", "40,60,-10,20"]) == 0
    assert main(["track", str(path), "--from", "50,5", "--level", "850", "--back", "12",
                 "--map", str(tmp_path / "t.png"), "--area", "35,65,-40,20"]) == 0
    for name in ("a.png", "t.png"):
        assert (tmp_path / name).read_bytes()[:4] == b"\x89PNG"
    text = capsys.readouterr().out
    assert "\u00b0C" in text and " kt" in text  # people read degC and knots


def test_graticule_labels_stand_on_their_lines():
    """Meridian labels sit where the meridian meets the bottom edge; on a conic map the
    parallels are labelled on the lines (there a parallel curves: at the edge it runs higher
    than at the centre).  Checked by inverting the projection at each label's anchor."""
    import cartopy.crs as ccrs

    from parcelcast.render.graticule import draw_graticule

    area = [40.0, 60.0, -10.0, 20.0]
    fig, ax = maps.new_map(area)
    drawn = draw_graticule(ax, area)
    geodetic = ccrs.PlateCarree()
    texts = {t.get_text(): t for t in drawn["labels"]}
    assert {"0\u00b0", "10\u00b0E", "45\u00b0N", "50\u00b0N", "55\u00b0N"} <= set(texts)
    lon, _ = geodetic.transform_point(*texts["10\u00b0E"].xy, ax.projection)
    assert lon == pytest.approx(10.0, abs=1e-6)
    x, y = texts["50\u00b0N"].get_position()
    lon, lat = geodetic.transform_point(x, y, ax.projection)
    assert lat == pytest.approx(50.0, abs=1e-6) and area[2] < lon < area[3]


def test_graticule_on_a_plate_carree_map_labels_parallels_at_the_left_edge():
    import cartopy.crs as ccrs

    from parcelcast.render.graticule import draw_graticule

    area = [-30.0, 30.0, 0.0, 120.0]  # tropics: plate carree
    fig, ax = maps.new_map(area)
    assert isinstance(ax.projection, ccrs.PlateCarree)
    texts = {t.get_text(): t for t in draw_graticule(ax, area)["labels"]}
    x, y = texts["10\u00b0S"].xy
    assert x == pytest.approx(min(ax.get_xlim()))
    assert ccrs.PlateCarree().transform_point(x, y, ax.projection)[1] == pytest.approx(-10.0)


@pytest.mark.parametrize("lat,text", [(50.0, "50\u00b0N"), (-12.0, "12\u00b0S"), (0.0, "0\u00b0"),
                                      (2.5, "2.5\u00b0N")])
def test_latitude_text(lat, text):
    from parcelcast.render.graticule import latitude_text

    assert latitude_text(lat) == text


@pytest.mark.parametrize("lon,text", [(5.0, "5\u00b0E"), (-10.0, "10\u00b0W"), (350.0, "10\u00b0W"),
                                      (0.0, "0\u00b0"), (180.0, "180\u00b0"), (-180.0, "180\u00b0")])
def test_longitude_text(lon, text):
    from parcelcast.render.graticule import longitude_text

    assert longitude_text(lon) == text


def test_graticule_spacing_gives_a_handful_of_lines():
    from parcelcast.render.graticule import MAX_LINES, step_for

    for span in (3.0, 20.0, 30.0, 75.0, 180.0, 360.0):
        step = step_for(span)
        assert span / step <= MAX_LINES and span / step >= 2


def test_a_path_that_stops_short_says_where_and_why_on_the_map():
    """A westerly solid-body flow on a grid cut at 10 W: the back trajectory from 50 N 5 E
    leaves the grid before 24 h (the westerly brings the air from beyond the cut)."""
    from parcelcast.render.trajectory_maps import trajectory_map
    from parcelcast.trajectories import compute_trajectories
    from parcelcast.trajectories.analytic import solid_body_dataset
    from parcelcast.trajectories.completeness import ENDED_BECAUSE, hours_covered
    from parcelcast.units import Q_

    ds = solid_body_dataset(hours=24, step_hours=6, resolution=2.0, levels_hpa=(850.0,))
    ds = ds.sel(lon=slice(-10.0, 30.0))
    paths = compute_trajectories(ds, 50.0, 5.0, Q_(850, "hPa"), Q_(-24, "h"), members=3)
    central = int(np.argmax(paths["central"].values))
    covered = hours_covered(paths)[central]
    assert covered < 24.0 and paths["status_name"].values[central] == "left_domain"
    drawn = trajectory_map(paths, station=("Harbour Point", 50.0, 5.0))
    texts = [t.get_text() for t in drawn["marks"] if hasattr(t, "get_text")]
    assert f"  ends at -{covered:.0f} h: {ENDED_BECAUSE['left_domain']}" in texts
    legend = [t.get_text() for t in drawn["axes"].get_legend().get_texts()]
    assert any(t.startswith("X: the central path ended") for t in legend)
