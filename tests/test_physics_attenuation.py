"""Attenuation: teaching rules (Kremkau2015, TeachingAttenuationRule, RadiologyPhysicsSummary),
worked values and invariants."""

import numpy as np
import pytest
from hypothesis import given, strategies as st

from planner.physics import attenuation as A


def test_soft_tissue_at_12_mhz_TeachingAttenuationRule():
    """'One half the frequency per centimetre': 12 MHz -> 6 dB/cm one way (verified rule)."""
    assert A.attenuation_db_per_cm(12, 0.5, 1.0) == pytest.approx(6.0)


@pytest.mark.parametrize("f, hid", [(5.0, 1.2), (12.0, 0.5)])
def test_half_intensity_depth_TeachingAttenuationRule(f, hid):
    """HID ~ 6/f cm in soft tissue: 5 MHz 1.2 cm, 12 MHz 0.5 cm (verified rule)."""
    assert A.half_intensity_depth_cm(f) == pytest.approx(hid, abs=0.05)


@pytest.mark.parametrize("depth, alpha", [(8.0, 0.5), (16.0, 0.5), (12.0, 0.7)])
def test_reach_solver_inverts_the_loss_at_the_engine_budget(depth, alpha):
    """The frequency the solver returns at the engine's diffuse budget (SIGNAL_BUDGET_DIFFUSE_DB)
    makes the forward round-trip loss equal that budget, for the IEC 61391 phantom
    attenuations 0.5 and 0.7 dB/cm/MHz (a round trip through two independent code paths:
    the closed-form forward loss and the bracketing root solver)."""
    from planner.physics.constants import SIGNAL_BUDGET_DIFFUSE_DB
    budget = SIGNAL_BUDGET_DIFFUSE_DB.value
    f = float(A.max_frequency_for_budget_mhz(budget, [depth], [alpha], [1.0]))
    assert float(A.stack_round_trip_loss_db([depth], f, [alpha], [1.0])) == pytest.approx(budget, rel=1e-6)


def test_general_depth_limit_derived():
    """d = D / (2 alpha0 f): D = 60 dB, alpha0 0.5, f 5 MHz -> 12.0 cm (derived)."""
    assert A.max_frequency_for_budget_mhz(60.0, [12.0], [0.5], [1.0]) == pytest.approx(5.0, rel=1e-9)


def test_fat_path_round_trip_derived():
    """3 cm of fat at 3.5 MHz with 0.63 dB/cm/MHz: 13.2 dB round trip; 5 cm: 22 dB (derived)."""
    assert A.round_trip_attenuation_db(3.0, 3.5, 0.63) == pytest.approx(13.2, abs=0.05)
    assert A.round_trip_attenuation_db(5.0, 3.5, 0.63) == pytest.approx(22.05, abs=0.05)


def test_reach_solver_handles_exponents_other_than_one():
    """For y != 1 the solved frequency reproduces the budget exactly (self-consistency)."""
    d, a0, y = np.array([2.0, 1.0, 10.0]), np.array([0.63, 0.96, 0.5]), np.array([1.0, 1.0, 1.3])
    f = A.max_frequency_for_budget_mhz(70.0, d, a0, y, fixed_loss_db=2.0)
    assert A.stack_round_trip_loss_db(d, f, a0, y) + 2.0 == pytest.approx(70.0, abs=1e-6)


def test_reach_solver_edges():
    assert A.max_frequency_for_budget_mhz(60.0, [0.1], [0.5], [1.0]) == 40.0   # everything fits
    assert A.max_frequency_for_budget_mhz(1.0, [50.0], [1.0], [1.0]) == 0.0    # nothing fits


def test_harmonic_reach_is_lower_than_fundamental():
    d, a0, y = [3.0, 12.0], [0.63, 0.5], [1.0, 1.1]
    fund = A.max_frequency_for_budget_mhz(60.0, d, a0, y)
    harm = A.max_frequency_for_budget_mhz(60.0, d, a0, y, harmonic=True)
    assert harm < fund


def test_interface_loss_two_way_derived():
    """Fat -> muscle: T = 1 - 0.0147 each way -> 2 x 0.064 dB = 0.129 dB (derived)."""
    assert A.interface_round_trip_loss_db([1.34, 1.71]) == pytest.approx(-20 * np.log10(1 - 0.0147), abs=1e-3)


@given(st.floats(0.01, 30), st.floats(0.01, 30), st.floats(0.1, 20), st.floats(0.1, 20),
       st.floats(0.01, 5), st.floats(0.5, 2.0))
def test_invariant_loss_monotonic_in_depth_and_frequency(d1, d2, f1, f2, a0, y):
    lo_d, hi_d = sorted((d1, d2))
    lo_f, hi_f = sorted((f1, f2))
    assert A.round_trip_attenuation_db(lo_d, lo_f, a0, y) <= A.round_trip_attenuation_db(hi_d, lo_f, a0, y)
    assert A.round_trip_attenuation_db(lo_d, lo_f, a0, y) <= A.round_trip_attenuation_db(lo_d, hi_f, a0, y)


@given(st.floats(0.01, 20), st.floats(0.01, 20), st.floats(0.5, 15), st.floats(0.05, 3))
def test_invariant_attenuation_additive_over_depth(d1, d2, f, a0):
    whole = A.round_trip_attenuation_db(d1 + d2, f, a0)
    parts = A.round_trip_attenuation_db(d1, f, a0) + A.round_trip_attenuation_db(d2, f, a0)
    assert whole == pytest.approx(parts)


@given(st.floats(10, 120), st.lists(st.floats(0.0, 20), min_size=1, max_size=6),
       st.floats(0.05, 3), st.floats(0.8, 2.0))
def test_invariant_reach_no_nan_and_within_bounds(budget, depths, a0, y):
    n = len(depths)
    f = A.max_frequency_for_budget_mhz(budget, depths, [a0] * n, [y] * n)
    assert np.isfinite(f) and (f == 0.0 or 0.25 <= f <= 40.0)


@pytest.mark.parametrize("bad", [0.0, -3.0, float("nan"), float("inf")])
def test_bad_frequency_rejected(bad):
    with pytest.raises(ValueError, match="frequency_mhz"):
        A.attenuation_db_per_cm(bad, 0.5)


def test_negative_thickness_rejected():
    with pytest.raises(ValueError, match="thickness_cm"):
        A.round_trip_attenuation_db(-1.0, 3.0, 0.5)
