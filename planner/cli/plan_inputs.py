"""The plan input flags, shared by ``scanplan plan`` and ``scanplan sweep``.

Every flag maps to one field of :class:`planner.planfile.PlanInputs` (:data:`FLAG_FIELDS`);
:func:`inputs_from_args` is the one way from a command line to inputs, and
:func:`planner.planfile.to_request` the one way from inputs to the engine's request.
"""

from __future__ import annotations

import argparse
import dataclasses
from typing import Any

from planner.cli.common import UsageError, finite_float
from planner.errors import InputError

__all__ = ["FLAG_FIELDS", "STUDENT_FLAGS", "add_input_arguments", "inputs_from_args"]

FLAG_FIELDS: dict[str, str] = {
    "target": "target_id", "window": "window_id", "side": "side", "bmi": "bmi", "height_cm": "height_cm",
    "weight_kg": "weight_kg", "sex": "sex", "wall_mm": "wall_mm", "fat_mm": "fat_mm",
    "depth_cm": "depth_cm", "gestation_weeks": "gestation_weeks", "condition": "conditions",
    "exam": "exam_type", "mode": "modes", "contrast": "contrast_agent", "febrile": "febrile",
    "lung_in_beam": "lung_in_beam", "pregnancy_possible": "pregnancy_possible",
    "expected_ti": "expected_ti", "expected_mi": "expected_mi", "minutes": "planned_minutes",
    "probes": "probes_path", "local": "local_policy_path", "doppler": "doppler", "draft": "draft",
    "qa": "qa_path", "prior_frequency_mhz": "prior_frequency_mhz", "prior_fade_cm": "prior_fade_cm",
}
"""Parsed-argument name -> :class:`~planner.planfile.PlanInputs` field, for every plan input
flag (the output flags ``--format``, ``--json``, ``-o``, ``--force``, ``--save`` and ``--from``
are not inputs)."""

STUDENT_FLAGS: dict[str, str] = {
    "student_probe": "probe", "student_start_mhz": "start_mhz", "student_window": "window",
    "student_position": "position", "student_harmonic": "harmonic", "student_tilt": "tilt",
    "student_rationale": "rationale",
}
"""Parsed-argument name -> :class:`planner.choices.StudentChoices` field: the student's own
decisions in a draft (``--student-probe`` ... ``--student-rationale``)."""

_BODY_SIZE = ("bmi", "height_cm", "weight_kg")


def add_input_arguments(p: argparse.ArgumentParser, *, bmi: bool = True) -> None:
    """Add every plan input flag (:data:`FLAG_FIELDS`) to ``p`` (``bmi=False``: all but ``--bmi``,
    for commands that take BMI their own way, such as ``sweep``)."""
    p.add_argument("--target", help="target id (see `scanplan targets`); required unless "
                                    "--from gives it")
    if bmi:
        p.add_argument("--bmi", type=finite_float, help="body-mass index [kg/m2]")
    p.add_argument("--height-cm", type=finite_float)
    p.add_argument("--weight-kg", type=finite_float)
    p.add_argument("--sex", choices=("female", "male"))
    p.add_argument("--wall-mm", type=finite_float, help="measured body-wall thickness at the window [mm]")
    p.add_argument("--fat-mm", type=finite_float, help="measured subcutaneous fat thickness [mm]")
    p.add_argument("--depth-cm", type=finite_float, help="measured skin-to-target depth [cm]")
    p.add_argument("--window", help="use this window only (ids in `scanplan targets --json`)")
    p.add_argument("--side", choices=("left", "right"),
                   help="side of a paired target (kidney, carotid, limb veins, ...; default right)")
    p.add_argument("--condition", action="append", metavar="NAME[:GRADE]",
                   help="steatosis, ascites, full_bladder, empty_bladder, bowel_gas, limited_mobility, "
                        "no_breath_hold, post_prandial, oedema (repeatable)")
    p.add_argument("--gestation-weeks", type=finite_float)
    p.add_argument("--exam", help="exam type for the safety rules (default: the target's)")
    p.add_argument("--mode", action="append", metavar="MODE",
                   help="planned mode: b_mode, colour_doppler, power_doppler, pulsed_doppler (repeatable)")
    p.add_argument("--contrast", action="store_true", default=None,
                   help="a gas contrast agent will be given")
    p.add_argument("--febrile", action="store_true", default=None)
    p.add_argument("--lung-in-beam", action="store_true", default=None)
    p.add_argument("--pregnancy-possible", action="store_true", default=None)
    p.add_argument("--expected-ti", type=finite_float, help="expected displayed TI")
    p.add_argument("--expected-mi", type=finite_float, help="expected displayed MI")
    p.add_argument("--minutes", type=finite_float, help="planned scanning minutes")
    p.add_argument("--probes", metavar="FILE", help="department probe inventory (YAML)")
    p.add_argument("--local", metavar="FILE", help="department local policy (YAML)")
    p.add_argument("--qa", metavar="FILE",
                   help="probe QA log (phantom depth of penetration): each probe's own signal budget")
    p.add_argument("--prior-frequency-mhz", type=finite_float, metavar="MHZ",
                   help="prior exam: the frequency at which the organ's speckle faded [MHz] "
                        "(with --prior-fade-cm)")
    p.add_argument("--prior-fade-cm", type=finite_float, metavar="CM",
                   help="prior exam: the depth from the skin where it faded [cm]")
    p.add_argument("--doppler", action="store_true", default=None,
                   help="add Doppler planning for vessel targets")
    p.add_argument("--draft", action="store_true", default=None,
                   help="mark as a draft for supervised practice")
    s = p.add_argument_group("the student's own decisions (drafts; compared with the plan)")
    s.add_argument("--student-probe", metavar="PROBE", help="probe id or type the student chose")
    s.add_argument("--student-start-mhz", type=finite_float, metavar="MHZ",
                   help="start frequency the student chose [MHz]")
    s.add_argument("--student-window", metavar="WINDOW", help="window id the student chose")
    s.add_argument("--student-position", metavar="TEXT", help="patient position, in words")
    s.add_argument("--student-harmonic", choices=("on", "off"), help="harmonic imaging on or off")
    s.add_argument("--student-tilt", metavar="TEXT", help="tilt approach, in words")
    s.add_argument("--student-rationale", metavar="TEXT", help="short rationale")


def _conditions(texts: list[str]) -> tuple[tuple[str, int], ...]:
    from planner.body.conditions import parse_condition
    from planner.numbers import NumberError, check_plain_digits
    conditions: dict[str, int] = {}
    for text in texts:
        try:
            check_plain_digits(text.partition(":")[2])
        except NumberError as exc:
            raise InputError(f"argument --condition: grade of {text.strip()!r}: {exc.message}") \
                from None
        name, grade = parse_condition(text)
        conditions[name] = grade
    return tuple(conditions.items())


def inputs_from_args(args: argparse.Namespace, base=None):
    """The :class:`~planner.planfile.PlanInputs` of a ``plan`` command line.

    Parameters
    ----------
    args : argparse.Namespace
        Parsed ``plan`` arguments (a flag not given is None).
    base : PlanInputs, optional
        Inputs to start from (a loaded plan file); the flags given replace its values.

    Raises
    ------
    UsageError
        Without ``--target`` and without a base.
    planner.errors.InputError
        For an unknown condition or grade.
    """
    from planner.planfile import PlanInputs
    if base is None:
        if args.target is None:
            raise UsageError("the following arguments are required: --target (or --from FILE)")
        base = PlanInputs(target_id=args.target)
    given: dict[str, Any] = {field: getattr(args, dest) for dest, field in FLAG_FIELDS.items()
                             if getattr(args, dest, None) is not None}
    if "conditions" in given:
        given["conditions"] = _conditions(given["conditions"])
    if any(name in given for name in _BODY_SIZE):
        given = {**{name: None for name in _BODY_SIZE}, **given}
    doppler = given.get("doppler", base.doppler)
    if "modes" in given:
        modes = list(given["modes"])
        if doppler and not any(m.endswith("doppler") for m in modes):
            modes.append("pulsed_doppler")
        given["modes"] = tuple(modes)
    choices = {field: getattr(args, dest) for dest, field in STUDENT_FLAGS.items()
               if getattr(args, dest, None) is not None}
    if "harmonic" in choices:
        choices["harmonic"] = choices["harmonic"] == "on"
    start = choices.get("start_mhz")
    if start is not None and not 0 < start <= 100:
        raise InputError(f"argument --student-start-mhz: must be above 0 and at most 100 MHz, "
                         f"got {start:g}")
    if choices:
        given["choices"] = dataclasses.replace(base.choices, **choices)
    return dataclasses.replace(base, **given)
