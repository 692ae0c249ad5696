"""Broadband pulse-echo loss and body-wall aberration.

Checks: the analytic Gaussian results of Kuc1984 / NarayanaOphir1983 for y = 1 (centre
frequency f0 - 4 alpha sigma^2 z) and the exact Gaussian product for y = 2, both against an
independent trapezoid integration of the spectrum; the closed form for other exponents
against the same integration; the Gaussian phase-screen loss against a Monte-Carlo phase
screen (Goodman2000StatOptics); the chest-wall anchor of Hinkelman1997Chest.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from planner.physics import aberration, broadband, ceiling

NP_PER_DB = 1.0 / 8.685889638065035


def test_linear_downshift_matches_numerical_integration():
    """y = 1, 0.5 dB/cm/MHz, 5 MHz, 75 %: Kuc's f0 - 4 alpha sigma^2 z vs trapezoid (Kuc1984)."""
    for depth, tol in ((1.0, 2e-3), (2.0, 2e-3), (4.0, 2e-3), (6.0, 5e-3)):
        k = np.array([2 * 0.5 * depth])
        _, numeric_centre = broadband.broadband_loss_numeric_db(k, np.array([1.0]), 5.0, 0.75)
        numeric_loss, _ = broadband.broadband_loss_numeric_db(k, np.array([1.0]), 5.0, 0.75)
        analytic = broadband.linear_downshift_mhz(0.5 * NP_PER_DB, depth, 5.0, 0.75)
        loss = broadband.linear_broadband_loss_db(0.5 * NP_PER_DB, depth, 5.0, 0.75)
        # the analytic form neglects the spectrum's negative-frequency tail, which grows with depth
        assert float(numeric_centre) == pytest.approx(float(analytic), rel=tol)
        assert float(numeric_loss) == pytest.approx(float(loss), abs=0.05)


def test_kuc_shift_worked_value():
    """0.5 dB/cm/MHz, 4 cm, 5 MHz, 75 %: sigma^2 = 1.267 MHz^2 -> 5 - 4 x 0.05757 x 4 x 1.267 = 3.83 MHz
    (derived from Kuc1984's formula); the closed form used by the engine agrees."""
    s = 0.75 * 5.0 / (2 * math.sqrt(2 * math.log(2)))
    expected = 5.0 - 4 * 0.5 * NP_PER_DB * 4.0 * s * s / 2
    assert expected == pytest.approx(3.833, abs=0.002)
    _, centre = broadband.broadband_loss_db(np.array([4.0]), np.array([1.0]), 5.0, 0.75)
    assert float(centre) == pytest.approx(expected, abs=0.01)


def test_quadratic_exponent_is_exact_gaussian_product():
    """y = 2: |S|^2 exp(-K f^2 / 4.343) is Gaussian, centre f0 / (1 + K s^2 / 4.343) (derived)."""
    f0, bw, kk = 4.0, 0.6, 0.8
    s = broadband.spectrum_sigma_mhz(f0, bw)
    q = kk / broadband.DB_ENERGY
    centre = f0 / (1 + q * s * s)
    loss = -broadband.DB_ENERGY * (-0.5 * math.log(1 + q * s * s) - q * f0 ** 2 / (1 + q * s * s))
    got_loss, got_centre = broadband.broadband_loss_db(np.array([kk]), np.array([2.0]), f0, bw)
    num_loss, num_centre = broadband.broadband_loss_numeric_db(np.array([kk]), np.array([2.0]), f0, bw)
    assert float(got_centre) == pytest.approx(centre, rel=1e-3)
    assert float(got_loss) == pytest.approx(loss, abs=0.02)
    assert float(num_loss) == pytest.approx(loss, abs=0.02)
    assert float(num_centre) == pytest.approx(centre, rel=1e-3)


@pytest.mark.parametrize("exponent", [1.0, 1.1, 1.21, 1.3, 1.5, 2.0])
@pytest.mark.parametrize("bandwidth,edge", [(0.6, 0.0), (0.75, 0.0), (0.6, 1.0), (0.75, 4.0)])
def test_closed_form_matches_numerical_spectrum(exponent, bandwidth, edge):
    """Any exponent: the expanded closed form within 0.3 dB of the integrated spectrum up to
    150 dB of single-frequency loss (independent trapezoid integration)."""
    for f0 in (3.0, 5.0, 10.0):
        if f0 <= edge:
            continue
        for narrow in (5.0, 20.0, 40.0, 60.0, 80.0, 120.0, 150.0):
            k = np.array([narrow / f0 ** exponent])
            y = np.array([exponent])
            loss, centre = broadband.broadband_loss_db(k, y, f0, bandwidth, edge)
            ref, ref_centre = broadband.broadband_loss_numeric_db(k, y, f0, bandwidth, edge, 20001)
            assert float(loss) == pytest.approx(float(ref), abs=0.3)
            assert float(centre) == pytest.approx(float(ref_centre), abs=0.05 * f0)


def test_narrowband_limit():
    """B -> 0 gives the single-frequency loss sum(k f0^y) and no shift (identity)."""
    k, y = np.array([3.0, 10.0]), np.array([1.0, 1.1])
    loss, centre = broadband.broadband_loss_db(k, y, 4.0, 0.0)
    assert float(loss) == pytest.approx(float((k * 4.0 ** y).sum()))
    assert float(centre) == 4.0
    near, _ = broadband.broadband_loss_db(k, y, 4.0, 0.01)
    assert float(near) == pytest.approx(float(loss), rel=2e-3)


@settings(max_examples=60, deadline=None)
@given(st.floats(0.5, 15.0), st.floats(0.2, 1.2), st.floats(1.0, 2.0), st.floats(0.1, 8.0))
def test_loss_rises_with_depth_and_frequency(f0, bandwidth, exponent, depth):
    """Property: deeper or higher means more loss; the centre never rises (monotonic in depth)."""
    y = np.array([exponent])
    a, ca = broadband.broadband_loss_db(np.array([depth]), y, f0, bandwidth)
    b, cb = broadband.broadband_loss_db(np.array([depth * 1.2]), y, f0, bandwidth)
    c, _ = broadband.broadband_loss_db(np.array([depth]), y, f0 * 1.2, bandwidth)
    assert np.isfinite(a) and b >= a - 1e-9 and c >= a - 1e-9 and cb <= ca + 1e-9


def test_ceiling_solves_the_budget():
    """The reach ceiling's broadband loss equals the budget (to 0.1 dB) for mixed stacks."""
    rng = np.random.default_rng(3)
    k = rng.uniform(0.0, 3.0, (400, 4))
    y = rng.choice([1.0, 1.1, 1.5, 2.0], (400, 4))
    budget = rng.uniform(20.0, 70.0, 400)
    f = ceiling.broadband_ceiling_mhz(k, y, budget, 0.6, 1.0, high_mhz=18.0)
    inside = (f > 0.25) & (f < 18.0)
    loss = broadband.broadband_loss_db(k[inside], y[inside], f[inside], 0.6, 1.0)[0]
    assert np.max(np.abs(loss - budget[inside])) < 0.1


def test_few_rows_ceiling_from_the_table_solves_the_budget():
    """A few rows (one plan) are read from the loss table and refined once: the loss at the
    ceiling is within 0.1 dB of the budget, and the table agrees with the secant solution of the
    same rows solved among many (identity of two solvers of one equation)."""
    rng = np.random.default_rng(4)
    k = rng.uniform(0.0, 3.0, (4000, 4))
    y = np.array([1.0, 1.1, 1.5, 2.0])
    budget = rng.uniform(20.0, 70.0, 4000)
    many = ceiling.ceiling_rows(k, y, budget, np.full(4000, 0.6), np.zeros(4000))
    few = np.concatenate([ceiling.ceiling_rows(k[i:i + 5], y, budget[i:i + 5], np.full(5, 0.6),
                                               np.zeros(5)) for i in range(0, 4000, 5)])
    inside = (few > 0.25) & (few < 40.0)
    loss = broadband.broadband_loss_db(k[inside], np.broadcast_to(y, (4000, 4))[inside], few[inside],
                                       0.6, passes=2)[0]
    assert np.max(np.abs(loss - budget[inside])) < 0.1
    assert np.max(np.abs(few - many) / many) < 0.01


def test_phase_screen_against_monte_carlo():
    """Gaussian phase screen: the mean coherent focal intensity |<exp(i phi)>|^2 of random
    screens equals exp(-(2 pi f sigma_t)^2) (Goodman2000StatOptics), here by direct simulation."""
    rng = np.random.default_rng(7)
    for f, sigma in ((3.5, 21.3), (5.0, 32.0), (2.0, 50.0)):
        phase = 2 * np.pi * f * 1e6 * sigma * 1e-9 * rng.standard_normal((4000, 256))
        coherent = np.abs(np.exp(1j * phase).mean(axis=1)) ** 2
        incoherent_floor = 1.0 / 256                     # residual of a finite aperture
        simulated = coherent.mean() - incoherent_floor * (1 - coherent.mean())
        assert simulated == pytest.approx(float(aberration.focal_gain_factor(f, sigma)), abs=0.01)


def test_wall_aberration_anchor_and_growth():
    """21.3 ns at the reference chest wall (Hinkelman1997Chest, verified); 45 mm of wall at
    5 MHz costs about 9 dB round trip (derived: 2 x 4.343 x (2 pi 5 MHz 32 ns)^2 = 8.75 dB)."""
    assert float(aberration.arrival_time_rms_ns(20.0)) == pytest.approx(21.3)
    sigma = float(aberration.arrival_time_rms_ns(45.0))
    assert sigma == pytest.approx(31.95, abs=0.01)
    assert float(aberration.aberration_loss_db(5.0, sigma)) == pytest.approx(8.75, abs=0.02)
    two_way = 2 * 10 * math.log10(1 / float(aberration.focal_gain_factor(5.0, sigma)))
    assert float(aberration.aberration_loss_db(5.0, sigma)) == pytest.approx(two_way)
    assert float(aberration.aberration_loss_db(2.5, sigma, harmonic=True)) < \
        float(aberration.aberration_loss_db(2.5, sigma)) * 2.5
