"""Lines given in longitude and latitude, projected once into a map's own coordinates.

What belongs here: turning many polylines (coastlines, borders, graticule lines, trajectory
segments) into one matplotlib collection in the map's data coordinates, with one vectorised
call to the projection.  Cartopy would instead project each path at every draw; for the
regional maps of a briefing that is most of the drawing time.  The direct projection is
exact for the vertices; between vertices the line is straight on the map, which is what the
dense shapes and short trajectory steps need.  Vertices the projection cannot place
(non-finite) break the line there, and so does a step longer than half the map's width (a
line crossing the projection's cut, which would otherwise be drawn across the whole map).
"""

from __future__ import annotations

import numpy as np


def project_points(ax, lon, lat):
    """Map coordinates ``(x, y)`` of points given in degrees, for the cartopy axes ``ax``."""
    import cartopy.crs as ccrs

    lon, lat = np.asarray(lon, dtype=np.float64), np.asarray(lat, dtype=np.float64)
    xyz = ax.projection.transform_points(ccrs.PlateCarree(), lon.ravel(), lat.ravel())
    return xyz[:, 0].reshape(lon.shape), xyz[:, 1].reshape(lon.shape)


def projected_collection(ax, polylines, **style):
    """One ``LineCollection`` of ``polylines`` (each an ``N x 2`` array of longitude, latitude
    in degrees) in the map coordinates of ``ax``; returns ``(collection, projected arrays)``.

    ``style`` goes to the collection, which is not added to the axes
    (``ax.add_collection(c, autolim=False)``).
    """
    from matplotlib.collections import LineCollection

    if not polylines:
        return LineCollection([], **style), []
    sizes = [len(p) for p in polylines]
    stacked = np.concatenate([np.asarray(p, dtype=np.float64).reshape(-1, 2) for p in polylines])
    x, y = project_points(ax, stacked[:, 0], stacked[:, 1])
    xy = np.column_stack([x, y])
    xy[~np.isfinite(xy).all(axis=1)] = np.nan  # a break in the line, not a jump
    width = abs(np.diff(ax.get_xlim())[0])
    jump = np.hypot(*np.diff(xy, axis=0).T) > 0.5 * width
    jump[np.cumsum(sizes)[:-1] - 1] = False  # from one polyline to the next is no step
    xy[1:][jump] = np.nan
    projected = np.split(xy, np.cumsum(sizes)[:-1])
    return LineCollection(projected, **style), projected


def shape_polylines(geometries) -> list[np.ndarray]:
    """The line strings of shapely line geometries (lines and multi-lines, as the Natural
    Earth coastlines and borders are) as ``N x 2`` arrays of longitude, latitude."""
    import shapely

    parts = shapely.get_parts(np.asarray(geometries, dtype=object))
    coords, index = shapely.get_coordinates(parts, return_index=True)
    if not len(coords):
        return []
    breaks = np.flatnonzero(np.diff(index)) + 1
    return [c for c in np.split(coords, breaks) if len(c) >= 2]
