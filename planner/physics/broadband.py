"""Broadband pulse-echo loss: a Gaussian pulse spectrum through power-law attenuating layers.

A pulse is its centre frequency ``f0`` and the fractional -6 dB bandwidth ``B`` of its
pulse-echo amplitude spectrum, modelled as a Gaussian
``S(f) = exp(-(f - f0)**2 / (2 s**2))`` with ``s = B f0 / (2 sqrt(2 ln 2))`` (the -6 dB full
width of S is ``B f0``). Its power spectrum ``|S|**2 = exp(-(f - f0)**2 / s**2)`` has the
standard deviation ``sigma = s / sqrt(2)``.

Through a layer stack the echo's amplitude at frequency f falls by the round-trip loss
``A(f) = sum_i k_i f**y_i`` dB, with ``k_i = 2 alpha0_i d_i`` (one-way alpha0 in
dB cm^-1 MHz^-y, thickness d in cm). The broadband loss is the ratio of received to emitted
echo energy,

``L = -10 log10( int_0^inf |S|^2 10**(-A(f)/10) df / int_0^inf |S|^2 df )``,

the quantity an energy (RMS) detector and the pymust field simulator report
(Garcia2022SIMUS). High frequencies fade first, so the echo's centre frequency (the mean of
the received power spectrum) shifts down with depth (Kuc1984; NarayanaOphir1983).

For y = 1 the shift is analytic: ``|S|**2 exp(-4 alpha z f)`` (alpha the one-way coefficient
in Np cm^-1 MHz^-1, z the depth) is again Gaussian, centred at

``f_c(z) = f0 - 4 alpha z sigma**2``

(Kuc1984), and the loss is ``L = L_nb - 10 log10(e) * 8 alpha**2 z**2 sigma**2`` below the
narrowband loss ``L_nb = A(f0)`` (derived; the negative-frequency tail is neglected, see
:func:`linear_downshift_mhz`). For y = 2 the product is Gaussian as well. For other exponents
:func:`broadband_loss_db` expands ``A(f)`` to second order about the received centre
frequency (two passes; exact for y = 1 and y = 2 and for any mix of them) and integrates the
resulting truncated Gaussian over f > 0 in closed form; :func:`broadband_loss_numeric_db`
integrates the spectrum numerically for any exponent (the check of the closed form).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from planner.physics._checks import non_negative as _non_negative, positive as _positive
from planner.physics.arrays import distinct

DB_ENERGY: float = 10.0 / np.log(10.0)
"""Decibels per neper of energy, 10 / ln 10. [dB] (identity)"""

SIGMA_PER_BANDWIDTH: float = 1.0 / (2.0 * np.sqrt(2.0 * np.log(2.0)))
"""``s / (B f0)`` of a Gaussian amplitude spectrum whose -6 dB full width is ``B f0``. (identity)"""

_SQRT_PI: float = float(np.sqrt(np.pi))

NARROWBAND_BELOW: float = 1e-3
"""Fractional bandwidths below this are treated as a single frequency (narrowband). [-]"""



def spectrum_sigma_mhz(centre_mhz, bandwidth_fraction):
    """``s`` of the Gaussian amplitude spectrum ``exp(-(f - f0)^2 / (2 s^2))``. [MHz]

    ``s = B f0 / (2 sqrt(2 ln 2))``: 75 % at 5 MHz gives 1.592 MHz (derived).
    """
    return np.asarray(bandwidth_fraction, dtype=float) * np.asarray(centre_mhz, dtype=float) \
        * SIGMA_PER_BANDWIDTH


def _log_erfcx(z):
    """``ln(exp(z^2) erfc(z))`` for any real z, without overflow.

    Chebyshev fit of erfc with fractional error below 1.2e-7 everywhere (Press et al.,
    Numerical Recipes, ``erfcc``; NumericalRecipes, from memory).
    """
    z = np.asarray(z, dtype=float)
    a = np.abs(z)
    t = 1.0 / (1.0 + 0.5 * a)
    poly = -1.26551223 + t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (
        -0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (
            -0.82215223 + t * 0.17087277))))))))
    log_pos = np.log(t) + poly                       # ln erfcx(|z|)
    erfc_abs = t * np.exp(-a * a + poly)             # erfc(|z|) <= 1
    log_neg = a * a + np.log(2.0 - erfc_abs)         # ln erfcx(-|z|)
    return np.where(z >= 0, log_pos, log_neg)


def _weights(y):
    """``[1, y, y (y - 1)]`` per term, shape (..., n, 3): the derivative weights of f^y."""
    y = np.asarray(y, dtype=float)
    if y.ndim == 1 and y.size <= 16:
        return _shared_weights(tuple(y.tolist()))
    return np.stack(np.broadcast_arrays(np.ones_like(y), y, y * (y - 1.0)), axis=-1)


@lru_cache(maxsize=256)
def _shared_weights(y: tuple[float, ...]) -> np.ndarray:
    """:func:`_weights` of exponents shared by every row, computed once per exponent set."""
    v = np.array(y)
    w = np.stack([np.ones_like(v), v, v * (v - 1.0)], axis=-1)
    w.setflags(write=False)
    return w


def _power_sum(k, y, f, weights=None):
    """``sum_i k_i f^y_i`` and its first two f-derivatives (last axis = terms)."""
    fy = k * np.exp(y * np.log(f)[..., None])
    if weights is None:
        weights = _weights(y)
    if weights.ndim == 2:                              # exponents shared by every row
        if fy.size <= 65536:
            sums = fy @ weights
        else:                                          # large: explicit sums, no BLAS threads
            sums = np.stack([(fy * weights[:, j]).sum(axis=-1) for j in range(3)], axis=-1)
    else:
        sums = np.einsum("...u,...uj->...j", fy, np.broadcast_to(weights, fy.shape + (3,)))
    inv = 1.0 / f
    return sums[..., 0], sums[..., 1] * inv, sums[..., 2] * inv * inv


def group_exponents(k, y):
    """Sum the coefficients of terms that share an exponent: ``(K, Y)`` with Y of shape (U,).

    ``sum_i k_i f^y_i = sum_u K_u f^Y_u`` exactly; fewer terms make the loss cheaper. With a
    1-D ``y`` (one exponent per column, as for one window's layers) the grouping is a single
    matrix product.
    """
    k = np.asarray(k, dtype=float)
    y = np.asarray(y, dtype=float)
    if y.ndim == 1:
        onehot, exps = _grouping(tuple(y.tolist()))
        return k @ onehot, exps
    shape = np.broadcast_shapes(k.shape, y.shape)
    k = np.broadcast_to(k, shape)
    y = np.broadcast_to(y, shape)
    exps = distinct(y)
    grouped = np.stack([np.where(y == e, k, 0.0).sum(axis=-1) for e in exps], axis=-1)
    return grouped, exps


@lru_cache(maxsize=256)
def _grouping(y: tuple[float, ...]) -> tuple[np.ndarray, np.ndarray]:
    """One-hot matrix (n, U) from terms to distinct exponents, and the exponents (U,)."""
    exps, inverse = np.unique(np.array(y), return_inverse=True)
    onehot = (inverse[:, None] == np.arange(exps.size)[None, :]).astype(float)
    onehot.setflags(write=False)
    exps.setflags(write=False)
    return onehot, exps


def pulse_loss_db(k, y, centre_mhz, bandwidth_fraction, low_edge_mhz=0.0, passes: int = 3):
    """:func:`broadband_loss_db` without the argument checks, for the engine's inner loops.

    ``y`` of shape (U,) shared by every row (:func:`group_exponents`); the inputs must already
    be valid (finite, k and edges >= 0, centre > 0). Narrowband where B < :data:`NARROWBAND_BELOW`.
    """
    f0 = np.asarray(centre_mhz, dtype=float)
    b = np.asarray(bandwidth_fraction, dtype=float)
    if b.ndim == 0 and b < NARROWBAND_BELOW:
        loss = _power_sum(k, y, np.broadcast_to(f0, np.shape(k)[:-1]))[0]
        return loss, np.broadcast_to(f0, loss.shape).astype(float)
    loss, centre = _loss(k, y, f0, np.maximum(b, NARROWBAND_BELOW),
                         np.asarray(low_edge_mhz, dtype=float), passes)
    if np.all(b >= NARROWBAND_BELOW):
        return loss, centre
    narrow = _power_sum(k, y, np.broadcast_to(f0, loss.shape))[0]
    return np.where(b >= NARROWBAND_BELOW, loss, narrow), np.where(b >= NARROWBAND_BELOW, centre, f0)


def broadband_loss_db(k, y, centre_mhz, bandwidth_fraction, low_edge_mhz=0.0, passes: int = 3):
    """Round-trip energy loss of a Gaussian pulse and its received centre frequency.

    Parameters
    ----------
    k : array, shape (..., n)
        Round-trip loss coefficient of each layer, ``2 alpha0_i d_i``. [dB MHz^-y]
    y : array, shape (..., n)
        Power-law exponent of each layer. [-]
    centre_mhz : float or array, shape (...)
        Centre frequency f0 of the emitted pulse-echo spectrum. [MHz]
    bandwidth_fraction : float or array, shape (...)
        Fractional -6 dB bandwidth B of the pulse-echo spectrum; 0 is narrowband. [-]
    low_edge_mhz : float or array, shape (...)
        The transducer's -40 dB spectral limit: the spectrum is integrated over
        ``f > low_edge_mhz`` (0: the whole Gaussian). It is a property of the transducer (below
        it the probe receives nothing useful), known from a transducer model or measurement,
        e.g. 2.3 MHz for pymust's 5 MHz, 75 % array (derived from its model in the reference
        test). A probe inventory does not carry it and the nominal band's low end is not it,
        so the engine integrates the whole Gaussian
        (:data:`planner.engine.reach.RECEIVE_EDGE_MHZ`). [MHz]

    Returns
    -------
    (loss_db, received_centre_mhz) : arrays, shape (...)
        The energy loss (narrowband: ``A(f0)``) [dB] and the mean frequency of the received
        power spectrum (narrowband: f0) [MHz].

    Notes
    -----
    ``A(f)`` is replaced by its second-order expansion about ``fe`` (first f0, then the
    received centre of the previous pass); ``|S|^2 exp(-A/DB_ENERGY)`` is then a Gaussian
    ``exp(-p (f - m)^2)`` times a constant, whose integral over f > 0 is
    ``sqrt(pi / p) / 2 * erfc(-m sqrt p)`` and whose truncated mean is
    ``m + 1 / (sqrt(pi p) erfcx(-m sqrt p))`` (with a lower edge e, ``-m`` becomes ``e - m``). The curvature is kept at or above
    ``-DB_ENERGY / s^2`` (p >= 1 / (2 s^2)) for exponents below 1.
    """
    k = np.asarray(_non_negative("k", k), dtype=float)
    y = np.asarray(_non_negative("y", y), dtype=float)
    f0 = np.asarray(_positive("centre_mhz", centre_mhz), dtype=float)
    b = np.asarray(_non_negative("bandwidth_fraction", bandwidth_fraction), dtype=float)
    edge = np.asarray(_non_negative("low_edge_mhz", low_edge_mhz), dtype=float)
    shape = np.broadcast_shapes(k.shape[:-1], y.shape[:-1], f0.shape, b.shape, edge.shape)
    f0 = np.broadcast_to(f0, shape)
    broad = b >= NARROWBAND_BELOW
    if not np.any(broad):
        return np.broadcast_to(_power_sum(k, y, f0)[0], shape).copy(), f0.copy()
    loss, centre = _loss(k, y, f0, np.maximum(b, NARROWBAND_BELOW), edge, passes)
    if np.all(broad):
        return loss, centre
    return np.where(broad, loss, _power_sum(k, y, f0)[0]), np.where(broad, centre, f0)


def _loss(k, y, f0, b, edge, passes: int, weights=None):
    """The closed form of :func:`broadband_loss_db` without checks (every B > 0). [dB], [MHz]"""
    weights = _weights(y) if weights is None else weights
    s = spectrum_sigma_mhz(f0, b)
    inv_s2 = 1.0 / (s * s)
    edge = np.minimum(edge, 0.999 * f0)
    z_ref = (edge - f0) / s
    log_ref = _log_erfcx(z_ref) - z_ref * z_ref                          # ln erfc((edge-f0)/s)
    fe = f0
    for _ in range(passes):
        a0, a1, a2 = _power_sum(k, y, fe, weights)
        a2 = np.maximum(a2, -DB_ENERGY * inv_s2)
        p = inv_s2 + a2 * (0.5 / DB_ENERGY)
        m = (2.0 * f0 * inv_s2 + (a2 * fe - a1) / DB_ENERGY) / (2.0 * p)
        root_p = np.sqrt(p)
        z = (edge - m) * root_p
        lx = _log_erfcx(z)
        centre = m + np.exp(-lx) / (_SQRT_PI * root_p)
        c0 = -f0 * f0 * inv_s2 - (a0 - a1 * fe + 0.5 * a2 * fe * fe) / DB_ENERGY
        log_ratio = lx - z * z + p * m * m + c0 - 0.5 * np.log(p * s * s) - log_ref
        fe = np.maximum(centre, np.maximum(edge, 1e-6 * f0))
    return -DB_ENERGY * log_ratio, centre


def broadband_loss_numeric_db(k, y, centre_mhz, bandwidth_fraction, low_edge_mhz: float = 0.0,
                              points: int = 4001):
    """The same loss and received centre by direct numerical integration (any exponent).

    Trapezoid rule over ``low_edge < f <= f0 (1 + 8 B)`` with ``points`` samples (last axis of k
    and y = layers). Slower than :func:`broadband_loss_db`; used to check it. [dB], [MHz]
    """
    k = np.asarray(_non_negative("k", k), dtype=float)
    y = np.asarray(_non_negative("y", y), dtype=float)
    f0 = np.asarray(_positive("centre_mhz", centre_mhz), dtype=float)
    b = float(_positive("bandwidth_fraction", bandwidth_fraction))
    shape = np.broadcast_shapes(k.shape[:-1], y.shape[:-1], f0.shape)
    f0 = np.broadcast_to(f0, shape)
    lo = np.minimum(float(low_edge_mhz) / f0, 0.999)[..., None]
    frac = lo + (1.0 + 8.0 * b - lo) * np.linspace(0.0, 1.0, points)[1:]
    f = f0[..., None] * frac                                           # (..., J)
    s = spectrum_sigma_mhz(f0, b)[..., None]
    power = np.exp(-((f - f0[..., None]) / s) ** 2)
    att_db = np.sum(k[..., None, :] * f[..., None] ** y[..., None, :], axis=-1)
    received = power * 10.0 ** (-att_db / 10.0)
    e0 = np.trapezoid(power, f, axis=-1)
    e1 = np.trapezoid(received, f, axis=-1)
    centre = np.trapezoid(received * f, f, axis=-1) / e1
    return -10.0 * np.log10(e1 / e0), centre


def linear_downshift_mhz(alpha_np_per_cm_mhz, depth_cm, centre_mhz, bandwidth_fraction):
    """Received centre frequency for y = 1, analytic: ``f0 - 4 alpha z sigma^2``. [MHz]

    ``alpha`` is the one-way amplitude coefficient in Np cm^-1 MHz^-1 (dB value / 8.686),
    ``z`` the reflector depth, ``sigma`` the standard deviation of the power spectrum
    (``s / sqrt 2``). Gaussian spectrum, negative frequencies neglected (Kuc1984;
    NarayanaOphir1983). 0.5 dB/cm/MHz, 4 cm, 5 MHz, 75 %: 4.07 MHz (derived).
    """
    sigma2 = spectrum_sigma_mhz(centre_mhz, bandwidth_fraction) ** 2 / 2.0
    return np.asarray(centre_mhz, dtype=float) - 4.0 * np.asarray(alpha_np_per_cm_mhz) * \
        np.asarray(depth_cm) * sigma2


def linear_broadband_loss_db(alpha_np_per_cm_mhz, depth_cm, centre_mhz, bandwidth_fraction):
    """Energy loss for y = 1, analytic: ``L_nb - 10 log10(e) 8 alpha^2 z^2 sigma^2``. [dB]

    ``L_nb = 10 log10(e) 4 alpha z f0`` is the narrowband round-trip loss at f0 (derived from
    the Gaussian of :func:`linear_downshift_mhz`; negative frequencies neglected).
    """
    a = np.asarray(alpha_np_per_cm_mhz, dtype=float)
    z = np.asarray(depth_cm, dtype=float)
    sigma2 = spectrum_sigma_mhz(centre_mhz, bandwidth_fraction) ** 2 / 2.0
    return DB_ENERGY * (4.0 * a * z * np.asarray(centre_mhz) - 8.0 * a * a * z * z * sigma2)
