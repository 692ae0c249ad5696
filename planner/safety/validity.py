"""Input validity: impossible values are errors, values outside the validated range are flagged.

The planning model is built and checked for a stated range of each input (for example
the layer-thickness model is fitted for BMI 17 to 60 kg/m²). Inside that range results
are computed as usual; outside it they are still computed but every plan carries a flag
saying so, so nothing is silently extrapolated. Values that no patient or scanner can
have (a negative depth, a BMI of zero, NaN, a gestation beyond 45 weeks, a negative TI)
raise :class:`planner.errors.InputError` with one line naming the parameter, the value
and the valid range.

The ranges live in ``planner/data/safety.yaml`` (section ``validity``), each with its
source and status.
"""

from __future__ import annotations

import math
from typing import Any

from planner.errors import InputError
from planner.records import record
from planner.safety.tables import ValidityRange, safety_data

PARAMETERS: dict[str, str] = {
    "bmi": "BMI [kg/m²]",
    "wall_mm": "wall thickness [mm]",
    "depth_cm": "target depth [cm]",
    "frequency_mhz": "frequency [MHz]",
    "gestation_weeks": "gestational age [weeks]",
    "expected_ti": "expected displayed TI [-]",
}
"""Inputs checked here, with a label and unit for messages."""


def _number(name: str, value: Any) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{name} must be a number, got {value!r}")
    number = float(value)
    if not math.isfinite(number):
        raise InputError(f"{name} must be a finite number, got {value!r}")
    return number


def _impossible_text(rng: ValidityRange) -> str:
    lo, hi = rng.impossible.value
    low = f"> {lo:g}" if rng.lower_open else f">= {lo:g}"
    return low if hi is None else f"{low} and <= {hi:g}"


def _check_one(name: str, value: Any) -> float:
    number = _number(name, value)
    rng = safety_data().validity[name]
    lo, hi = rng.impossible.value
    too_low = number <= lo if rng.lower_open else number < lo
    if too_low or (hi is not None and number > hi):
        raise InputError(f"{name} must be {_impossible_text(rng)}, got {value!r}")
    return number


def _given(values: dict[str, Any]) -> dict[str, Any]:
    unknown = set(values) - set(PARAMETERS)
    if unknown:
        raise TypeError(f"unknown parameter(s) {', '.join(sorted(unknown))}; "
                        f"valid: {', '.join(PARAMETERS)}")
    return {k: v for k, v in values.items() if v is not None}


def check_inputs(*, bmi: float | None = None, wall_mm: float | None = None,
                 depth_cm: float | None = None, frequency_mhz: float | None = None,
                 gestation_weeks: float | None = None, expected_ti: float | None = None) -> None:
    """Raise :class:`InputError` for the first impossible input; ``None`` inputs are skipped.

    Parameters
    ----------
    bmi : float, optional
        Body-mass index. [kg/m²]
    wall_mm : float, optional
        Measured wall thickness, skin to the deep fascia or peritoneum. [mm]
    depth_cm : float, optional
        Skin-to-target depth. [cm]
    frequency_mhz : float, optional
        Transmit centre frequency. [MHz]
    gestation_weeks : float, optional
        Gestational age from the last menstrual period. [weeks]
    expected_ti : float, optional
        Expected displayed thermal index. [-]

    Raises
    ------
    InputError
        One line naming the parameter, the value and the possible range, e.g.
        ``bmi must be > 0 and <= 200, got 0``.
    """
    for name, value in _given(dict(bmi=bmi, wall_mm=wall_mm, depth_cm=depth_cm,
                                   frequency_mhz=frequency_mhz, gestation_weeks=gestation_weeks,
                                   expected_ti=expected_ti)).items():
        _check_one(name, value)


@record
class ValidityFlag:
    """An input outside the model's validated range (``source`` a REFERENCES key)."""

    parameter: str
    value: float
    valid_range: tuple[float, float]
    message: str
    source: str
    status: str


def validity_flags(*, bmi: float | None = None, wall_mm: float | None = None,
                   depth_cm: float | None = None, frequency_mhz: float | None = None,
                   gestation_weeks: float | None = None,
                   expected_ti: float | None = None) -> list[ValidityFlag]:
    """Return one flag per input outside the model's validated range.

    Parameters are those of :func:`check_inputs`; impossible values raise
    :class:`InputError` first (they cannot be flagged meaningfully).

    Returns
    -------
    list of ValidityFlag
        Each with ``parameter``, ``value``, ``valid_range`` (lo, hi), ``message``, ``source``,
        ``status``; empty when every given input lies inside its validated range.
        ``source`` is a key of :data:`planner.references.REFERENCES`.
    """
    flags: list[ValidityFlag] = []
    for name, value in _given(dict(bmi=bmi, wall_mm=wall_mm, depth_cm=depth_cm,
                                   frequency_mhz=frequency_mhz, gestation_weeks=gestation_weeks,
                                   expected_ti=expected_ti)).items():
        number = _check_one(name, value)
        rng = safety_data().validity[name]
        lo, hi = rng.valid_lo, rng.valid_hi
        if lo <= number <= hi:
            continue
        side = "below" if number < lo else "above"
        flags.append(ValidityFlag(
            parameter=name, value=number, valid_range=(lo, hi),
            message=(f"{PARAMETERS[name]} {number:g} is {side} the range the model is "
                     f"validated for ({lo:g} to {hi:g}); results are extrapolated and "
                     f"less reliable"),
            source=rng.valid.source, status=rng.valid.status))
    return flags
