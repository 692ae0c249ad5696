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


def _edge_tilt_by_reflection_deg(half_aperture_mm: float, depth_mm: float) -> float:
    """An independent geometric trace: the central ray leaves the aperture's centre along the
    axis, reflects (d' = d - 2 (d.n) n) off a flat mirror at ``depth_mm`` tilted by theta, and
    returns to the probe face; bisection finds the tilt at which it lands on the aperture's
    edge (the echo's axis leaves the receiving aperture)."""
    import math

    def landing_mm(theta: float) -> float:
        n = (math.sin(theta), -math.cos(theta))          # mirror normal, facing the probe
        d = (0.0, 1.0)
        dot = d[0] * n[0] + d[1] * n[1]
        r = (d[0] - 2 * dot * n[0], d[1] - 2 * dot * n[1])
        return abs(depth_mm * r[0] / r[1])               # back at the face, from (0, depth)

    lo, hi = 0.0, math.radians(44.0)
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if landing_mm(mid) < half_aperture_mm else (lo, mid)
    return math.degrees(0.5 * (lo + hi))


@pytest.mark.parametrize("half_aperture_mm, depth_cm", [(5.0, 1.0), (10.0, 4.0), (20.0, 8.0),
                                                        (6.5, 12.0), (2.5, 3.0)])
def test_geometric_specular_tolerance_matches_a_reflection_trace(half_aperture_mm, depth_cm):
    """The ray (geometric) tilt tolerance, which plans show beside the wave model's, equals a
    reflection traced by vectors within 0.01 deg; the F-number form agrees (F = z / 2a)."""
    traced = _edge_tilt_by_reflection_deg(half_aperture_mm, depth_cm * 10.0)
    assert beam.specular_tolerance_deg(half_aperture_mm, depth_cm) == pytest.approx(traced, abs=0.01)
    f_number = depth_cm * 10.0 / (2.0 * half_aperture_mm)
    assert beam.specular_tolerance_f_number_deg(f_number) == pytest.approx(traced, abs=0.01)


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


def test_prism_separation_worked_example_snell():
    """Fat (1450 m/s) into muscle (1562 m/s) through a face tilted 20 deg: sin t = (1562/1450)
    sin 20 = 0.36843, t = 21.618 deg, bend 1.618 deg; two beams 3 cm beyond the face land
    2 x 30 mm x tan(1.618 deg) = 1.695 mm apart (worked by hand from Snell's law,
    KinslerFrey2000 ch. 6). The engine's face angle is a parameter derived from one phantom
    measurement (DoubleAortaPhantom2009) and is not checked by reproducing that measurement."""
    assert refraction.prism_duplication_separation_mm(20.0, 1450, 1562, 3.0) == pytest.approx(1.695, abs=0.005)


def test_prism_separation_grows_with_depth_and_contrast():
    """Deeper structures and a larger speed contrast separate the two images further (Snell's law)."""
    assert refraction.prism_duplication_separation_mm(30, 1450, 1562, 4.0) > \
        refraction.prism_duplication_separation_mm(30, 1450, 1562, 2.0)
    assert refraction.prism_duplication_separation_mm(30, 1450, 1600, 3.0) > \
        refraction.prism_duplication_separation_mm(30, 1450, 1562, 3.0)


def _vector_snell_band(a, c_out, c_in, rho_out, rho_in, beyond, rays=3000, bin_mm=None):
    """An independent ray trace: vector form of Snell's law (t = n i + (n cos_i - cos_t) N)
    and the plane-wave oblique-incidence power transmission (KinslerFrey2000 ch. 6), one ray
    at a time, landed power averaged over 3 bins of a/100; returns the low band at the rim."""
    import math
    bin_mm = bin_mm or a / 100
    nbins = 200
    hist = [0.0] * nbins

    def refract(d, normal, n1, n2):
        cos_i = -(d[0] * normal[0] + d[1] * normal[1])
        if cos_i < 0:
            normal, cos_i = (-normal[0], -normal[1]), -cos_i
        eta = n1 / n2
        k = 1 - eta * eta * (1 - cos_i * cos_i)
        if k < 0:
            return None, 0.0
        cos_t = math.sqrt(k)
        t = (eta * d[0] + (eta * cos_i - cos_t) * normal[0], eta * d[1] + (eta * cos_i - cos_t) * normal[1])
        return t, cos_i, cos_t

    z_out, z_in = rho_out * c_out, rho_in * c_in
    for i in range(rays):
        x = a * (i + 0.5) / rays
        p = (x, -math.sqrt(a * a - x * x))
        # slowness ratio: refractive index n = 1/c
        out = refract((0.0, 1.0), (p[0] / a, p[1] / a), 1 / c_out, 1 / c_in)
        if out[0] is None:
            continue
        d, ci, ct = out
        r1 = (z_in * ci - z_out * ct) / (z_in * ci + z_out * ct)
        tchord = -2 * (p[0] * d[0] + p[1] * d[1])
        q = (p[0] + tchord * d[0], p[1] + tchord * d[1])
        out2 = refract(d, (q[0] / a, q[1] / a), 1 / c_in, 1 / c_out)
        if out2[0] is None:
            continue
        e, ci2, ct2 = out2
        r2 = (z_out * ci2 - z_in * ct2) / (z_out * ci2 + z_in * ct2)
        power = (1 - r1 * r1) * (1 - r2 * r2)
        u = abs(q[0] + (a + beyond - q[1]) * e[0] / e[1])
        k = int(u / bin_mm)
        if k < nbins:
            hist[k] += power * a / rays
    inten = [h / bin_mm + (1.0 if (j + 0.5) * bin_mm > a else 0.0) for j, h in enumerate(hist)]
    smooth = [sum(inten[max(0, j - 1):j + 2]) / len(inten[max(0, j - 1):j + 2]) for j in range(nbins)]
    rim = 99
    j0 = rim if smooth[rim] < 0.5 else rim + 1
    if smooth[j0] >= 0.5:
        return 0.0
    lo = j0
    while lo > 0 and smooth[lo - 1] < 0.5:
        lo -= 1
    hi = j0
    while hi + 1 < nbins - 1 and smooth[hi + 1] < 0.5:
        hi += 1
    return (hi - lo + 1) * bin_mm


@pytest.mark.parametrize("a, c_out, c_in, rho_out, rho_in", [
    (15, 1577, 1540, 1060, 1010),     # gallbladder: bile in liver (slower lumen)
    (10, 1562, 1524, 1058, 993),      # water-filled lumen in muscle
    (12, 1450, 1578, 925, 1050),      # vessel in fat (faster lumen)
])
def test_edge_shadow_band_matches_an_independent_vector_snell_trace(a, c_out, c_in, rho_out, rho_in):
    """The vectorised trace and a one-ray-at-a-time vector-Snell trace agree within two bins (derived)."""
    ours = refraction.edge_shadow_width_mm(a, c_out, c_in, rho_out, rho_in)
    theirs = _vector_snell_band(a, c_out, c_in, rho_out, rho_in, a)
    assert ours == pytest.approx(theirs, abs=2 * a / 100)


def test_edge_shadow_of_a_slower_lumen_comes_from_refraction_not_the_critical_angle():
    """Bile (1540 m/s) in liver (1577 m/s): a straight ray would reach the critical angle at the
    exit wall and give a (1 - 1540/1577) = 0.35 mm; once bent at entry it never does (Snell's
    law: sin theta_2 = (c_in / c_out) sin theta_1 < sin theta_c), so the shadow is the gap the
    rays deviated towards the axis leave behind the rim, wider than the straight-ray band and
    growing with the distance beyond (derived, KinslerFrey2000 ch. 6)."""
    near = refraction.edge_shadow_width_mm(15, 1577, 1540, 1060, 1010, beyond_mm=5)
    far = refraction.edge_shadow_width_mm(15, 1577, 1540, 1060, 1010, beyond_mm=30)
    assert 15 * (1 - 1540 / 1577) < near < far


def test_edge_shadow_vanishes_without_a_contrast():
    """Equal speed and density: no bending and full transmission, so no band (Snell's law)."""
    assert refraction.edge_shadow_width_mm(15, 1540, 1540, 1000, 1000) == 0.0


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


def test_harmonic_loss_lies_between_the_fundamental_losses_at_f_and_2f():
    """The harmonic travels out at f and back at 2f, so its path loss (without conversion) lies
    between the round trip at f and the round trip at 2f for any exponent >= 0, and the
    conversion loss adds on top (Szabo2004 ch. 12 harmonic imaging: the harmonic is generated
    on the way in and attenuated at 2f on the way back)."""
    from planner.physics.attenuation import round_trip_attenuation_db as round_trip_loss_db
    for y in (1.0, 1.2, 1.5):
        path = harmonic_round_trip_loss_db([10.0], 2.0, [0.5], [y], conversion_loss_db=0.0)
        low = round_trip_loss_db([10.0], 2.0, [0.5], [y])
        high = round_trip_loss_db([10.0], 4.0, [0.5], [y])
        assert low < path < high
        assert harmonic_round_trip_loss_db([10.0], 2.0, [0.5], [y], conversion_loss_db=15.0) == \
            pytest.approx(path + 15.0)


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan")])
def test_bad_depth_rejected(bad):
    with pytest.raises(ValueError, match="depth_cm"):
        doppler.prf_max_hz(bad)


def test_bad_doppler_angle_rejected():
    with pytest.raises(ValueError, match="angle_deg"):
        doppler.doppler_shift_hz(3, 50, 95)
