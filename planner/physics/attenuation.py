"""Attenuation: the power law, round-trip loss through a layer stack, reach.

Conventions: attenuation coefficients are one way, in dB per cm, at 1 MHz
(``attenuation_db_per_cm_mhz`` = alpha0) with a power-law exponent y:
``alpha(f) = alpha0 * f**y``. Round-trip loss is twice the one-way loss. Layer
arrays broadcast: the last axis runs over layers.

References
----------
Kremkau2015 (attenuation chapter); TeachingAttenuationRule ("one half the frequency
per centimetre", half-intensity depth about 6/f cm); RadiologyPhysicsSummary
(penetration about 40/f cm); Szabo2004 ch. 4 (power-law attenuation).
"""

from __future__ import annotations

import numpy as np

from planner.physics._checks import positive as _positive, non_negative as _non_negative

from planner.physics.interfaces import intensity_transmission_normal

_TEN_LOG10_2 = 10.0 * np.log10(2.0)


def attenuation_db_per_cm(frequency_mhz, attenuation_db_per_cm_mhz, attenuation_exponent=1.0):
    """Attenuation coefficient at a frequency, one way.

    Parameters
    ----------
    frequency_mhz : float or array
        Frequency. [MHz]
    attenuation_db_per_cm_mhz : float or array
        alpha0, the coefficient at 1 MHz. [dB cm^-1 MHz^-y]
    attenuation_exponent : float or array
        Power-law exponent y. [-]

    Returns
    -------
    float or array
        ``alpha0 * f**y``. [dB/cm]

    Notes
    -----
    Power law ``alpha(f) = alpha0 f^y`` (Szabo2004 ch. 4). With alpha0 = 0.5 and y = 1
    this is the teaching rule "one half the frequency per centimetre"
    (TeachingAttenuationRule): 6 dB/cm at 12 MHz.
    """
    f = _positive("frequency_mhz", frequency_mhz)
    a0 = _non_negative("attenuation_db_per_cm_mhz", attenuation_db_per_cm_mhz)
    y = _non_negative("attenuation_exponent", attenuation_exponent)
    return a0 * f ** y


def one_way_attenuation_db(thickness_cm, frequency_mhz, attenuation_db_per_cm_mhz,
                           attenuation_exponent=1.0):
    """Attenuation across a thickness of one tissue, one way. [dB]

    ``alpha0 * f**y * d`` with ``d`` in cm (Kremkau2015).
    """
    d = _non_negative("thickness_cm", thickness_cm)
    return attenuation_db_per_cm(frequency_mhz, attenuation_db_per_cm_mhz,
                                 attenuation_exponent) * d


def round_trip_attenuation_db(thickness_cm, frequency_mhz, attenuation_db_per_cm_mhz,
                              attenuation_exponent=1.0):
    """Attenuation down and back through one tissue: twice the one-way loss. [dB]"""
    return 2.0 * one_way_attenuation_db(thickness_cm, frequency_mhz,
                                        attenuation_db_per_cm_mhz, attenuation_exponent)


def interface_round_trip_loss_db(impedance_mrayl):
    """Two-way transmission loss across every interface of a layer stack.

    Parameters
    ----------
    impedance_mrayl : array, shape (..., n_layers)
        Characteristic impedance of each layer in order from the probe. [MRayl]

    Returns
    -------
    array, shape (...)
        ``-2 * sum(10 log10 T_i)`` over the n-1 interfaces, with T the normal-incidence
        intensity transmission coefficient (ALevelPhysics). [dB]
    """
    z = np.asarray(_positive("impedance_mrayl", impedance_mrayl))
    if z.ndim == 0 or z.shape[-1] < 2:
        return np.zeros(z.shape[:-1])
    t = intensity_transmission_normal(z[..., :-1], z[..., 1:])
    return -2.0 * np.sum(10.0 * np.log10(t), axis=-1)


def stack_round_trip_loss_db(thickness_cm, frequency_mhz, attenuation_db_per_cm_mhz,
                             attenuation_exponent, impedance_mrayl=None):
    """Round-trip loss to the bottom of a layer stack, interfaces included.

    Parameters
    ----------
    thickness_cm : array, shape (..., n_layers)
        Layer thicknesses, probe first. [cm]
    frequency_mhz : float or array, shape (...)
        Frequency. [MHz]
    attenuation_db_per_cm_mhz, attenuation_exponent : array, shape (..., n_layers)
        Power-law parameters of each layer.
    impedance_mrayl : array, shape (..., n_layers), optional
        When given, the two-way interface transmission loss is added. [MRayl]

    Returns
    -------
    array, shape (...)
        ``2 * sum(alpha_i(f) d_i) + interface loss``. [dB]
    """
    d = _non_negative("thickness_cm", thickness_cm)
    f = np.asarray(_positive("frequency_mhz", frequency_mhz))
    alpha = attenuation_db_per_cm(f[..., None], attenuation_db_per_cm_mhz,
                                  attenuation_exponent)
    loss = 2.0 * np.sum(alpha * d, axis=-1)
    if impedance_mrayl is not None:
        loss = loss + interface_round_trip_loss_db(impedance_mrayl)
    return loss


def half_intensity_depth_cm(frequency_mhz, attenuation_db_per_cm_mhz=0.5,
                            attenuation_exponent=1.0):
    """Depth at which the one-way intensity has fallen by half (3.01 dB). [cm]

    ``HID = 10 log10(2) / (alpha0 f^y)``; in average soft tissue (0.5 dB/cm/MHz) this is
    the teaching rule HID ~ 6/f: 1.2 cm at 5 MHz, 0.5 cm at 12 MHz
    (TeachingAttenuationRule; Kremkau2015).
    """
    return _TEN_LOG10_2 / attenuation_db_per_cm(frequency_mhz, attenuation_db_per_cm_mhz,
                                                attenuation_exponent)


def max_frequency_for_budget_mhz(budget_db, thickness_cm, attenuation_db_per_cm_mhz,
                                 attenuation_exponent, fixed_loss_db=0.0,
                                 harmonic=False, low_mhz=0.25, high_mhz=40.0,
                                 iterations=30):
    """Highest frequency whose round-trip loss to the stack bottom fits a signal budget.

    Parameters
    ----------
    budget_db : float or array, shape (...)
        Usable round-trip loss. [dB]
    thickness_cm, attenuation_db_per_cm_mhz, attenuation_exponent : array, shape (..., n)
        The layer stack, as in :func:`stack_round_trip_loss_db`.
    fixed_loss_db : float or array, shape (...)
        Frequency-independent losses (interfaces, harmonic conversion). [dB]
    harmonic : bool
        When true, the per-cm loss is ``alpha(f) + alpha(2f)`` (transmit f, receive 2f),
        so the answer is the highest *transmit* frequency.
    low_mhz, high_mhz : float
        Search interval. [MHz]

    Returns
    -------
    array, shape (...)
        The frequency where the loss equals the budget. ``high_mhz`` when even that fits;
        0.0 when not even ``low_mhz`` fits. [MHz]

    Notes
    -----
    The loss is ``L(f) = sum_i k_i f**y_i`` with ``k_i = 2 alpha0_i d_i`` (times
    ``(1 + 2**y_i) / 2`` for harmonic imaging), so it works for any exponents. In
    ``u = ln f``, ``L`` is a sum of exponentials: increasing and convex. Newton's method
    started right of the root (at ``high_mhz``) therefore descends monotonically onto it
    and converges quadratically; 30 steps are far more than needed. For one layer with
    y = 1 the answer is ``f = (D - L0) / (2 alpha0 d)``, the general form of the 40/f rule
    (RadiologyPhysicsSummary).
    """
    d = _non_negative("thickness_cm", thickness_cm)
    a0 = _non_negative("attenuation_db_per_cm_mhz", attenuation_db_per_cm_mhz)
    y = np.asarray(_non_negative("attenuation_exponent", attenuation_exponent))
    budget = np.asarray(budget_db, dtype=float) - np.asarray(fixed_loss_db, dtype=float)
    k = 2.0 * a0 * d
    if harmonic:
        k = k * 0.5 * (1.0 + 2.0 ** y)
    return solve_power_sum_mhz(k, y, budget, low_mhz, high_mhz, iterations)


def solve_power_sum_mhz(k, y, budget, low_mhz=0.25, high_mhz=40.0, iterations=30):
    """Largest f in [low, high] with ``sum_i k_i f**y_i <= budget`` (last axis = terms). [MHz]

    Newton's method in ``u = ln f`` from the right of the root (the sum of exponentials is
    increasing and convex in u, so the iterates descend monotonically onto the root).
    Returns ``high_mhz`` when even that fits and 0.0 when not even ``low_mhz`` fits.
    """
    k = np.asarray(k, dtype=float)
    y = np.asarray(y, dtype=float)
    budget = np.asarray(budget, dtype=float)
    shape = np.broadcast_shapes(budget.shape, k.shape[:-1], y.shape[:-1])
    k = np.broadcast_to(k, shape + k.shape[-1:])
    y = np.broadcast_to(y, shape + y.shape[-1:])
    budget = np.broadcast_to(budget, shape)
    u_high = np.log(high_mhz)
    u_floor = np.log(low_mhz) - 1.0
    u = np.full(shape, u_high)
    for _ in range(iterations):
        terms = k * np.exp(y * u[..., None])
        g = terms.sum(axis=-1) - budget
        slope = (terms * y).sum(axis=-1)
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            step = np.divide(g, slope, out=np.zeros(shape), where=slope > 0)
        step = np.clip(step, 0.0, 50.0)
        u = np.maximum(u - step, u_floor)
        if step.max(initial=0.0) <= 1e-12:
            break
    top_fits = (k * high_mhz ** y).sum(axis=-1) <= budget
    low_fits = (k * low_mhz ** y).sum(axis=-1) <= budget
    result = np.where(top_fits, high_mhz, np.exp(np.clip(u, np.log(low_mhz), u_high)))
    return np.where(low_fits, result, 0.0)
