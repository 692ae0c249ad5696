"""Input validity: flags outside the validated range, one-line errors for impossible inputs."""

from __future__ import annotations

import math

import pytest

from planner.errors import InputError
from planner.references import REFERENCES
from planner.safety import ExamContext, check_inputs, validity_flags


def test_inside_the_range_gives_no_flags():
    assert validity_flags(bmi=32, wall_mm=40, depth_cm=12, frequency_mhz=3.5,
                          gestation_weeks=20, expected_ti=1.2) == []
    assert validity_flags() == []


@pytest.mark.parametrize(("kwargs", "parameter", "valid_range"), [
    ({"bmi": 16.0}, "bmi", [17, 60]),            # model fitted for BMI 17-60 kg/m²
    ({"bmi": 64.0}, "bmi", [17, 60]),
    ({"wall_mm": 180}, "wall_mm", [2, 150]),
    ({"depth_cm": 32}, "depth_cm", [0.1, 30]),
    ({"frequency_mhz": 0.8}, "frequency_mhz", [1, 20]),
    ({"frequency_mhz": 24}, "frequency_mhz", [1, 20]),
    ({"gestation_weeks": 3}, "gestation_weeks", [4, 42]),
    ({"gestation_weeks": 43}, "gestation_weeks", [4, 42]),
    ({"expected_ti": 6.5}, "expected_ti", [0, 6]),
])
def test_outside_the_validated_range_is_flagged(kwargs, parameter, valid_range):
    """Outside the validated range: flagged with the range and a source, never silent."""
    flags = validity_flags(**kwargs)
    assert len(flags) == 1
    flag = flags[0]
    assert flag.parameter == parameter
    assert flag.valid_range == pytest.approx(valid_range)
    assert flag.value == pytest.approx(next(iter(kwargs.values())))
    assert flag.source in REFERENCES
    assert parameter.split("_")[0] in flag.message.lower()
    assert "validated" in flag.message


def test_edges_are_inside():
    assert validity_flags(bmi=17, depth_cm=30, frequency_mhz=20, gestation_weeks=42) == []
    assert validity_flags(bmi=60, frequency_mhz=1, gestation_weeks=4, expected_ti=0) == []


def test_several_flags_at_once():
    flags = validity_flags(bmi=70, depth_cm=35, frequency_mhz=3)
    assert [f.parameter for f in flags] == ["bmi", "depth_cm"]


@pytest.mark.parametrize(("kwargs", "words"), [
    ({"bmi": 0}, ["bmi", "> 0", "got 0"]),
    ({"bmi": -3}, ["bmi", "> 0"]),
    ({"bmi": math.nan}, ["bmi", "finite"]),
    ({"bmi": 250}, ["bmi", "<= 200"]),
    ({"wall_mm": -1}, ["wall_mm", ">= 0"]),
    ({"depth_cm": 0}, ["depth_cm", "> 0"]),
    ({"frequency_mhz": -5}, ["frequency_mhz", "> 0"]),
    ({"frequency_mhz": math.inf}, ["frequency_mhz", "finite"]),
    ({"gestation_weeks": 46}, ["gestation_weeks", "<= 45", "got 46"]),
    ({"gestation_weeks": 0}, ["gestation_weeks", "> 0"]),
    ({"expected_ti": -0.1}, ["expected_ti", ">= 0"]),
    ({"bmi": "thirty"}, ["bmi", "number"]),
    ({"bmi": True}, ["bmi", "number"]),
])
def test_impossible_inputs_are_one_line_errors(kwargs, words):
    for call in (check_inputs, validity_flags):
        with pytest.raises(InputError) as caught:
            call(**kwargs)
        message = str(caught.value)
        assert "\n" not in message
        for word in words:
            assert word in message


def test_unknown_parameter_is_a_type_error():
    with pytest.raises(TypeError):
        check_inputs(height_cm=170)


@pytest.mark.parametrize(("kwargs", "word"), [
    ({"exam_type": "dental"}, "exam_type"),
    ({"modes": ("b_mode", "m_mode")}, "modes"),
    ({"modes": ()}, "modes"),
    ({"modes": "b_mode"}, "modes"),
    ({"exam_type": "obstetric", "gestation_weeks": 50}, "gestation_weeks"),
    ({"exam_type": "obstetric", "gestation_weeks": -2}, "gestation_weeks"),
    ({"exam_type": "cardiac", "gestation_weeks": 20}, "gestation_weeks"),
    ({"exam_type": "gynaecological", "gestation_weeks": 8}, "pregnancy_possible"),
    ({"exam_type": "neonatal_head", "pregnancy_possible": True}, "pregnancy_possible"),
    ({"expected_ti": -1}, "expected_ti"),
    ({"expected_ti": math.nan}, "expected_ti"),
    ({"planned_minutes": -5}, "planned_minutes"),
    ({"expected_mi": math.inf}, "expected_mi"),
    ({"febrile": "yes"}, "febrile"),
])
def test_exam_context_rejects_impossible_values(kwargs, word):
    with pytest.raises(InputError) as caught:
        ExamContext(**kwargs)
    assert word in str(caught.value) and "\n" not in str(caught.value)


def test_exam_context_from_mapping():
    ctx = ExamContext.from_mapping({"exam_type": "obstetric", "gestation_weeks": 12,
                                    "modes": ["b_mode", "colour_doppler", "b_mode"]})
    assert ctx.modes == ("b_mode", "colour_doppler")
    assert ExamContext.from_mapping(ctx.to_dict()) == ctx
    with pytest.raises(InputError):
        ExamContext.from_mapping({"exam": "obstetric"})
