"""Grid geometry: metric terms and derivatives in metres on the analysis grid."""

from parcelcast.grid.latlon import LatLonGrid, grid_for

__all__ = ["LatLonGrid", "grid_for"]
