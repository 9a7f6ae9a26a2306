"""Time-stepping schemes for trajectories on the sphere, vectorised over parcels.

Each scheme advances the state ``(x, z)`` from ``t`` to ``t + dt`` (``dt`` may be negative:
backward trajectories), where ``x`` (n, 3) are unit position vectors and ``z`` (n,) is the
vertical coordinate (pressure in Pa; constant potential temperature in isentropic mode).
The tendency function is ``f(x, z, t) -> (dxdt, dzdt, code)`` with ``dxdt`` the tangent
velocity divided by the Earth's radius (s-1, shape (n, 3)), ``dzdt`` (n,) and ``code`` (n,)
an integer status (0 = fine).  Intermediate positions are renormalised to the unit sphere
before the tendency is evaluated, so the stepping works the same at the poles as elsewhere.

A parcel whose tendency fails at any stage (``code != 0``) keeps its old state; the code is
returned so the driver can stop it.

References
----------
Petterssen, S. (1956). Weather Analysis and Forecasting, Vol. 1, 2nd ed. McGraw-Hill, 27-30
    (iterative mean-velocity scheme for kinematic trajectories).
Merrill, J. T., Bleck, R. and Avila, L. (1985). Modeling atmospheric transport using
    isentropic analyses. J. Climate Appl. Meteor. 24, 1193-1200 (iterative use in practice).
Butcher, J. C. (2016). Numerical Methods for Ordinary Differential Equations, 3rd ed.
    Wiley, section 23 (classical fourth-order Runge-Kutta).
"""

from __future__ import annotations

import numpy as np

from parcelcast.trajectories.sphere import normalise


def _merge(code, new):
    return np.where(code == 0, new, code)


def petterssen_step(f, x, z, t, dt, iterations: int = 3):
    """One step of the iterative Petterssen scheme.

    First guess ``x1 = x + dt f(x, t)``, then ``iterations`` corrections
    ``x1 = x + dt/2 (f(x, t) + f(x1, t + dt))`` (trapezoidal mean velocity).  Second-order
    accurate once converged; for solid-body rotation the converged step is an exact
    rotation with angle ``2 atan(omega dt / 2)``.

    Returns
    -------
    x1 : ndarray (n, 3), z1 : ndarray (n,), code : ndarray (n,) int8
    """
    d0, e0, code = f(x, z, t)
    x1 = normalise(x + dt * d0)
    z1 = z + dt * e0
    for _ in range(iterations):
        d1, e1, c1 = f(x1, z1, t + dt)
        x1 = normalise(x + 0.5 * dt * (d0 + d1))
        z1 = z + 0.5 * dt * (e0 + e1)
    code = _merge(code, c1) if iterations else code
    bad = code != 0
    if bad.any():
        x1[bad] = x[bad]
        z1[bad] = z[bad]
    return x1, z1, code


def rk4_step(f, x, z, t, dt):
    """One step of the classical fourth-order Runge-Kutta scheme (stages renormalised).

    Returns
    -------
    x1 : ndarray (n, 3), z1 : ndarray (n,), code : ndarray (n,) int8
    """
    h = 0.5 * dt
    d1, e1, code = f(x, z, t)
    d2, e2, c = f(normalise(x + h * d1), z + h * e1, t + h)
    code = _merge(code, c)
    d3, e3, c = f(normalise(x + h * d2), z + h * e2, t + h)
    code = _merge(code, c)
    d4, e4, c = f(normalise(x + dt * d3), z + dt * e3, t + dt)
    code = _merge(code, c)
    x1 = normalise(x + (dt / 6.0) * (d1 + 2.0 * (d2 + d3) + d4))
    z1 = z + (dt / 6.0) * (e1 + 2.0 * (e2 + e3) + e4)
    bad = code != 0
    if bad.any():
        x1[bad] = x[bad]
        z1[bad] = z[bad]
    return x1, z1, code


SCHEMES = {"petterssen": petterssen_step, "rk4": rk4_step}
