"""The student's own decisions in a supervised draft, and how they compare with the plan.

A draft records what the student would do before seeing the tool's answer: probe, start
frequency, window and patient position, harmonic imaging on or off, the tilt approach and a
short rationale. :func:`compare_choices` sets each decision beside the tool's plan with a
verdict: ``agree``, ``differ``, ``review`` (free text the supervisor judges: the tilt
approach) or ``not given``. The comparison is teaching material for the supervisor; the
tool's plan is itself decision support, not the right answer.
"""

from __future__ import annotations

from dataclasses import fields
from typing import Any

from planner.records import record

__all__ = ["START_TOLERANCE_MHZ", "ChoiceRow", "StudentChoices", "compare_choices"]

START_TOLERANCE_MHZ = 0.05
"""A start frequency this far outside the tool's band still agrees (the band is printed to
one decimal). [MHz] (common practice: rounding of the displayed value)"""


@record(slots=False)
class StudentChoices:
    """What the student decided (None or empty: not decided). ``start_mhz`` in MHz."""

    probe: str = ""
    start_mhz: float | None = None
    window: str = ""
    position: str = ""
    harmonic: bool | None = None
    tilt: str = ""
    rationale: str = ""

    def is_empty(self) -> bool:
        """True when the student decided nothing."""
        return all(getattr(self, f.name) in (None, "") for f in fields(self))

    def as_data(self) -> dict[str, Any]:
        """The plan file's ``decisions`` section."""
        return {f.name: getattr(self, f.name) for f in fields(self)}


@record
class ChoiceRow:
    """One decision: the tool's plan, the student's choice and the verdict."""

    item: str
    tool: str
    student: str
    verdict: str


def _same(a: str, b: str) -> bool:
    return a.strip().casefold() == b.strip().casefold()


_GENERIC_PROBE_WORDS = frozenset({"array", "probe", "transducer", "mhz"})


def _names_probe(text: str, probe) -> bool:
    """The student's text names the probe: its id, type or label, or consecutive words of
    the label ('curved' or 'curved array' for 'Abdominal curved array, 1-6 MHz')."""
    words = text.strip().casefold().replace("_", " ").replace(",", " ").split()
    label = probe.label.casefold().replace(",", " ").split()
    runs = (label[i:i + len(words)] for i in range(len(label) - len(words) + 1))
    if words and set(words) <= _GENERIC_PROBE_WORDS:
        return False                # 'array' or 'probe' alone names no probe
    return bool(words) and (_same(text, probe.id) or _same(text, probe.type)
                            or _same(text, probe.type.replace("_", " "))
                            or _same(text, probe.label) or any(run == words for run in runs))


def _contains(short: str, long: str) -> bool:
    s = short.strip().casefold()
    return bool(s) and s in long.casefold()


def _verdict(given: bool, agree: bool) -> str:
    return "not given" if not given else ("agree" if agree else "differ")


def compare_choices(plan, choices: StudentChoices) -> tuple[ChoiceRow, ...]:
    """The tool-versus-student table for ``plan`` (a :class:`planner.engine.Plan`).

    Probe: the student's probe agrees when it names the chosen probe's id, type or label (or
    the label's leading words).
    Start frequency: agrees when inside the tool's band (within :data:`START_TOLERANCE_MHZ`).
    Window: its id or name. Position: the student's words are part of the tool's position
    text (or the reverse). Harmonic: on/off against the advice. Tilt: shown for review.
    """
    rows: list[ChoiceRow] = []
    probe = plan.probe
    tool_probe = f"{probe.label} ({probe.id})" if probe else "none fits"
    p = choices.probe.strip()
    rows.append(ChoiceRow("Probe", tool_probe, p or "-",
                          _verdict(bool(p), probe is not None and _names_probe(p, probe))))
    band = plan.frequency_mhz
    if band.low is None or band.high is None:
        tool_band = "no usable band"
    else:
        start = (f"start {band.start if band.start is not None else band.high:.1f} MHz"
                 if band.feasible else "detail not reached")
        tool_band = f"{start} (band {band.low:.1f}-{band.high:.1f} MHz)"
    mhz = choices.start_mhz
    inside = (mhz is not None and band.low is not None and band.high is not None
              and band.low - START_TOLERANCE_MHZ <= mhz <= band.high + START_TOLERANCE_MHZ)
    rows.append(ChoiceRow("Start frequency", tool_band, "-" if mhz is None else f"{mhz:g} MHz",
                          _verdict(mhz is not None, inside)))
    w = plan.window
    given = choices.window.strip()
    rows.append(ChoiceRow("Window", f"{w.name} ({w.id})", given or "-",
                          _verdict(bool(given), _same(given, w.id) or _same(given, w.name))))
    pos = choices.position.strip()
    rows.append(ChoiceRow("Position", w.position, pos or "-", _verdict(
        bool(pos), _contains(pos, w.position) or _contains(w.position, pos))))
    h = choices.harmonic
    rows.append(ChoiceRow("Harmonic imaging", "on" if plan.harmonic.advised else "off",
                          "-" if h is None else ("on" if h else "off"),
                          _verdict(h is not None, h is plan.harmonic.advised)))
    tilt = (f"within {plan.tilt.max_deviation_deg:.1f} deg of perpendicular"
            if plan.tilt.max_deviation_deg is not None else "free (diffuse target)")
    t = choices.tilt.strip()
    rows.append(ChoiceRow("Tilt approach", tilt, t or "-", "review" if t else "not given"))
    r = choices.rationale.strip()
    rows.append(ChoiceRow("Rationale", "-", r or "-", "review" if r else "not given"))
    return tuple(rows)
