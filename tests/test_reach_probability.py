"""Reach across patients like this one (planner.engine.spread): sampling checked against closed
forms, determinism, monotone probabilities, and what a measurement does to the spread."""

from __future__ import annotations

import math

import numpy as np
import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine import spread


def _phi(x: float) -> float:
    return 0.5 * (1.0 + math.erf(x / math.sqrt(2.0)))


def _one_layer(sigma_wall: float, budget_sd: float = 0.0) -> spread.SpreadInputs:
    """A single 5 cm wall layer of 0.5 dB/cm/MHz, y = 1, 60 dB budget, narrowband."""
    return spread.SpreadInputs(
        np.array([[5.0]]), np.array([0.5]), np.array([1.0]), np.array([True]), np.array([False]),
        np.array([sigma_wall]), np.array([60.0]), np.array([budget_sd]), np.array([0.0]),
        np.array([0.0]))


def test_a_single_layer_matches_the_log_normal_closed_form():
    """Worked example: narrowband loss 2 a f d = B gives f = B / (2 a d) = 60 / (2 x 0.5 x 5) =
    12 MHz for the median patient. With d and a log-normal (s.d. 0.3 and 0.262), ln f is normal
    with s.d. sqrt(0.3^2 + 0.262^2) = 0.398, so P(reach f) = Phi((ln 12 - ln f) / 0.398) and the
    reach of 80 % of patients is 12 exp(-0.8416 x 0.398) = 8.6 MHz.

    Tolerances are three sampling s.d. of 128 stratified draws, measured over seeds 0-39:
    the median 2.2 %, a share 0.025, the 80 % reach 3.0 %, and the s.d. of ln f 0.4 % (the
    draws are stratified and de-correlated, so the spread itself is nearly exact; a wrong
    composition such as the wall alone, 0.3, would be 25 % off)."""
    ceilings = spread.sampled_ceilings_mhz(_one_layer(0.3))[0]
    s = math.hypot(0.3, spread.ATTENUATION_SIGMA_LOG.value)
    assert float(np.std(np.log(ceilings))) == pytest.approx(s, rel=0.03)
    assert float(np.median(ceilings)) == pytest.approx(12.0, rel=0.07)
    for f in (6.0, 9.0, 12.0, 15.0, 20.0):
        expected = _phi((math.log(12.0) - math.log(f)) / s)
        got = float(spread.probability_reaching(ceilings, [f])[0])
        assert got == pytest.approx(expected, abs=0.075), f
    assert float(spread.robust_reach_mhz(ceilings)) == pytest.approx(
        12.0 * math.exp(-0.8416 * s), rel=0.09)


def test_the_draws_keep_their_strata_and_are_independent():
    """Each column holds the 128 normal quantiles at (i + 1/2) / 128 (statistics.NormalDist is
    the reference), and the columns' sample correlations are near 0 (Iman & Conover 1982
    restricted pairing; random pairing leaves about 1 / sqrt(128) = 0.09)."""
    from statistics import NormalDist
    z = spread.normals()
    strata = np.array([NormalDist().inv_cdf((i + 0.5) / spread.SAMPLES)
                       for i in range(spread.SAMPLES)])
    for column in z.T:
        assert np.sort(column) == pytest.approx(strata, abs=1e-12)
    corr = np.corrcoef(z, rowvar=False)
    assert np.abs(corr - np.eye(len(spread.INPUTS))).max() < 0.03


def test_a_known_input_removes_its_share_of_the_spread():
    """Closed form: var(ln f) = sigma_wall^2 + sigma_att^2 (0.09 + 0.0686); knowing the wall
    removes 0.09 / 0.1586 = 57 % of it, and the budget (no spread here) nothing."""
    full, known = spread.plan_draws(_one_layer(0.3))
    share = spread.explained_share(full, known["wall"])
    assert share == pytest.approx(0.09 / (0.09 + spread.ATTENUATION_SIGMA_LOG.value ** 2), abs=0.05)
    assert spread.explained_share(full, known["budget"]) == pytest.approx(0.0, abs=0.01)


def _plan(**patient):
    return make_plan(PlanRequest("liver", Patient.from_inputs(**patient)))


def test_every_plan_carries_its_reach_probability_and_drivers():
    band = _plan(bmi=45).frequency_mhz
    freqs = [p.frequency_mhz for p in band.reach_probability]
    probs = [p.probability for p in band.reach_probability]
    assert freqs == sorted(freqs) and len(freqs) == 11
    assert all(a >= b for a, b in zip(probs, probs[1:]))
    assert {d.input for d in band.drivers} == set(spread.INPUTS)
    assert [d.explains for d in band.drivers] == sorted((d.explains for d in band.drivers),
                                                         reverse=True)
    assert band.start_median is not None and band.start <= band.start_median + 1e-9
    assert band.top_probability == pytest.approx(0.5, abs=0.1)   # the top is the median's reach


def test_a_margin_start_is_the_reach_of_four_patients_in_five():
    """A slim liver starts on the margin basis: the share reaching it is about 80 %."""
    band = _plan(bmi=21).frequency_mhz
    assert band.start_basis == "margin"
    assert band.start_probability == pytest.approx(spread.START_PROBABILITY.value, abs=0.05)


def test_the_same_inputs_give_the_same_plan():
    a, b = _plan(bmi=38), _plan(bmi=38)
    assert a.frequency_mhz == b.frequency_mhz


def test_a_measured_wall_narrows_the_spread_and_drops_the_wall_driver():
    estimated, measured = _plan(bmi=45).frequency_mhz, _plan(bmi=45, wall_mm=40).frequency_mhz
    wall = {d.input: d for d in measured.drivers}["wall"]
    assert wall.explains <= 0.02
    width = [d.reach_range_mhz[1] - d.reach_range_mhz[0] for d in (estimated.drivers[0],
                                                                    measured.drivers[0])]
    assert width[1] < width[0]


def test_a_qa_calibrated_probe_has_the_narrower_budget_spread():
    """Without QA the stated 3 dB; with a QA budget the reading precision (1.4 dB), or the
    log's own scatter when it measured one (planner.engine.qa_budget)."""
    import dataclasses
    from planner.library.probes import load_inventory
    probe = load_inventory(None).probes[0]
    calibrated = dataclasses.replace(probe, budget_db=66.0)
    scattered = dataclasses.replace(probe, budget_db=66.0, budget_sd_db=2.3)
    assert spread.budget_sd_db(probe) == spread.BUDGET_SD_DB.value
    assert spread.budget_sd_db(calibrated) == spread.QA_BUDGET_SD_DB.value
    assert spread.budget_sd_db(scattered) == 2.3
    assert spread.QA_BUDGET_SD_DB.value < spread.BUDGET_SD_DB.value
