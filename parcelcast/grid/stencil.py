"""Second-order finite-difference stencils on one axis (uniform or not, periodic or open).

A :class:`Stencil` holds, for every output point, three neighbour indices and
their weights, so that ``df/dx[i] = sum_k w[i, k] * f[idx[i, k]]``:

* interior points: centred three-point formula for uneven spacing,
  second-order accurate (exact for quadratics);
* open edges: one-sided three-point formula, also second order;
* periodic axes: the neighbours wrap around (longitude on a global grid).

Uniform axes also keep the plain spacing ``h`` so kernels can use slices
instead of gathers (the fast path).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Stencil:
    """Three-point first-derivative stencil along one axis (positions in any unit)."""

    index: np.ndarray  # (n, 3) int
    weight: np.ndarray  # (n, 3) float64, per unit of the positions
    periodic: bool
    spacing: float | None  # the step if uniform, else None

    @classmethod
    def build(cls, positions, periodic: bool = False, period: float | None = None) -> Stencil:
        """Stencil for strictly increasing ``positions``; ``period`` closes a periodic axis."""
        x = np.asarray(positions, dtype=np.float64)
        n = x.size
        if n < 3:
            raise ValueError(f"at least 3 points are needed for a derivative, got {n}")
        if np.any(np.diff(x) <= 0):
            raise ValueError("positions must increase strictly")
        index = np.empty((n, 3), dtype=np.intp)
        weight = np.empty((n, 3), dtype=np.float64)
        i = np.arange(n)
        if periodic:
            if period is None:
                raise ValueError("a periodic axis needs its period")
            prev_x = np.roll(x, 1)
            prev_x[0] -= period
            next_x = np.roll(x, -1)
            next_x[-1] += period
            index[:] = np.stack([(i - 1) % n, i, (i + 1) % n], axis=1)
            weight[:] = centred_weights(x - prev_x, next_x - x)
        else:
            index[1:-1] = np.stack([i[1:-1] - 1, i[1:-1], i[1:-1] + 1], axis=1)
            weight[1:-1] = centred_weights(x[1:-1] - x[:-2], x[2:] - x[1:-1])
            index[0] = (0, 1, 2)
            weight[0] = _one_sided_weights(x[1] - x[0], x[2] - x[0])
            index[-1] = (n - 1, n - 2, n - 3)
            weight[-1] = _one_sided_weights(x[-2] - x[-1], x[-3] - x[-1])
        steps = np.diff(x)
        if periodic:
            steps = np.append(steps, x[0] + period - x[-1])
        uniform = np.allclose(steps, steps[0], rtol=1e-9, atol=0.0)
        return cls(index=index, weight=weight, periodic=periodic,
                   spacing=float(steps[0]) if uniform else None)

    def apply(self, f: np.ndarray, axis: int) -> np.ndarray:
        """First derivative of ``f`` along ``axis`` (NaN neighbours give NaN)."""
        f = np.moveaxis(np.asarray(f, dtype=np.float64), axis, -1)
        if self.spacing is not None:
            out = self._apply_uniform(f)
        else:
            out = (f[..., self.index[:, 0]] * self.weight[:, 0]
                   + f[..., self.index[:, 1]] * self.weight[:, 1]
                   + f[..., self.index[:, 2]] * self.weight[:, 2])
        return np.moveaxis(out, -1, axis)

    def _apply_uniform(self, f: np.ndarray) -> np.ndarray:
        h2 = 2.0 * self.spacing
        out = np.empty_like(f)
        np.subtract(f[..., 2:], f[..., :-2], out=out[..., 1:-1])
        if self.periodic:
            out[..., 0] = f[..., 1] - f[..., -1]
            out[..., -1] = f[..., 0] - f[..., -2]
        else:
            out[..., 0] = -3.0 * f[..., 0] + 4.0 * f[..., 1] - f[..., 2]
            out[..., -1] = 3.0 * f[..., -1] - 4.0 * f[..., -2] + f[..., -3]
        out *= 1.0 / h2
        return out


def centred_weights(h_minus, h_plus) -> np.ndarray:
    """Weights of f[i-1], f[i], f[i+1] for uneven steps h- and h+ (second order)."""
    hm = np.asarray(h_minus, dtype=np.float64)
    hp = np.asarray(h_plus, dtype=np.float64)
    return np.stack([-hp / (hm * (hm + hp)), (hp - hm) / (hm * hp), hm / (hp * (hm + hp))], axis=-1)


def _one_sided_weights(d1: float, d2: float) -> np.ndarray:
    """Weights of f[0], f[1], f[2] at point 0 given offsets d1 = x1 - x0, d2 = x2 - x0.

    Works on either side (offsets negative at the upper edge); exact for quadratics.
    """
    return np.array([-(d1 + d2) / (d1 * d2), d2 / (d1 * (d2 - d1)), -d1 / (d2 * (d2 - d1))])
