"""Interfaces: published and worked values, plus invariants.

Worked values use the textbook impedances of Bushberg2012 Table 14-1 (fat 1.34, muscle 1.71,
liver 1.65, soft tissue 1.63, water 1.48, bone 7.8, air 0.0004 MRayl) with the intensity
reflection formula R = ((Z2 - Z1)/(Z2 + Z1))^2 (ALevelPhysics).
"""

import numpy as np
import pytest
from hypothesis import given, strategies as st

from planner.physics import interfaces as I
from planner.physics.tissues import get_tissue


def test_impedance_fat_Bushberg2012():
    """Fat 924 kg/m3 x 1450 m/s = 1.340 MRayl (Bushberg2012 Table 14-1)."""
    assert I.impedance_mrayl(924, 1450) == pytest.approx(1.340, abs=0.01)


@pytest.mark.parametrize("z1, z2, expected, tol, source", [
    (1.34, 1.71, 0.0147, 0.001, "fat/muscle, derived from Bushberg2012 Table 14-1"),
    (1.34, 1.65, 0.0108, 0.001, "fat/liver, derived"),
    (1.48, 1.63, 0.0023, 0.0003, "water/soft tissue, derived"),
    (1.63, 7.8, 0.43, 0.02, "soft tissue/bone, derived"),
    (30.0, 1.63, 0.80, 0.01, "PZT/soft tissue, derived"),
])
def test_intensity_reflection_normal_ALevelPhysics(z1, z2, expected, tol, source):
    assert I.intensity_reflection_normal(z1, z2) == pytest.approx(expected, abs=tol), source


def test_soft_tissue_air_reflects_almost_everything_ALevelPhysics():
    """Soft tissue/air (1.63/0.0004 MRayl): R > 0.998 (derived)."""
    assert I.intensity_reflection_normal(1.63, 0.0004) > 0.998


def test_snell_fat_to_muscle_AcousticsNotebook():
    """1450 -> 1580 m/s: 30 deg -> 33.0 deg, 45 deg -> 50.4 deg (derived)."""
    assert I.transmitted_angle_deg(30, 1450, 1580) == pytest.approx(33.0, abs=0.1)
    assert I.transmitted_angle_deg(45, 1450, 1580) == pytest.approx(50.4, abs=0.1)
    assert I.transmitted_angle_deg(30, 1580, 1450) == pytest.approx(27.3, abs=0.1)


@pytest.mark.parametrize("c1, c2, expected", [
    (1450, 1580, 66.6),   # fat -> muscle
    (1450, 1555, 68.8),   # fat -> liver
    (1450, 1540, 70.3),   # fat -> soft tissue
    (1480, 1540, 74.0),   # water -> soft tissue
    (1540, 4080, 22.2),   # soft tissue -> bone (Bushberg2012 skull 4080 m/s)
])
def test_critical_angle_AcousticsNotebook(c1, c2, expected):
    """Critical angles arcsin(c1/c2), derived worked values."""
    assert I.critical_angle_deg(c1, c2) == pytest.approx(expected, abs=0.2)


def test_no_critical_angle_into_slower_medium():
    """Identity: no critical angle when c2 <= c1 (muscle -> fat)."""
    assert np.isnan(I.critical_angle_deg(1580, 1450))
    assert np.isnan(I.critical_angle_deg(1540, 1540))


def test_rayleigh_oblique_fat_muscle_KinslerFrey2000():
    """Fat -> muscle: R(0) 0.0147, R(20) 0.0163, R(40) 0.0243, R(60) 0.100, R(70) = 1 (derived)."""
    r = I.intensity_reflection_oblique(1.34, 1.71, 1450, 1580, [0, 20, 40, 60, 70])
    assert r == pytest.approx([0.0147, 0.0163, 0.0243, 0.100, 1.0], abs=0.001)


def test_total_reflection_beyond_critical_angle():
    assert I.is_total_reflection(67.0, 1450, 1580)
    assert not I.is_total_reflection(66.0, 1450, 1580)
    assert np.isnan(I.transmitted_angle_deg(67.0, 1450, 1580))


@given(st.floats(0.01, 50), st.floats(0.01, 50))
def test_invariant_normal_R_symmetric_and_R_plus_T_is_one(z1, z2):
    """Invariants: R(Z1, Z2) = R(Z2, Z1); R + T = 1."""
    r = I.intensity_reflection_normal(z1, z2)
    assert r == pytest.approx(I.intensity_reflection_normal(z2, z1))
    assert r + I.intensity_transmission_normal(z1, z2) == pytest.approx(1.0)
    assert 0.0 <= r <= 1.0


@given(st.floats(0.5, 10), st.floats(0.5, 10), st.floats(300, 5000), st.floats(300, 5000),
       st.floats(0, 89.9))
def test_invariant_oblique_R_plus_T_is_one_and_bounded(z1, z2, c1, c2, angle):
    r = I.intensity_reflection_oblique(z1, z2, c1, c2, angle)
    t = I.intensity_transmission_oblique(z1, z2, c1, c2, angle)
    assert 0.0 <= r <= 1.0 + 1e-12
    assert r + t == pytest.approx(1.0)
    assert not np.isnan(r)


@given(st.floats(300, 5000), st.floats(300, 5000), st.floats(0, 89))
def test_invariant_snell_reversible(c1, c2, angle):
    """Invariant: refracting back along the transmitted ray returns the incidence angle."""
    t = I.transmitted_angle_deg(angle, c1, c2)
    if not np.isnan(t):
        assert I.transmitted_angle_deg(t, c2, c1) == pytest.approx(angle, abs=1e-6)


@pytest.mark.parametrize("bad", [-1.0, 0.0, float("nan"), float("inf")])
def test_bad_impedance_rejected(bad):
    with pytest.raises(ValueError, match="z1_mrayl"):
        I.intensity_reflection_normal(bad, 1.6)


@pytest.mark.parametrize("bad", [-1.0, 91.0, float("nan")])
def test_bad_angle_rejected(bad):
    with pytest.raises(ValueError, match="incidence_deg"):
        I.transmitted_angle_deg(bad, 1450, 1540)


def test_tissue_table_fat_muscle_reflection_near_teaching_value():
    """Our table's fat and muscle give R within the textbook spread of 0.0147 (Bushberg2012)."""
    fat, muscle = get_tissue("fat"), get_tissue("muscle_across")
    r = I.intensity_reflection_normal(fat.impedance_mrayl, muscle.impedance_mrayl)
    assert 0.008 < r < 0.02
