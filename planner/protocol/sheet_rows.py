"""Typed rows of a protocol sheet: one habitus class of one view, made from its typed plan.

The sheet's JSON is produced by :func:`planner.protocol.sheet_model.sheet_to_json_data`;
the row's ``class_id`` is written under the key ``class``.
"""

from __future__ import annotations

from dataclasses import field

from planner.body.habitus import BMI_CLASSES
from planner.engine.model import FrequencyBand, Plan
from planner.records import record

CLASS_LABELS: dict[str, str] = {c[0]: c[1] for c in BMI_CLASSES}
"""WHO habitus class id -> label."""

MAIN_FINDINGS = 3
"""How many cautions and warnings a sheet row lists."""

LISTED_SEVERITIES: tuple[str, ...] = ("warning", "caution")

HARMONIC_SHORT: dict[str, str] = {
    "contraindicated": "keep off: the exam reads artefacts it suppresses",
    "advised": "clutter likely; the harmonic echo reaches",
    "out_of_reach": "clutter likely, but the harmonic echo does not reach",
    "no_harmonic_mode": "the probe has no harmonic mode",
    "optional": "thin wall, little clutter (optional)",
}
"""Short table text for each typed harmonic basis (:attr:`HarmonicDecision.basis`)."""


@record
class RowProbe:
    """The probe a row's plan chose."""

    id: str
    label: str
    type: str
    fit: str


@record
class RowHarmonic:
    """Harmonic advice with a short reason for the table and the full reason for JSON."""

    advised: bool
    short: str
    reason: str


@record
class RowWarning:
    """One of the row's main cautions or warnings."""

    code: str
    severity: str
    title: str


@record
class SheetRow:
    """One habitus class of one view: probe, band, harmonic, tilt, depth, main cautions."""

    class_id: str = field(metadata={"json_key": "class"})
    label: str
    bmi: float
    probe: RowProbe | None
    band_mhz: FrequencyBand
    harmonic: RowHarmonic
    tilt_deg: float | None
    depth_cm: float
    displayed_depth_cm: float
    warnings: tuple[RowWarning, ...]


HABITUS_CODE = "habitus.limited_exam"
"""The 'Large habitus' caution: listed in a row only where the habitus changes that view's
plan (:func:`changes_plan`: the set-up differs from the next lighter class), not repeated in
every heavy class of every view."""


HABITUS_SUFFIX = ", this class and heavier"
"""Added to the label where it is listed, as the heavier rows of the view do not repeat it."""


START_CHANGE_MHZ: float = 0.5
"""Change of the start frequency that counts as a different set-up (about one step of a
scanner's frequency control; common practice). [MHz]"""


def start_changes(a, b) -> bool:
    """True when two bands' start frequencies differ by :data:`START_CHANGE_MHZ` or more."""
    if a.start is None or b.start is None:
        return (a.start is None) != (b.start is None)
    return abs(a.start - b.start) >= START_CHANGE_MHZ - 1e-9


def changes_plan(plan: Plan, reference: SheetRow | None) -> bool:
    """True when ``plan`` differs from ``reference``, the view's row of the next lighter
    class, in what the sonographer sets up: the probe, the start frequency, harmonic imaging,
    or whether the detail is reached (None: no lighter row to compare with)."""
    if reference is None:
        return True
    probe = plan.probe.id if plan.probe is not None else None
    return (probe != (reference.probe.id if reference.probe else None)
            or start_changes(plan.frequency_mhz, reference.band_mhz)
            or plan.harmonic.advised != reference.harmonic.advised
            or plan.frequency_mhz.feasible != reference.band_mhz.feasible)


def sheet_row(class_id: str, bmi: float, plan: Plan, reference: SheetRow | None = None
              ) -> SheetRow:
    """The row of habitus class ``class_id`` (BMI ``bmi`` [kg/m^2]) from its plan;
    ``reference`` is the view's row of the next lighter class, for the 'Large habitus'
    label (:data:`HABITUS_CODE`)."""
    keep_habitus = changes_plan(plan, reference)
    main = [f for f in plan.findings if f.severity in LISTED_SEVERITIES
            and (keep_habitus or f.code != HABITUS_CODE)]
    main.sort(key=lambda f: LISTED_SEVERITIES.index(f.severity))
    probe, h = plan.probe, plan.harmonic
    return SheetRow(
        class_id, CLASS_LABELS[class_id], bmi,
        None if probe is None else RowProbe(probe.id, probe.label, probe.type, probe.fit),
        plan.frequency_mhz, RowHarmonic(h.advised, HARMONIC_SHORT[h.basis], h.reason),
        plan.tilt.max_deviation_deg, plan.depth_cm, plan.displayed_depth_cm,
        tuple(RowWarning(f.code, f.severity, f.title + (HABITUS_SUFFIX if f.code == HABITUS_CODE
                                                        else "")) for f in main[:MAIN_FINDINGS]))
