"""From typed text to a plan (planner.tui.compute): parsing, field problems, never a crash."""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner.engine.serialize import plan_to_json_data
from planner.planfile import PlanInputs, SignOff
from planner.tui.compute import (NUMBER_FIELDS, compute, form_values, parse_conditions,
                                 parse_form, parse_number)
from planner.tui.demo import DEMO_INPUTS


def test_demo_is_invented_and_plans():
    """The demo patient is invented (BMI 38, moderate steatosis) and gives a plan."""
    outcome = compute(form_values(DEMO_INPUTS))
    assert outcome.problems == {} and outcome.message == ""
    plan = plan_to_json_data(outcome.plan)
    assert plan["target"]["id"] == "liver" and plan["patient"]["bmi"] == 38.0
    assert plan["frequency_mhz"]["low"] < plan["frequency_mhz"]["high"]


@pytest.mark.parametrize("text, value", [("38", 38.0), (" 38.5 ", 38.5), ("38,5", 38.5),
                                         ("", None), ("  ", None), ("1e1", 10.0)])
def test_parse_number(text, value):
    assert parse_number(text, "BMI") == value


@pytest.mark.parametrize("text", ["abc", "nan", "inf", "-inf", "3..5", "1,2,3", "1e999", "0x1A",
                                  ".5", "5.", "1e", "--5", "3 5"])
def test_parse_number_refuses(text):
    with pytest.raises(ValueError, match="BMI"):
        parse_number(text, "BMI")


@pytest.mark.parametrize("text, hint", [
    ("1_0", "without '_'"),                 # Python's float() reads this as 10.0
    ("٣٥", "digits 0-9"),                   # ARABIC-INDIC DIGIT THREE, FIVE (U+0663, U+0665)
    ("３５", "digits 0-9"),                  # FULLWIDTH DIGIT THREE, FIVE (U+FF13, U+FF15)
    ("3٥", "digits 0-9"),
])
def test_parse_number_refuses_what_float_would_reinterpret(text, hint):
    """float() accepts these (PEP 515 underscores, Unicode decimal digits); the form must not."""
    assert float(text) in (10.0, 35.0)     # the behaviour of Python itself that is guarded against
    with pytest.raises(ValueError, match=hint):
        parse_number(text, "BMI")


def test_form_marks_field_with_underscore_or_foreign_digits():
    """A typed `1_0` or `٣٥` is a problem on that field, not a plan for BMI 10 or 35."""
    for text in ("1_0", "٣٥"):
        values = form_values(DEMO_INPUTS)
        values["bmi"] = text
        outcome = compute(values)
        assert outcome.plan is None and "bmi" in outcome.problems


def test_parse_conditions_accepts_words_and_numbers():
    assert parse_conditions("steatosis:moderate, ascites ;full-bladder") == (
        ("steatosis", 2), ("ascites", 2), ("full_bladder", 1))
    assert parse_conditions("") == ()


def test_form_round_trip():
    inputs = PlanInputs(target_id="kidney", window_id="x", bmi=None, height_cm=181.0,
                        weight_kg=120.5, sex="male", wall_mm=41.0, depth_cm=12.5,
                        conditions=(("bowel_gas", 3),), exam_type="general_abdominal",
                        modes=("b_mode", "colour_doppler"), febrile=True, expected_ti=1.2,
                        planned_minutes=15.0, draft=True, signoff=SignOff(student="S"))
    parsed, problems = parse_form(form_values(inputs))
    assert problems == {} and parsed == inputs


def test_each_bad_field_is_named():
    raw = form_values(DEMO_INPUTS)
    raw.update(bmi="fat", depth_cm="deep", conditions="gout", modes=())
    outcome = compute(raw)
    assert outcome.plan is None
    assert set(outcome.problems) == {"bmi", "depth_cm", "conditions", "modes"}
    assert "gout" in outcome.problems["conditions"] and "valid conditions" in \
        outcome.problems["conditions"]


def test_engine_refusal_lands_on_a_field():
    """A measured depth shallower than the body wall is refused by the engine; the UI marks
    the depth field rather than failing."""
    raw = form_values(PlanInputs(target_id="liver", bmi=45.0, depth_cm=1.0))
    outcome = compute(raw)
    assert outcome.plan is None and "depth_cm" in outcome.problems


_TEXT = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=12)
_NUMBERISH = st.one_of(_TEXT, st.floats(allow_nan=True, allow_infinity=True).map(str),
                       st.integers(-10**6, 10**6).map(str))


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(numbers=st.fixed_dictionaries({name: _NUMBERISH for name in NUMBER_FIELDS}),
       conditions=_TEXT, target=st.sampled_from(["liver", "thyroid", "fetal-head", "heart",
                                                 "renal-artery", "nope", ""]),
       modes=st.lists(st.sampled_from(["b_mode", "colour_doppler", "pulsed_doppler", "x"]),
                      max_size=3),
       exam=st.sampled_from([None, "obstetric", "neonatal_head", "cardiac", "bogus"]),
       flags=st.lists(st.booleans(), min_size=4, max_size=4))
def test_compute_never_raises(numbers, conditions, target, modes, exam, flags):
    """Whatever is typed, compute returns a plan or problems; it never raises."""
    raw = form_values(DEMO_INPUTS)
    raw.update(numbers, conditions=conditions, target_id=target, modes=tuple(modes),
               exam_type=exam, pregnancy_possible=flags[0], contrast_agent=flags[1],
               febrile=flags[2], draft=flags[3])
    outcome = compute(raw)
    assert (outcome.plan is not None) != bool(outcome.problems or outcome.message)
    assert "internal error" not in outcome.message
