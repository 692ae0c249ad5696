"""Property-based fuzzing of the plan engine (hypothesis).

What is checked, and against what:

- Contract of :func:`planner.engine.make_plan` (``planner/errors.py``): any target,
  window, habitus, measured values, conditions and exam context give either a
  :class:`~planner.engine.Plan` or an :class:`~planner.errors.InputError`; never another
  exception. A plan is JSON without NaN or infinity (RFC 8259, section 6: "Numeric values
  that cannot be represented ... such as Infinity and NaN are not permitted").
- Physics: the round-trip loss is ``2 * sum(alpha0_i * f**y_i * d_i)`` (power-law
  attenuation; Szabo2004 ch. 4, Kremkau2015). Every wall layer thickens with BMI
  (subcutaneous fat against BMI: Gibney2010, Chandak2018) and every ``alpha0 > 0``, so
  for one window the highest usable frequency (reach) cannot rise when BMI or the
  measured depth rises, and the target cannot come nearer the skin when BMI rises.
  (Keys of ``planner/data/references``.)

Examples are kept few enough that this file runs in well under a minute; set
``SCANPLAN_FUZZ_EXAMPLES`` to a larger number for a longer local run.
"""

from __future__ import annotations

import json
import math
import os

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from planner.engine.serialize import plan_to_json_data
from planner.body.gestation import gestation_range
from planner.body.conditions import CONDITIONS, parse_condition
from planner.body.patient import Patient
from planner.body.walls import PANNUS_BMI, load_wall_models
from planner.engine import Plan, PlanRequest, make_plan
from planner.engine.request import FEMALE_EXAMS
from planner.engine.sweep import sweep
from planner.errors import InputError
from planner.library.targets import load_library
from planner.safety import EXAM_TYPES, MODES, ExamContext

SCALE = float(os.environ.get("SCANPLAN_FUZZ_SCALE", "1"))


def fuzz_settings(examples: int) -> settings:
    """Modest, reproducible settings: no per-example deadline, derandomised in CI."""
    return settings(max_examples=max(1, int(examples * SCALE)), deadline=None,
                    derandomize=bool(os.environ.get("CI")),
                    suppress_health_check=[HealthCheck.too_slow])


LIBRARY = load_library()
TARGET_IDS = sorted(LIBRARY.targets)
WALLS = load_wall_models()


def window_ids(target_id: str) -> list[str]:
    return [w.id for w in LIBRARY.targets[target_id].windows]


def has_pannus(target_id: str, window_id: str) -> bool:
    window = next(w for w in LIBRARY.targets[target_id].windows if w.id == window_id)
    return WALLS[window.wall].pannus


TARGET_WINDOWS = [(t, w) for t in TARGET_IDS for w in window_ids(t)]

# -- strategies ---------------------------------------------------------------------------

JUNK_NUMBERS = st.sampled_from([0, 0.0, -1.0, -0.0, math.nan, math.inf, -math.inf, 1e308,
                                5e-324, 1e-9, 10_000.0, True, "30", None])


def number(low: float, high: float) -> st.SearchStrategy:
    """Mostly plausible values, sometimes junk (NaN, inf, zero, negatives, text)."""
    return st.one_of(st.none(), st.floats(low, high, allow_nan=False),
                     st.floats(allow_nan=True, allow_infinity=True), JUNK_NUMBERS)


VALID_CONDITION_TEXTS = sorted(
    {f"{spec.id}:{grade}" for spec in CONDITIONS.values() for grade in spec.grades}
    | {f"{spec.id}:{label}" for spec in CONDITIONS.values() for label in spec.grade_labels}
    | {spec.id for spec in CONDITIONS.values()})


@st.composite
def valid_conditions(draw) -> dict[str, int]:
    """Conditions as the command line and the plan file give them (through parse_condition)."""
    texts = draw(st.lists(st.sampled_from(VALID_CONDITION_TEXTS), max_size=4))
    out: dict[str, int] = {}
    for text in texts:
        name, grade = parse_condition(text)
        out[name] = grade
    if "full_bladder" in out and "empty_bladder" in out:
        del out["full_bladder"]       # contradictory: refused, checked elsewhere
    return out


@st.composite
def contexts(draw):
    """None, or an exam context built from real and junk values (may raise InputError)."""
    if draw(st.booleans()):
        return None
    return dict(
        exam_type=draw(st.one_of(st.sampled_from(sorted(EXAM_TYPES)), st.text(max_size=6))),
        gestation_weeks=draw(st.one_of(st.none(), st.floats(0, 45), JUNK_NUMBERS)),
        pregnancy_possible=draw(st.booleans()),
        modes=tuple(draw(st.lists(st.one_of(st.sampled_from(sorted(MODES)), st.text(max_size=4)),
                                  min_size=0, max_size=3))),
        contrast_agent=draw(st.booleans()), febrile=draw(st.booleans()),
        lung_in_beam=draw(st.booleans()), bone_near_focus=draw(st.booleans()),
        expected_ti=draw(st.one_of(st.none(), st.floats(0, 6), JUNK_NUMBERS)),
        planned_minutes=draw(st.one_of(st.none(), st.floats(0, 120), JUNK_NUMBERS)),
        expected_mi=draw(st.one_of(st.none(), st.floats(0, 2), JUNK_NUMBERS)),
    )


@st.composite
def engine_inputs(draw):
    target = draw(st.sampled_from(TARGET_IDS))
    window = draw(st.one_of(st.none(), st.sampled_from(window_ids(target)),
                            st.text(max_size=8)))
    use_height = draw(st.integers(0, 5)) == 0
    patient = dict(
        bmi=None if use_height else draw(st.one_of(st.floats(10, 150), number(0, 200))),
        height_cm=draw(number(50, 230)) if use_height else None,
        weight_kg=draw(number(2, 350)) if use_height else None,
        sex=draw(st.sampled_from([None, "female", "male", "x", ""])),
        conditions=draw(valid_conditions()),
        gestation_weeks=draw(st.one_of(st.none(), st.none(), number(0, 45))),
        wall_mm=draw(st.one_of(st.none(), st.none(), number(1, 200))),
        fat_mm=draw(st.one_of(st.none(), st.none(), number(1, 150))),
        depth_cm=draw(st.one_of(st.none(), st.none(), number(0.5, 40))),
    )
    return target, window, patient, draw(contexts()), draw(st.booleans()), draw(st.booleans())


def plan_or_input_error(target, window, patient, context, doppler=False, draft=False):
    """Build the request and plan; return the Plan, or the InputError that was raised."""
    try:
        ctx = None if context is None else ExamContext(**context)
        request = PlanRequest(target, Patient.from_inputs(**patient), window_id=window,
                              context=ctx, doppler=doppler, draft=draft)
        return make_plan(request)
    except InputError as exc:
        return exc


def plan_high(target, window, **patient) -> float:
    plan = make_plan(PlanRequest(target, Patient.from_inputs(**patient), window_id=window))
    assert plan.frequency_mhz.high is not None, plan.frequency_mhz
    return plan.frequency_mhz.high


# -- any input: a finite plan or InputError -----------------------------------------------

@fuzz_settings(300)
@given(engine_inputs())
def test_any_input_gives_a_finite_json_plan_or_an_input_error(case):
    """Never an exception other than InputError; a plan is strict JSON (RFC 8259 s. 6)."""
    target, window, patient, context, doppler, draft = case
    result = plan_or_input_error(target, window, patient, context, doppler, draft)
    if isinstance(result, InputError):
        assert result.message and "\n" not in result.message, result.message
        return
    assert isinstance(result, Plan)
    text = json.dumps(plan_to_json_data(result), allow_nan=False, sort_keys=True)
    again = json.loads(text)
    assert again["target"]["id"] == target
    if window:
        assert again["window"]["id"] == window
    assert again["depth_cm"] > 0
    band = again["frequency_mhz"]
    if band["low"] is not None and band["high"] is not None:
        assert 0 < band["low"] <= band["high"], band


@fuzz_settings(150)
@given(target=st.sampled_from(TARGET_IDS),
       conditions=st.dictionaries(st.one_of(st.sampled_from(sorted(CONDITIONS)),
                                            st.text(max_size=6)),
                                  st.one_of(st.integers(-2, 6), st.floats(allow_nan=True),
                                            st.booleans(), st.text(max_size=3)),
                                  min_size=1, max_size=3))
def test_raw_condition_mappings_are_checked(target, conditions):
    """Patient.from_inputs promises an InputError on impossible values; an unknown
    condition id or a grade outside ``CONDITIONS[id].grades`` is one."""
    valid = all(name in CONDITIONS and not isinstance(grade, bool) and isinstance(grade, int)
                and grade in CONDITIONS[name].grades for name, grade in conditions.items())
    result = plan_or_input_error(target, None, {"bmi": 30.0, "conditions": conditions}, None)
    if not valid:
        assert isinstance(result, InputError), (
            f"conditions={conditions!r} should be refused with InputError, "
            f"got {type(result).__name__}")
    else:
        # valid ids and grades on an ordinary patient (BMI 30, any target) must plan: an
        # InputError here would be a refusal of valid input
        assert isinstance(result, Plan), (
            f"conditions={conditions!r} on {target} were refused: {getattr(result, 'message', result)}")
        assert plan_to_json_data(result)["patient"]["conditions"] == conditions   # the plan used them all


def female_exam(target_id: str) -> bool:
    """The target's usual exam implies a female patient (obstetric, gynaecological)."""
    return load_library().get(target_id).exam_type in FEMALE_EXAMS


def test_a_male_patient_is_refused_for_an_obstetric_target():
    with pytest.raises(InputError, match="female"):
        make_plan(PlanRequest("fetal-head", Patient.from_inputs(bmi=30.0, sex="male",
                                                                gestation_weeks=20.0)))


# -- monotonic properties -----------------------------------------------------------------

@fuzz_settings(120)
@given(pair=st.sampled_from(TARGET_WINDOWS),
       sex=st.sampled_from([None, "female", "male"]),
       conditions=valid_conditions(),
       bmis=st.lists(st.floats(17, 60), min_size=2, max_size=4, unique=True))
def test_reach_falls_and_depth_grows_with_bmi_for_a_fixed_window(pair, sex, conditions, bmis):
    """Power-law attenuation (Szabo2004 ch. 4): a thicker wall cannot raise the reach,
    over BMI 17-60 and across the pannus threshold."""
    target, window = pair
    assume(not (sex == "male" and female_exam(target)))   # refused: see test below
    bmis = sorted(bmis)
    plans = [make_plan(PlanRequest(target, Patient.from_inputs(bmi=b, sex=sex,
                                                               conditions=conditions),
                                   window_id=window)) for b in bmis]
    highs = [p.frequency_mhz.high for p in plans]
    depths = [p.depth_cm for p in plans]
    ceilings = [p.window.reach_ceiling_mhz for p in plans]
    assert all(a >= b for a, b in zip(depths[1:], depths)), list(zip(bmis, depths))
    assert all(a <= b for a, b in zip(ceilings[1:], ceilings)), list(zip(bmis, ceilings))
    if None not in highs:
        assert all(a <= b for a, b in zip(highs[1:], highs)), list(zip(bmis, highs))


def test_no_step_in_reach_at_the_pannus_threshold():
    """Crossing BMI 40 (pannus assumed lifted) must not make a heavier patient's target
    shallower or raise the reach (power-law attenuation, Szabo2004 ch. 4)."""
    steps = []
    for target, window in TARGET_WINDOWS:
        if not has_pannus(target, window):
            continue
        below, at = (make_plan(PlanRequest(target, Patient.from_inputs(bmi=b), window_id=window))
                     for b in (PANNUS_BMI - 0.1, PANNUS_BMI))
        if (at.depth_cm < below.depth_cm
                or at.window.reach_ceiling_mhz > below.window.reach_ceiling_mhz):
            reach = (below.window.reach_ceiling_mhz, at.window.reach_ceiling_mhz)
            steps.append(f"{target}/{window}: depth {below.depth_cm} -> {at.depth_cm} cm, "
                         f"reach {reach[0]} -> {reach[1]} MHz")
    assert not steps, "BMI 39.9 -> 40:\n" + "\n".join(steps)


@fuzz_settings(120)
@given(pair=st.sampled_from(TARGET_WINDOWS), bmi=st.floats(17, 60),
       extra=st.lists(st.floats(0.0, 25.0), min_size=2, max_size=3, unique=True))
def test_reach_falls_with_measured_depth(pair, bmi, extra):
    """A deeper measured target adds path loss (Szabo2004 ch. 4): reach cannot rise."""
    target, window = pair
    base = make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi), window_id=window))
    depths = [min(60.0, base.depth_cm + 0.5 + e) for e in sorted(extra)]
    highs, shown = [], []
    for depth in depths:
        result = plan_or_input_error(target, window, {"bmi": bmi, "depth_cm": depth}, None)
        assume(isinstance(result, Plan))
        highs.append(result.frequency_mhz.high)
        shown.append(result.window.reach_ceiling_mhz)
        assert result.depth_cm == pytest.approx(depth, abs=0.01)
    assert all(a <= b for a, b in zip(shown[1:], shown)), list(zip(depths, shown))
    if None not in highs:
        assert all(a <= b for a, b in zip(highs[1:], highs)), list(zip(depths, highs))


@fuzz_settings(60)
@given(pair=st.sampled_from(TARGET_WINDOWS),
       bmi=st.lists(st.floats(10, 150), min_size=1, max_size=50),
       sex=st.sampled_from([None, "female", "male"]),
       with_depth=st.booleans(), seed=st.integers(0, 2**31 - 1),
       conditions=valid_conditions(),
       weeks=st.one_of(st.none(), st.floats(4, 42)))
def test_sweep_is_finite_for_any_habitus(pair, bmi, sex, with_depth, seed, conditions, weeks):
    """The vectorised sweep: finite numbers for every scenario, NaN depths meaning
    'not measured'; reach from the sweep cannot rise with BMI (Szabo2004 ch. 4)."""
    target, window = pair
    assume(not (sex == "male" and female_exam(target)))
    b = np.asarray(bmi, dtype=float)
    depth = None
    if with_depth:
        rng = np.random.default_rng(seed)
        depth = rng.uniform(0.5, 40.0, size=b.size)
        depth[rng.random(b.size) < 0.3] = np.nan
    rng_weeks = gestation_range(target)
    if weeks is not None and rng_weeks is not None \
            and not rng_weeks.scan.value[0] <= weeks <= rng_weeks.scan.value[1]:
        with pytest.raises(InputError, match="gestational age"):   # the view is not scanned then
            sweep(target, b, window_id=window, sex=sex, gestation_weeks=weeks)
        return
    out = sweep(target, b, window_id=window, sex=sex, depth_cm=depth, conditions=conditions,
                gestation_weeks=weeks)
    for key, values in out.items():
        assert values.shape == b.shape, key
        if values.dtype != bool:
            assert np.all(np.isfinite(values)), (key, b[~np.isfinite(values)])
    if depth is None:
        order = np.argsort(b)
        assert np.all(np.diff(out["ceiling_mhz"][order]) <= 1e-9)
        assert np.all(np.diff(out["depth_cm"][order]) >= -1e-9)


# -- minimal reproductions of what the fuzzing found (each fails until fixed) -------------

@pytest.mark.parametrize("conditions", [{"steatosis": 5}, {"ascites": -1}, {"oedema": 0},
                                        {"nonsense": 1}, {"bowel_gas": 2.5}],
                         ids=lambda c: repr(c))
def test_impossible_condition_is_an_input_error(conditions):
    """``Patient.from_inputs`` validates raw inputs (its docstring): a grade outside
    ``CONDITIONS[id].grades`` or an unknown id is refused, not a KeyError later."""
    with pytest.raises(InputError):
        make_plan(PlanRequest("liver", Patient.from_inputs(bmi=30, conditions=conditions)))


def test_reach_does_not_jump_up_when_no_probe_reaches():
    """A deeper target cannot raise the usable frequency (Szabo2004 ch. 4): when no
    probe reaches, the plan must not switch to a probe whose lowest frequency is higher."""
    shallow = make_plan(PlanRequest("achilles-tendon", Patient.from_inputs(bmi=17, depth_cm=8)))
    deep = make_plan(PlanRequest("achilles-tendon", Patient.from_inputs(bmi=17, depth_cm=12)))
    assert deep.frequency_mhz.high <= shallow.frequency_mhz.high, (
        shallow.probe.id, shallow.frequency_mhz, deep.probe.id, deep.frequency_mhz)
