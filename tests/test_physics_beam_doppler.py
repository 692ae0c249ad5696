"""Beam, sound speed, refraction and Doppler: worked values and invariants."""

import numpy as np
import pytest
from hypothesis import given, strategies as st

from planner.physics import beam, doppler, refraction, sound_speed
from planner.physics.harmonics import harmonic_round_trip_loss_db


@pytest.mark.parametrize("f, lam", [(1, 1.54), (2.5, 0.616), (3.5, 0.44), (5, 0.308), (10, 0.154),
                                    (15, 0.103)])
def test_wavelength_Kremkau2015(f, lam):
    """lambda = c/f at 1540 m/s (derived worked values)."""
    assert beam.wavelength_mm(f) == pytest.approx(lam, abs=0.005)


@pytest.mark.parametrize("f, n, res", [(3.5, 3, 0.66), (5, 2, 0.308), (10, 2, 0.154)])
def test_axial_resolution_Kremkau2015(f, n, res):
    """Axial resolution n lambda / 2 (derived worked values)."""
    assert beam.axial_resolution_mm(f, n) == pytest.approx(res, abs=0.005)


@pytest.mark.parametrize("f_num, deg", [(1, 13.3), (1.5, 9.2), (2, 7.0), (3, 4.7)])
def test_specular_tolerance_derived(f_num, deg):
    """theta_max = 0.5 atan(1/(2F)) (derived; consistent with Crass1988's 2-7 deg)."""
    assert beam.specular_tolerance_f_number_deg(f_num) == pytest.approx(deg, abs=0.1)
    assert beam.specular_tolerance_deg(10.0 / (2 * f_num), 1.0) == pytest.approx(deg, abs=0.1)


def test_detail_floor_inverts_resolution():
    f = beam.min_frequency_axial_mhz(0.308, 2)
    assert f == pytest.approx(5.0, rel=1e-3)
    assert beam.lateral_resolution_mm(beam.min_frequency_lateral_mhz(1.0, 2.5), 2.5) == pytest.approx(1.0)


@pytest.mark.parametrize("d, c, shown", [(3.0, 1450, 3.186), (5.0, 1450, 5.31), (10.0, 1578, 9.76),
                                         (10.0, 1480, 10.41), (5.0, 1600, 4.81)])
def test_misregistration_SonographySpeedTutorial(d, c, shown):
    """Displayed = true x 1540 / c (derived worked values)."""
    assert sound_speed.displayed_depth_cm([d], [c]) == pytest.approx(shown, abs=0.01)


def test_depth_error_of_stack():
    """3 cm fat over 10 cm liver (1578): +1.86 - 2.41 = -0.55 mm (derived)."""
    assert sound_speed.depth_error_mm([3.0, 10.0], [1450, 1578]) == pytest.approx(-0.55, abs=0.02)


def test_snell_bend_fat_muscle():
    """Fat -> muscle at 30 deg bends by +3.0 deg (derived)."""
    assert refraction.bend_angle_deg(30, 1450, 1580) == pytest.approx(3.0, abs=0.05)


def test_prism_separation_reproduces_phantom_DoubleAortaPhantom2009():
    """The calibrated face angle gives the published 5.1 +/- 1.8 mm at 3 cm beyond the prism."""
    from planner.engine.artefacts import PRISM_FACE_ANGLE
    sep = refraction.prism_duplication_separation_mm(PRISM_FACE_ANGLE.value, 1450, 1562, 3.0)
    assert 3.3 <= sep <= 6.9


def test_edge_shadow_band():
    assert refraction.edge_shadow_width_mm(15, 1577, 1540) == pytest.approx(15 * (1 - 1540 / 1577))
    assert refraction.edge_shadow_width_mm(15, 1540, 1540) == 0.0


def test_doppler_shift_DopplerTeaching():
    """f0 2 MHz, 1 m/s, 60 deg -> 1299 Hz; 3 MHz, 1 m/s, 0 deg -> 3896 Hz (derived)."""
    assert doppler.doppler_shift_hz(2, 100, 60) == pytest.approx(1299, abs=1)
    assert doppler.doppler_shift_hz(3, 100, 0) == pytest.approx(3896, abs=1)


def test_doppler_shift_zero_at_90_deg():
    """Invariant: no Doppler shift at 90 deg."""
    assert doppler.doppler_shift_hz(5, 100, 90) == 0.0


def test_prf_max_NyquistTeaching():
    """PRF_max = c/(2d): 10 cm -> 7700 Hz; 5 cm -> 15.4 kHz; 15 cm -> 5.13 kHz (derived)."""
    assert doppler.prf_max_hz(10) == pytest.approx(7700, abs=1)
    assert doppler.prf_max_hz(5) == pytest.approx(15400, abs=1)
    assert doppler.prf_max_hz(15) == pytest.approx(5133, abs=1)


@pytest.mark.parametrize("d, f, v", [(10, 3, 99.0), (10, 2, 148.0), (10, 5, 59.0), (5, 2, 297.0),
                                     (15, 3, 66.0)])
def test_nyquist_velocity_at_depth_NyquistTeaching(d, f, v):
    """v_max = c^2/(8 d f0) at 0 deg (derived worked values, +/- 1 cm/s)."""
    assert doppler.max_velocity_at_depth_cm_s(d, f, 0) == pytest.approx(v, abs=1.0)


@pytest.mark.parametrize("angle, plus, minus", [(60, -15.5, 14.7), (30, -5.4, 4.7), (45, -9.1, 8.3)])
def test_velocity_error_from_angle_error_derived(angle, plus, minus):
    """cos(theta + e)/cos(theta) - 1 for e = +/-5 deg (derived worked values)."""
    err = doppler.velocity_error_fraction(angle, [5, -5]) * 100
    assert err == pytest.approx([plus, minus], abs=0.1)


@given(st.floats(0.5, 30), st.floats(1, 15), st.floats(0, 80))
def test_invariant_nyquist_falls_with_depth(d, f, angle):
    assert doppler.max_velocity_at_depth_cm_s(d * 2, f, angle) < doppler.max_velocity_at_depth_cm_s(d, f, angle)


def test_harmonic_loss_adds_conversion():
    loss = harmonic_round_trip_loss_db([10.0], 2.0, [0.5], [1.0], conversion_loss_db=15.0)
    assert loss == pytest.approx(10 * (0.5 * 2 + 0.5 * 4) + 15.0)


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan")])
def test_bad_depth_rejected(bad):
    with pytest.raises(ValueError, match="depth_cm"):
        doppler.prf_max_hz(bad)


def test_bad_doppler_angle_rejected():
    with pytest.raises(ValueError, match="angle_deg"):
        doppler.doppler_shift_hz(3, 50, 95)
