"""Windows in the order practice tries them: adjunct windows (water in the stomach, the
mastoid fontanelle, prone for the kidney) come after every feasible standard window, and the
detail is judged where the exam needs it."""

from __future__ import annotations

import numpy as np
import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine.request import window_rank_keys


def _plan(target, bmi, **kw):
    return make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi), **kw))


@pytest.mark.parametrize("bmi", [21, 42])
def test_the_pancreas_starts_through_the_left_lobe(bmi):
    """WHOManual2011 ch. 9: transverse through the left lobe first; water only when the gland
    is poorly seen, although water barely attenuates (the adjunct has the lower loss)."""
    plan = _plan("pancreas", bmi)
    assert plan.window.id == "epigastric-transverse"
    water = next(w for w in plan.windows if w.id == "water-filled-stomach")
    assert water.round_trip_loss_db < plan.window.round_trip_loss_db


def test_the_neonatal_head_starts_at_the_anterior_fontanelle_on_a_small_footprint_probe():
    """CielmaNeonatalHead, Technique: the anterior fontanelle is the primary window, the mastoid
    and posterior fontanelles adjuncts; a small-footprint 7-10 MHz curved or sector probe. The
    1 mm detail is needed at the germinal matrix (about 3.5 cm), not at the skull base."""
    plan = _plan("neonatal-brain", 12)
    assert plan.window.id == "anterior-fontanelle"
    assert plan.probe.type == "microconvex"
    assert {w.id for w in plan.windows[1:]} == {"mastoid-fontanelle", "posterior-fontanelle"}


def test_the_prone_kidney_is_not_the_first_route():
    """KidneyWindowsTeaching: supine through the liver or coronal first; prone when those fail."""
    for bmi in (21, 45):
        assert _plan("kidney", bmi, side="right").window.id != "posterior-prone"


def test_an_adjunct_leads_only_when_no_standard_window_is_feasible():
    """Ranking keys: window 0 standard, window 1 adjunct with 10 dB less loss. Patient A: both
    feasible (standard first); patient B: the standard one infeasible (adjunct first)."""
    feasible = np.array([[True, False], [True, True]])
    loss = np.array([[60.0, 60.0], [50.0, 50.0]])
    keys = window_rank_keys(feasible, loss, [1, 2], [False, True])
    order = [sorted(range(2), key=lambda w: tuple(float(k[w, n]) for k in keys)) for n in range(2)]
    assert order == [[0, 1], [1, 0]]
