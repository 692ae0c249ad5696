"""The loss-against-depth profile behind the terminal UI's depth plot (planner.report.profile)."""

from __future__ import annotations

import math

import pytest

from planner.body.conditions import STEATOSIS_ATTENUATION_DB_PER_CM_MHZ
from planner.report.profile import (LayerAcoustics, candidate_frequencies_mhz, layer_acoustics,
                                    loss_profile, plan_budget_db, plan_loss_profile)

SOFT = LayerAcoustics("soft tissue", 20.0, 0.5, 1.0)
"""Average soft tissue of the teaching rule: 0.5 dB/cm/MHz, linear in frequency."""


def test_soft_tissue_12_mhz_TeachingAttenuationRule():
    """TeachingAttenuationRule: 'one half the frequency per centimetre', 12 MHz -> 6 dB/cm one
    way, so the echo from 1 cm has lost 12 dB (round trip)."""
    profile = loss_profile([LayerAcoustics("soft", 1.0, 0.5, 1.0)], [12.0])
    assert profile.depth_cm[-1] == pytest.approx(1.0)
    assert profile.loss_at_target_db(0) == pytest.approx(12.0, rel=1e-9)


@pytest.mark.parametrize("frequency_mhz, depth_cm", [(5.0, 8.0), (2.5, 16.0), (10.0, 4.0)])
def test_penetration_40_over_f_RadiologyPhysicsSummary(frequency_mhz, depth_cm):
    """RadiologyPhysicsSummary: penetration (cm) about 40 / f (MHz); with 0.5 dB/cm/MHz that is
    the depth where the round-trip loss reaches a 40 dB budget (d = D / (2 alpha0 f))."""
    profile = loss_profile([SOFT], [frequency_mhz], budget_db=40.0, points=401)
    assert profile.reach_cm(0) == pytest.approx(depth_cm, rel=0.01)


def test_interface_step_ALevelPhysics():
    """ALevelPhysics: intensity transmission at normal incidence T = 4 Z1 Z2 / (Z1 + Z2)^2.
    Fat 1.38 MRayl to muscle 1.70 MRayl: T = 0.98921, so -2 x 10 log10 T = 0.0942 dB is added
    once the echo comes from below the interface (derived from the stated impedances)."""
    fat = LayerAcoustics("fat", 1.0, 0.0, 1.0, 1.38)
    muscle = LayerAcoustics("muscle", 1.0, 0.0, 1.0, 1.70)
    profile = loss_profile([fat, muscle], [3.0], points=5)
    t = 4 * 1.38 * 1.70 / (1.38 + 1.70) ** 2
    assert profile.loss_at_target_db(0) == pytest.approx(-20 * math.log10(t), rel=1e-9)
    assert profile.loss_at_target_db(0) == pytest.approx(0.0942, abs=5e-4)
    above = [loss for z, loss in zip(profile.depth_cm, profile.loss_db[0]) if z <= 1.0]
    assert max(above) == 0.0


def test_invariants_monotonic_and_additive():
    """Invariants: zero loss at the skin; loss never falls with depth; a higher frequency
    loses more; two slabs of one tissue lose what one slab of their total thickness loses."""
    layers = [LayerAcoustics("fat", 2.0, 0.63, 1.0), LayerAcoustics("liver", 10.0, 0.5, 1.1)]
    profile = loss_profile(layers, [2.0, 3.5, 5.0])
    for curve in profile.loss_db:
        assert curve[0] == 0.0
        assert all(b >= a for a, b in zip(curve, curve[1:]))
    targets = [profile.loss_at_target_db(k) for k in range(3)]
    assert targets == sorted(targets) and len(set(targets)) == 3
    split = loss_profile([LayerAcoustics("a", 3.0, 0.5, 1.0), LayerAcoustics("b", 4.0, 0.5, 1.0)],
                         [3.0])
    whole = loss_profile([LayerAcoustics("ab", 7.0, 0.5, 1.0)], [3.0])
    assert split.loss_at_target_db(0) == pytest.approx(whole.loss_at_target_db(0), rel=1e-12)
    assert split.boundaries_cm == (3.0,)


def test_steatotic_liver_layer_uses_the_grade_table():
    """A plan's steatotic liver layer carries alpha0 of grade 2 from the body model's table
    (AttenuationSteatosisReview2022, from memory), and the curves use it."""
    plan = _demo_plan()
    liver = [lay for lay in plan.layers if lay.tissue == "liver_steatosis_2"]
    assert liver and liver[0].attenuation_db_per_cm_mhz == STEATOSIS_ATTENUATION_DB_PER_CM_MHZ[2].value
    curves = plan.depth_curves
    assert curves is not None
    assert STEATOSIS_ATTENUATION_DB_PER_CM_MHZ[2].value in [lay.attenuation_db_per_cm_mhz
                                                           for lay in curves.layers]


def test_ui_and_html_plots_draw_the_same_frequencies():
    """One set of curves per plan: the HTML plot and the UI's depth view read the engine's."""
    from planner.report.svg import depth_plot_svg
    plan = _demo_plan()
    svg = depth_plot_svg(plan)
    for f in plan.depth_curves.frequencies_mhz:
        assert f"{f:g} MHz" in svg
    assert plan_loss_profile(plan).frequencies_mhz == plan.depth_curves.frequencies_mhz


@pytest.mark.parametrize("call", [
    lambda: loss_profile([], [3.0]),
    lambda: loss_profile([SOFT], []),
    lambda: loss_profile([SOFT], [0.0]),
    lambda: loss_profile([SOFT], [float("nan")]),
    lambda: loss_profile([LayerAcoustics("x", 0.0, 0.5, 1.0)], [3.0]),
    lambda: loss_profile([SOFT], [3.0], points=1),
])
def test_bad_inputs_raise_value_error(call):
    with pytest.raises(ValueError):
        call()


def _demo_plan():
    from planner.body.patient import Patient
    from planner.engine import PlanRequest, make_plan
    patient = Patient.from_inputs(bmi=38, conditions={"steatosis": 2})
    return make_plan(PlanRequest("liver", patient=patient))


def test_profile_agrees_with_the_engine():
    """Consistency with the engine (invariants, not published values): at the plan's reference
    frequency the profile's loss at the target is the window's round-trip loss, and at the
    reach ceiling it equals the signal budget (that is how the ceiling is defined)."""
    plan = _demo_plan()
    window = plan.window
    profile = plan_loss_profile(plan, [window.reference_frequency_mhz, window.reach_ceiling_mhz])
    assert profile.target_depth_cm == pytest.approx(plan.depth_cm, abs=0.01)
    assert profile.loss_at_target_db(0) == pytest.approx(window.round_trip_loss_db, abs=0.1)
    assert profile.loss_at_target_db(1) == pytest.approx(plan_budget_db(plan), abs=0.5)


def test_candidate_frequencies_bracket_the_band():
    plan = _demo_plan()
    freqs = candidate_frequencies_mhz(plan)
    band = plan.frequency_mhz
    assert 2 <= len(freqs) <= 3 and list(freqs) == sorted(freqs)
    assert freqs[0] == pytest.approx(band.low)
    assert freqs[1] == pytest.approx(band.high, abs=0.05)
    profile = plan_loss_profile(plan)
    # the recommended band fits the budget (0.5 dB for the rounding of the printed ceiling);
    # the third curve, above the band, does not
    over = [profile.loss_at_target_db(k) > profile.budget_db + 0.5 for k in range(len(freqs))]
    assert over == [False, False, True][:len(freqs)]
