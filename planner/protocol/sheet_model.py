"""Typed, frozen records of a protocol sheet, and its one JSON edge.

:func:`planner.protocol.sheet.build_sheet` returns a :class:`Sheet`; the Markdown, HTML and
terminal renderers read its attributes. JSON (``scanplan protocol sheet --format json``) is
produced only by :func:`sheet_to_json_data`, which walks these records with the plan's
serializer (:func:`planner.engine.serialize.to_json_data`: tuples become lists, a field's
``json_key`` names its key, ``json=False`` keeps it out) and adds ``kind`` and
``schema_version``. The keys are documented in :mod:`planner.protocol.sheet`; units are
in the field docstrings (minutes [min], BMI [kg/m^2], TI and MI dimensionless).
"""

from __future__ import annotations

from dataclasses import field
from typing import Any

from planner.engine.model import Plan
from planner.engine.serialize import to_json_data
from planner.protocol.sheet_rows import SheetRow
from planner.records import record

__all__ = ["SHEET_KIND", "SHEET_SCHEMA_VERSION", "SourcedValue", "ProbeRef", "NamedRef",
           "ProtocolFacts", "Preparation", "Personnel", "Equipment", "HabitusClass",
           "SheetView", "LimitRow", "TableMaxTi", "PublishedRow", "PublishedTable",
           "TimeSection", "ProtocolLimits", "LocalPolicyRef", "SheetFinding",
           "SafetySection", "Sheet", "sheet_to_json_data"]

SHEET_KIND = "protocol_sheet"
SHEET_SCHEMA_VERSION = 1
"""``kind`` and ``schema_version`` of the sheet's JSON."""


@record
class SourcedValue:
    """A protocol value with its provenance (unit named by the field that holds it)."""

    value: float
    source: str
    status: str
    note: str


@record
class ProbeRef:
    """A probe named by the protocol; ``label`` is ``None`` when the inventory lacks it."""

    id: str
    label: str | None


@record
class NamedRef:
    """A library target or window: id and display name."""

    id: str
    name: str


@record
class ProtocolFacts:
    """The protocol's identity; ``file`` is the file name only (no directories)."""

    id: str
    title: str
    department: str
    version: str
    owner: str
    approved_by: str | None
    review_date: str
    exam_type: str
    exam_type_label: str
    scope: str
    file: str | None


@record
class Preparation:
    """Patient preparation; ``fasting_hours`` [h] or ``None``."""

    bladder: str
    fasting_hours: SourcedValue | None
    instructions: tuple[str, ...]
    checks: tuple[str, ...]


@record
class Personnel:
    """Who performs and reports the exam, trainee supervision (code and words), chaperone."""

    performed_by: tuple[str, ...]
    reported_by: tuple[str, ...]
    trainee_supervision: str
    trainee_supervision_text: str
    chaperone: str


@record
class Equipment:
    """Main and alternative probes, the inventory planned with (text), setup, cleaning."""

    probe: ProbeRef
    alternative_probes: tuple[ProbeRef, ...]
    inventory: str
    setup: tuple[str, ...]
    infection_control: str | None


@record
class HabitusClass:
    """A WHO adult BMI class on the sheet and the BMI planned for it [kg/m^2]."""

    id: str
    label: str
    bmi: float


@record
class SheetView:
    """One view: where and how it is scanned, its minutes [min], and a row per habitus class.

    ``plot_class`` is the class whose plan draws the view's depth plot.
    """

    id: str
    title: str
    target: NamedRef
    window: NamedRef
    position: str
    position_note: str | None
    breathing: str
    expected_minutes: float
    protocol_probe: ProbeRef
    doppler_modes: tuple[str, ...]
    monitored_index: str
    plot_class: str
    classes: tuple[SheetRow, ...]


@record
class LimitRow:
    """One scan-time limit beside the planned minutes.

    ``kind`` is ``published``, ``local`` or ``protocol``; ``limit`` the band's kind
    (``unlimited``, ``limited``, ``not_recommended``, or ``none`` when no time is set);
    ``max_minutes`` [min] and ``max_ti`` [-] or ``None``; ``within`` is ``None`` when the
    limit sets no time.
    """

    kind: str
    label: str
    band: str | None
    limit: str
    max_minutes: float | None
    max_ti: float | None
    source: str
    status: str
    within: bool | None


@record
class TableMaxTi:
    """The highest TI of a published table whose band still allows the planned minutes
    (``None``: any TI)."""

    title: str
    source: str
    max_ti: float | None


@record
class PublishedRow:
    """One band of a published scan-time table; ``max_minutes`` [min] or ``None``."""

    band: str
    limit: str
    max_minutes: float | None
    status: str


@record
class PublishedTable:
    """A published scan-time table, every band."""

    title: str
    source: str
    rows: tuple[PublishedRow, ...]


@record
class TimeSection:
    """Planned minutes [min] at the expected TI against every limit, and the verdict."""

    planned_minutes: float
    monitored_index: str
    expected_ti: float | None
    expected_ti_basis: str
    limits: tuple[LimitRow, ...]
    max_ti_for_planned: tuple[TableMaxTi, ...]
    published_tables: tuple[PublishedTable, ...]
    severity: str
    message: str


@record
class ProtocolLimits:
    """The protocol's own safety limits: max TI, MI and minutes [min], pulsed Doppler rule."""

    max_ti: SourcedValue | None
    max_mi: SourcedValue | None
    max_scan_minutes: SourcedValue | None
    pulsed_doppler: str
    notes: tuple[str, ...]


@record
class LocalPolicyRef:
    """The local limits in force; ``origin`` is ``file`` (given with --local) or ``protocol``."""

    label: str
    source: str
    origin: str


@record
class SheetFinding:
    """A safety finding of the exam as the sheet shows it."""

    code: str
    severity: str
    title: str
    message: str
    sources: tuple[str, ...]


@record
class SafetySection:
    """The index to watch, the protocol's limits, the local policy and the safety findings."""

    monitored_index: str
    protocol_monitored_index: str | None
    protocol_limits: ProtocolLimits
    local_policy: LocalPolicyRef | None
    findings: tuple[SheetFinding, ...]


@record
class Sheet:
    """A built protocol sheet, and one plan per view for its depth plot (not in JSON)."""

    statement: str
    protocol: ProtocolFacts
    preparation: Preparation
    personnel: Personnel
    equipment: Equipment
    habitus_classes: tuple[HabitusClass, ...]
    assumptions: tuple[str, ...]
    views: tuple[SheetView, ...]
    time: TimeSection
    safety: SafetySection
    plot_plans: tuple[Plan, ...] = field(metadata={"json": False})

    def habitus_class(self, class_id: str) -> HabitusClass:
        """The sheet's class ``class_id`` (``KeyError`` when the sheet lacks it)."""
        for c in self.habitus_classes:
            if c.id == class_id:
                return c
        raise KeyError(class_id)


def sheet_to_json_data(sheet: Sheet) -> dict[str, Any]:
    """The JSON data of ``sheet``: every record field, plus ``kind``, ``schema_version`` and
    the stamp (``generated_by``, ``generated_at``: :mod:`planner.stamp`)."""
    from planner.stamp import current_stamp

    out: dict[str, Any] = to_json_data(sheet)
    out["kind"] = SHEET_KIND
    out["schema_version"] = SHEET_SCHEMA_VERSION
    out.update(current_stamp().as_data())
    return out
