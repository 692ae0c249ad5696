"""Small array helpers shared by the physics and the engine.

:func:`distinct` replaces ``numpy.unique`` on the start-up path: in numpy 2.4 every call of
``numpy.unique`` without ``return_inverse`` first asks ``numpy.ma`` whether its input is masked,
which imports the masked-array package (about 12 ms) the first time. The planner never uses
masked arrays, so a plain sort and compare gives the same result.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["distinct", "normal_quantile", "quantile"]


def distinct(values) -> np.ndarray:
    """The distinct values of ``values`` (flattened), sorted increasing, as a float array.

    Equal to ``numpy.unique(values)`` for finite floats (NaNs are not collapsed). [-]
    """
    a = np.sort(np.asarray(values, dtype=float).ravel())
    if a.size < 2:
        return a
    keep = np.empty(a.size, dtype=bool)
    keep[0] = True
    np.not_equal(a[1:], a[:-1], out=keep[1:])
    return a[keep]


def quantile(values, q, axis: int = -1) -> np.ndarray:
    """The ``q`` quantile(s) of ``values`` along ``axis``, interpolated linearly between the
    order statistics: position ``(n - 1) * q`` in the sorted values (Hyndman & Fan 1996
    definition 7, numpy's default). Equal to ``numpy.quantile(values, q, axis=axis)``, which
    imports ``numpy.ma`` on its first call in numpy 2.4 (see the module docstring).

    A scalar ``q`` drops ``axis``; a sequence puts its axis first, as numpy does. [-]
    """
    a = np.sort(np.asarray(values, dtype=float), axis=axis)
    a = np.moveaxis(a, axis, -1)
    n = a.shape[-1]
    if n == 0:
        raise ValueError("quantile of an empty array")
    qs = np.asarray(q, dtype=float)
    if np.any((qs < 0.0) | (qs > 1.0)):
        raise ValueError(f"quantiles must lie in [0, 1], got {q!r}")
    h = (n - 1) * qs
    lo = np.floor(h).astype(int)
    hi = np.minimum(lo + 1, n - 1)
    w = h - lo
    below, above = a[..., lo], a[..., hi]
    out = below + (above - below) * w
    if qs.ndim:
        out = np.moveaxis(out, -1, 0)
    return out


def normal_quantile(p) -> np.ndarray:
    """The standard normal quantile (inverse CDF) at probabilities ``p`` in (0, 1).

    Started from the rational approximation of Abramowitz & Stegun 1964, formula 26.2.23
    (absolute error below 4.5e-4), then refined by Newton's method on
    ``Phi(x) = erfc(-x / sqrt 2) / 2`` (``math.erfc``) until the step is below 1e-14. It
    agrees with ``statistics.NormalDist().inv_cdf`` to 1e-12 for 1e-9 <= p <= 1 - 1e-9
    (checked in the tests). The standard library's version is not used here because
    :mod:`statistics` imports :mod:`fractions` and :mod:`decimal` (about 5 ms) at every
    plan's start-up. [-]
    """
    probs = np.asarray(p, dtype=float)
    if np.any((probs <= 0.0) | (probs >= 1.0)) or not np.all(np.isfinite(probs)):
        raise ValueError("normal quantiles need probabilities strictly between 0 and 1")
    out = np.array([_normal_quantile_one(float(v)) for v in probs.ravel()])
    return out.reshape(probs.shape)


def _normal_quantile_one(p: float) -> float:
    tail = min(p, 1.0 - p)
    t = math.sqrt(-2.0 * math.log(tail))
    x = t - ((2.515517 + 0.802853 * t + 0.010328 * t * t)
             / (1.0 + 1.432788 * t + 0.189269 * t * t + 0.001308 * t ** 3))
    x = -x                      # the lower-tail quantile; the upper tail by symmetry
    root2, root2pi = math.sqrt(2.0), math.sqrt(2.0 * math.pi)
    for _ in range(20):
        step = (0.5 * math.erfc(-x / root2) - tail) * root2pi * math.exp(0.5 * x * x)
        x -= step
        if abs(step) < 1e-14 * max(1.0, abs(x)):
            break
    return x if p < 0.5 else -x
