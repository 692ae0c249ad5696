"""Reach ceilings of broadband pulses: the highest centre frequency whose loss fits a budget.

The loss of :func:`planner.physics.broadband.broadband_loss_db` rises with the pulse's centre
frequency, so the ceiling is the root of ``loss(f0) = budget`` in ``ln f0``. Many rows (the
sweep) are solved by a safeguarded secant from the narrowband root, working only on the rows
not yet converged; a few rows (one plan) are read from a monotone table of the loss at
:data:`GRID_POINTS` centre frequencies, evaluated in one vectorised call, and refined once
inside the bracket (within 0.05 dB of the budget against the secant solution, derived).
"""

from __future__ import annotations

import numpy as np

from planner.physics import broadband as _bb


def broadband_ceiling_mhz(k, y, budget_db, bandwidth_fraction, low_edge_mhz=0.0,
                          low_mhz: float = 0.25, high_mhz: float = 40.0, iterations: int = 8,
                          tolerance_db: float = 0.02, passes: int = 2, narrow_mhz=None):
    """Highest centre frequency whose broadband loss fits a budget (any exponents). [MHz]

    Parameters
    ----------
    k, y : arrays, shape (..., n)
        Round-trip coefficients and exponents of the loss terms (:func:`planner.physics.broadband.broadband_loss_db`).
    budget_db : float or array, shape (...)
        Budget left for the frequency-dependent loss. [dB]
    bandwidth_fraction : float or array, shape (...)
        Fractional -6 dB bandwidth; where it is below :data:`planner.physics.broadband.NARROWBAND_BELOW` the
        narrowband power sum is solved exactly
        (:func:`planner.physics.attenuation.solve_power_sum_mhz`).
    low_edge_mhz : float or array, shape (...)
        Lowest frequency received (:func:`planner.physics.broadband.broadband_loss_db`). [MHz]
    narrow_mhz : array, shape (...), optional
        The narrowband root of the same budget, when the caller has it already.

    Returns
    -------
    array, shape (...)
        ``high_mhz`` when even that fits, 0.0 when not even ``low_mhz`` fits.

    Notes
    -----
    The loss rises with the centre frequency (every spectral component moves up with f0).
    In ``u = ln f0`` the narrowband root starts a Newton step with the narrowband slope
    ``sum y_i k_i f^y_i``, followed by at most ``iterations`` safeguarded secant steps (a
    bracket is kept; a step leaving it bisects; steps are clipped to ``[low, high]`` so a
    root outside the range ends on its boundary). Each step works only on the rows not yet
    within ``tolerance_db`` of the budget; the answer is interpolated inside the final
    bracket. ``passes`` expansions of the closed form are used (2 keep it within 0.3 dB of
    the integrated spectrum).
    """
    from planner.physics.attenuation import solve_power_sum_mhz
    k, y = _bb.group_exponents(k, y)
    b_in = np.asarray(bandwidth_fraction, dtype=float)
    budget = np.asarray(budget_db, dtype=float)
    edge = np.asarray(low_edge_mhz, dtype=float)
    shape = np.broadcast_shapes(budget.shape, k.shape[:-1], b_in.shape, edge.shape)
    kf = np.broadcast_to(k, shape + k.shape[-1:]).reshape(-1, k.shape[-1])
    bud = np.broadcast_to(budget, shape).ravel()
    narrow = (solve_power_sum_mhz(kf, y, bud, low_mhz, high_mhz) if narrow_mhz is None
              else np.broadcast_to(np.asarray(narrow_mhz, dtype=float), shape).ravel())
    b = np.broadcast_to(b_in, shape).ravel()
    broad = b >= _bb.NARROWBAND_BELOW
    result = narrow.astype(float).copy()
    if not broad.any():
        return result.reshape(shape)
    idx = np.nonzero(broad)[0]
    result[idx] = ceiling_rows(kf[idx], y, bud[idx], b[idx],
                                np.broadcast_to(edge, shape).ravel()[idx], narrow[idx],
                                low_mhz, high_mhz, iterations, tolerance_db, passes)
    return result.reshape(shape)


def ceiling_rows(k, y, budget, b, edge, narrow=None, low_mhz: float = 0.25,
                 high_mhz: float = 40.0, iterations: int = 8, tolerance_db: float = 0.02,
                 passes: int = 2):
    """:func:`broadband_ceiling_mhz` for flat rows without checks: k (M, U), y (U,), the rest
    (M,) with every B >= :data:`planner.physics.broadband.NARROWBAND_BELOW`; ``narrow`` the narrowband roots (solved
    here when needed and not given). [MHz]"""
    weights = _bb._weights(y)
    lo, hi = float(np.log(low_mhz)), float(np.log(high_mhz))
    m = budget.size
    if m * GRID_POINTS <= GRID_MAX_VALUES and not np.any(edge):   # smooth in ln f0: read a table
        return _ceiling_grid(k, y, budget, b, edge, lo, hi, passes, weights)
    if narrow is None:
        from planner.physics.attenuation import solve_power_sum_mhz
        narrow = solve_power_sum_mhz(k, y, budget, low_mhz, high_mhz)
    u0 = np.clip(np.log(np.maximum(narrow, low_mhz)), lo, hi)

    def g_at(rows, u):
        return _bb._loss(k[rows], y, np.exp(u), b[rows], edge[rows], passes, weights)[0] - budget[rows]

    rows = np.arange(m)
    g0 = g_at(rows, u0)
    a, ga = np.full(m, lo), np.full(m, np.nan)          # fits (g <= 0); NaN: not evaluated
    bb, gb = np.full(m, hi), np.full(m, np.nan)         # does not fit (g > 0)
    fit0 = g0 <= 0
    a, ga = np.where(fit0, u0, a), np.where(fit0, g0, ga)
    bb, gb = np.where(fit0, bb, u0), np.where(fit0, gb, g0)
    slope = _bb._power_sum(k, y, np.exp(u0), weights)[1] * np.exp(u0)          # dA / d ln f
    with np.errstate(divide="ignore", invalid="ignore"):
        u1 = u0 - g0 / np.maximum(slope, 1e-9)
    u_prev, g_prev, u = u0, g0, np.clip(u1, lo, hi)
    active = np.abs(g0) > tolerance_db
    for _ in range(iterations + 1):
        rows = np.nonzero(active)[0]
        if rows.size == 0:
            break
        ur = u[rows]
        gr = g_at(rows, ur)
        fits = gr <= 0
        a[rows] = np.where(fits, ur, a[rows])
        ga[rows] = np.where(fits, gr, ga[rows])
        bb[rows] = np.where(fits, bb[rows], ur)
        gb[rows] = np.where(fits, gb[rows], gr)
        done = (np.abs(gr) <= tolerance_db) | (fits & (ur >= hi)) | (~fits & (ur <= lo))
        with np.errstate(divide="ignore", invalid="ignore"):
            step = ur - gr * (ur - u_prev[rows]) / (gr - g_prev[rows])
        ar, br = a[rows], bb[rows]
        inside = np.isfinite(step) & (step > ar) & (step < br)
        # outside the bracket: bisect a known bracket, else go to the unevaluated boundary
        known = ~np.isnan(ga[rows]) & ~np.isnan(gb[rows])
        step = np.where(inside, step, np.where(known, 0.5 * (ar + br),
                                               np.where(np.isnan(ga[rows]), lo, hi)))
        u_prev[rows], g_prev[rows] = ur, gr
        u[rows] = step
        active[rows] = ~done
    both = ~np.isnan(ga) & ~np.isnan(gb)
    with np.errstate(divide="ignore", invalid="ignore"):
        root = np.where(both & (gb > ga), a - ga * (bb - a) / (gb - ga), np.where(np.isnan(ga), bb, a))
    out = np.exp(np.clip(root, a, bb))
    top_fits = ~np.isnan(ga) & (a >= hi)                   # even the highest frequency fits
    low_fails = ~np.isnan(gb) & (bb <= lo)                 # not even the lowest fits
    return np.where(top_fits, high_mhz, np.where(low_fails, 0.0, out))


GRID_POINTS: int = 25
"""Centre frequencies of the table a few rows' ceilings are read from (log-spaced). [-]"""

GRID_MAX_VALUES: int = 4096
"""Rows x :data:`GRID_POINTS` up to which :func:`ceiling_rows` reads a table instead of
iterating (a few rows: one vectorised evaluation of the table costs what one step costs). Only
without a band edge: an edge puts a kink in the loss at f0 = edge that the table's
interpolation would straddle. [-]"""


def _ceiling_grid(k, y, budget, b, edge, lo, hi, passes, weights, refinements: int = 1):
    """Ceilings of a few rows from a monotone table: the loss at :data:`GRID_POINTS` centre
    frequencies log-spaced over ``[exp(lo), exp(hi)]`` in one evaluation, the bracket of the
    budget read off it, then ``refinements`` regula-falsi (Illinois) steps in ``ln f`` inside the bracket
    (the loss is smooth and increasing in ``ln f0``). [MHz]"""
    u = np.linspace(lo, hi, GRID_POINTS)
    g = _bb._loss(k[:, None, :], y, np.exp(u)[None, :], b[:, None], edge[:, None], passes,
              weights)[0] - budget[:, None]                                   # (M, J)
    fits = g <= 0
    count = fits.sum(axis=1)                       # the table is monotone: fits for j < count
    j = np.clip(count - 1, 0, GRID_POINTS - 2)
    rows = np.arange(budget.size)
    a, bb = u[j], u[j + 1]
    ga, gb = g[rows, j], g[rows, j + 1]
    side = np.zeros(budget.size)
    for _ in range(refinements):
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(gb > ga, -ga / (gb - ga), 0.5)
        um = a + np.clip(t, 0.02, 0.98) * (bb - a)
        gm = _bb._loss(k, y, np.exp(um), b, edge, passes, weights)[0] - budget
        left = gm <= 0
        # Illinois: an end kept twice has its value halved, so the bracket shrinks on both sides
        ga = np.where(~left & (side < 0), 0.5 * ga, ga)
        gb = np.where(left & (side > 0), 0.5 * gb, gb)
        a, ga = np.where(left, um, a), np.where(left, gm, ga)
        bb, gb = np.where(left, bb, um), np.where(left, gb, gm)
        side = np.where(left, 1.0, -1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        root = np.where(gb > ga, a - ga * (bb - a) / (gb - ga), a)
    out = np.exp(np.clip(root, a, bb))
    out = np.where(count >= GRID_POINTS, np.exp(hi), out)
    return np.where(count == 0, 0.0, out)
