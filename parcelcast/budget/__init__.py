"""The trend split: advective and non-advective parts of a temperature change, two ways.

Modules, one job each:

* :mod:`~parcelcast.budget.windows`: which analysis times a window uses, and their weights;
* :mod:`~parcelcast.budget.eulerian`: the split at the station (and as maps) from the analyses;
* :mod:`~parcelcast.budget.lagrangian`: the split following the air (back trajectories);
* :mod:`~parcelcast.budget.consistency`: how far the two views agree, and the split's warnings;
* :mod:`~parcelcast.budget.trend`: both views side by side, with their consistency;
* :mod:`~parcelcast.budget.guidance`: station guidance for the next hours.

See ``design_notes/trend_split.md`` for the method.
"""

from parcelcast.budget.eulerian import WINDS, check_wind, eulerian_split, split_fields
from parcelcast.budget.guidance import station_guidance
from parcelcast.budget.lagrangian import lagrangian_split
from parcelcast.budget.trend import trend_split
from parcelcast.budget.windows import interpolation_weights, linear_time_weights

__all__ = ["WINDS", "check_wind", "eulerian_split", "interpolation_weights", "lagrangian_split",
           "linear_time_weights", "split_fields", "station_guidance", "trend_split"]
