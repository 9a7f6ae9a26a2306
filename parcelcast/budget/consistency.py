"""Do the two views of the split agree?  The consistency figure and the split's warnings.

The Eulerian residual is the non-advective change *at the station*; the Lagrangian
non-advective part is that change *along the air's path*.  They agree only where the
non-advective change is uniform along the path and the analyses resolve the flow, so their
difference is a measure of doubt, not an error to be removed: the two are shown side by side
and never forced together.

Both views share the analysed change at the station point, so the difference of their
advective parts (Eulerian minus Lagrangian) equals the difference of their non-advective
parts with the sign reversed.  It is formed on one footing: both ensemble means, or both the
single analysis.

Threshold (a project choice, not a published standard): the split is called consistent when
|Eulerian - Lagrangian| <= max(1 K, 25 % of |observed change|).  1 K is about what 12-hourly
analyses and a trajectory's position error give on a quiet day; 25 % keeps a large change
from being judged on an absolute figure alone.
"""

from __future__ import annotations

import numpy as np

THRESHOLD_FLOOR_K = 1.0  #: K, project choice (see the module docstring)
THRESHOLD_FRACTION = 0.25  #: of |observed change|, project choice
THRESHOLD_RULE = "max(1 K, 25% of the size of the observed change), a project choice"
#: analysis spacing (h) above which a warning says the flow between analyses is interpolated over
#: long gaps: a project choice (6-hourly is the usual cycle of operational analyses)
COARSE_SPACING_H = 6.0

MEANING = ("The Eulerian residual is the non-advective change at the station; the Lagrangian "
           "non-advective part is that change along the air's path. They agree only where it is "
           "uniform along the path and the analyses resolve the flow; the two are shown side by "
           "side and never forced together.")


def footing(n_members: int | None) -> str:
    """How values are formed: the mean of ``n_members`` analysis members, or one analysis."""
    return "single analysis" if n_members is None else f"ensemble mean of {n_members} members"


def threshold_k(observed_change: float) -> float:
    """The largest difference still called consistent (K): max(1 K, 25 % of |observed|)."""
    return max(THRESHOLD_FLOOR_K, THRESHOLD_FRACTION * abs(observed_change))


def assess(eulerian: dict, lagrangian: dict, analysis_spacing_h: float | None = None) -> dict:
    """The ``consistency`` object of a split: the figure, its verdict and the warnings.

    ``eulerian`` is :func:`~parcelcast.budget.eulerian.eulerian_split`'s result (its
    ``point_*`` values are used: the Lagrangian view is at the point), ``lagrangian``
    :func:`~parcelcast.budget.lagrangian.lagrangian_split`'s.  ``consistent`` is None when
    either advective part is missing (nothing to judge).
    """
    observed = eulerian["point_observed_change_K"]
    euler_adv, lagr_adv = eulerian["point_advective_K"], lagrangian["advective_K"]
    n_euler = len(eulerian.get("point_advective_members_K", [])) or None
    n_lagr = len(lagrangian.get("advective_members_K", [])) or None
    if n_euler != n_lagr:  # a programming error, not bad input
        raise ValueError(f"the two views use different members ({n_euler} and {n_lagr})")
    difference = None
    if lagr_adv is not None and np.isfinite(euler_adv):
        difference = euler_adv - lagr_adv
    limit = threshold_k(observed) if np.isfinite(observed) else None
    out = {
        "footing": footing(n_euler),
        "eulerian_minus_lagrangian_K": difference,
        "ratio_to_observed_change": (difference / observed if difference is not None
                                     and abs(observed) > 1e-6 else None),
        "observed_change_K": observed,
        "threshold_K": limit,
        "threshold_rule": THRESHOLD_RULE,
        "consistent": (None if difference is None or limit is None else bool(abs(difference) <= limit)),
        "meaning": MEANING,
    }
    out["warnings"] = _warnings(out, eulerian, lagrangian, analysis_spacing_h)
    return out


def verdict(c: dict) -> str:
    """The verdict in words, with the share of the observed change and the limit."""
    word = {True: "consistent", False: "NOT consistent", None: "cannot be judged"}[c["consistent"]]
    ratio = "" if c["ratio_to_observed_change"] is None else \
        f"{abs(c['ratio_to_observed_change']):.0%} of the observed change: "
    limit = "" if c["threshold_K"] is None else f" (limit {c['threshold_K']:.2f} K = {c['threshold_rule']})"
    return f"{ratio}{word}{limit}"


def summary(c: dict) -> str:
    """One line: the figure, its footing and the verdict."""
    d = c["eulerian_minus_lagrangian_K"]
    figure = "n/a" if d is None else f"{d:+.2f} K"
    return f"Eulerian minus Lagrangian advective part ({c['footing']}): {figure}, {verdict(c)}"


def _warnings(c: dict, eulerian: dict, lagrangian: dict, spacing_h) -> list[str]:
    warnings = []
    if c["consistent"] is False:
        ratio = "" if c["ratio_to_observed_change"] is None else \
            f" ({abs(c['ratio_to_observed_change']):.0%} of the observed change)"
        warnings.append(
            f"inconsistent split: the Eulerian and Lagrangian advective parts differ by "
            f"{c['eulerian_minus_lagrangian_K']:+.2f} K{ratio}, beyond {c['threshold_K']:.2f} K "
            f"= {THRESHOLD_RULE}; the non-advective change is not uniform along the path or the "
            "analyses do not resolve the flow: trust neither residual alone")
    if c["consistent"] is None:
        warnings.append("consistency cannot be judged: an advective part is missing")
    if not eulerian["vertical_available"] and not eulerian.get("at_surface"):  # no omega at 2 m
        warnings.append("no omega in the analysis: the residual holds the vertical-motion term "
                        "as well as diabatic heating and errors")
    if lagrangian["reached_start"] < lagrangian["trajectories"]:
        warnings.append(f"{lagrangian['trajectories'] - lagrangian['reached_start']} of "
                        f"{lagrangian['trajectories']} back trajectories did not reach the window "
                        f"start (statuses: {', '.join(lagrangian['statuses'])})")
    if eulerian["observed_source"] != "analysis" or "area" in eulerian:
        warnings.append("the Eulerian parts shown use the "
                        + ("station series" if eulerian["observed_source"] != "analysis" else "area mean")
                        + "; the comparison with the Lagrangian view uses the analysed values at the point")
    if spacing_h is not None and spacing_h > COARSE_SPACING_H:
        warnings.append(f"analyses up to {spacing_h:g} h apart: both views assume the flow varies "
                        "linearly in time between them")
    return warnings
