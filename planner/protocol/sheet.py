"""Protocol sheets: one exam, every view, every WHO habitus class.

:func:`build_sheet` plans every view of a department protocol for a representative BMI of
each WHO adult BMI class (:data:`planner.body.habitus.REPRESENTATIVE_BMI`) and gathers, per
view and class, the probe, band, harmonic advice, tilt, depth and main cautions; for the
exam, the planned minutes against the published and local scan-time limits at the expected
thermal index, the safety findings and the decision-support statement. The sheet is a
frozen, typed :class:`planner.protocol.sheet_model.Sheet`; the time limits are gathered by
:mod:`planner.protocol.sheet_limits`; the renderers for Markdown, printable HTML and JSON
live in :mod:`planner.protocol.sheet_render`, and the JSON data comes only from
:func:`planner.protocol.sheet_model.sheet_to_json_data`.

JSON keys (``scanplan protocol sheet --format json``; keys sorted)
------------------------------------------------------------------
``kind``
    ``"protocol_sheet"``; ``schema_version``: 1; ``statement``: the decision-support statement;
    ``generated_by`` (``scanplan X.Y.Z``) and ``generated_at`` (UTC, ISO 8601).
``protocol``
    ``id, title, department, version, owner, approved_by, review_date, exam_type,
    exam_type_label, scope, file`` (file name only).
``preparation``
    ``bladder``, ``fasting_hours`` (``{value, source, status, note}`` [h] or null),
    ``instructions``, ``checks``.
``personnel``
    ``performed_by, reported_by, trainee_supervision, trainee_supervision_text, chaperone``.
``equipment``
    ``probe`` and ``alternative_probes`` (``{id, label}``; label null when the inventory
    lacks the probe), ``inventory`` (text), ``setup``, ``infection_control``.
``habitus_classes``
    ``[{id, label, bmi}]`` in WHO order; ``bmi`` [kg/m^2] is the BMI planned for the class.
``assumptions``
    Sentences: BMI per class, sex, gestation, probe inventory, expected TI, shared plans.
``views``
    One entry per view: ``id, title, target {id, name}, window {id, name}, position,
    position_note, breathing, expected_minutes`` [min], ``protocol_probe {id, label}``,
    ``doppler_modes``, ``monitored_index``, ``plot_class`` (class of the depth plot) and
    ``classes``: one typed row per habitus class (:class:`planner.protocol.sheet_rows.SheetRow`;
    in JSON:) ``class, label, bmi``, ``probe``
    (``{id, label, type, fit}`` or null), ``band_mhz {low, high, feasible}`` [MHz],
    ``harmonic {advised, short, reason}``, ``tilt_deg`` (largest deviation from
    perpendicular [deg]; null = free, diffuse target), ``depth_cm`` and
    ``displayed_depth_cm`` [cm], ``warnings`` (the main cautions and warnings, at most
    three, most severe first: ``{code, severity, title}``).
``time``
    ``planned_minutes`` [min] (sum of the views' expected minutes), ``monitored_index``,
    ``expected_ti`` (or null) and ``expected_ti_basis``, ``limits`` (published, local and
    protocol limits side by side: ``{kind, label, band, limit, max_minutes, max_ti, source,
    status, within}``), ``max_ti_for_planned`` (per published table: the highest TI whose
    band still allows the planned minutes, null = any), ``published_tables`` (every band
    of each table: ``{title, source, rows [{band, limit, max_minutes, status}]}``),
    ``severity`` and ``message`` of the scan-time finding.
``safety``
    ``monitored_index``, ``protocol_monitored_index``, ``protocol_limits`` (max TI, MI and
    minutes as sourced values, pulsed Doppler rule, notes), ``local_policy`` (``{label,
    source, origin}``, origin ``file`` for --local or ``protocol`` for the protocol's own
    limits; null when neither) and ``findings`` (``{code, severity, title, message, sources}``).

References
----------
WHO2000Obesity (BMI classes); BMUS2009, BMUS2009Detailed, AIUM2022TI (scan time versus
displayed TI); ISUOG2022MidTrimester (timing of the routine mid-trimester scan).
"""

from __future__ import annotations

import dataclasses
import os
from functools import lru_cache
from pathlib import Path

from planner.body.habitus import BMI_CLASSES, REPRESENTATIVE_BMI
from planner.body.patient import Patient
from planner.engine import Plan, PlanRequest, make_plan
from planner.engine.plan import default_exam_context
from planner.errors import DataError, InputError
from planner.library.names import sided_name
from planner.library.probes import ProbeInventory, load_inventory
from planner.library.targets import load_library
from planner.protocol.schema import Protocol, View
from planner.protocol.sheet_limits import expected_ti_for, protocol_policy, time_section
from planner.protocol.sheet_model import (Equipment, HabitusClass, LocalPolicyRef, NamedRef,
                                          Personnel, Preparation, ProbeRef, ProtocolFacts,
                                          ProtocolLimits, SafetySection, Sheet, SheetFinding,
                                          SheetView, SourcedValue)
from planner.protocol.sheet_rows import CLASS_LABELS, SheetRow, sheet_row
from planner.provenance import Sourced
from planner.safety import (DISCLAIMER, EXAM_TYPES, MODES, ExamContext, load_local_policy,
                            monitored_index, safety_findings)
from planner.safety.format import number_text

__all__ = ["FORMATS", "Sheet", "build_sheet", "sheet_from_file", "parse_habitus",
           "render_sheet", "benchmark_sheet", "DEFAULT_GESTATION_WEEKS"]

FORMATS: tuple[str, ...] = ("md", "html", "json")
CLASS_IDS: tuple[str, ...] = tuple(c[0] for c in BMI_CLASSES)

DEFAULT_GESTATION_WEEKS = Sourced(
    20.0, "ISUOG2022MidTrimester", "from_memory",
    "the routine mid-trimester scan is done at 18-22 weeks; 20 weeks is the middle")
"""Gestation planned for obstetric protocols, which state none. [weeks]"""

SUPERVISION_TEXT: dict[str, str] = {
    "in_room": "supervisor in the room throughout",
    "in_department": "supervisor in the department, reviewing images before the patient leaves",
    "available_remotely": "supervisor available by phone, reviewing images later",
    "not_permitted": "trainees may not perform this exam",
}
"""Trainee supervision levels of :data:`planner.protocol.schema.SUPERVISION`, in words."""

_SHIPPED = Path(__file__).resolve().parents[2] / "protocols"


def parse_habitus(text: str | None) -> tuple[str, ...]:
    """Parse a comma list of WHO class ids into WHO order (``None`` or empty: all six).

    Raises
    ------
    InputError
        One line naming the unknown ids and listing the valid ones.
    """
    if text is None or not text.strip():
        return CLASS_IDS
    asked = [part.strip() for part in text.split(",") if part.strip()]
    unknown = [c for c in asked if c not in CLASS_IDS]
    if unknown or not asked:
        raise InputError(f"--habitus: unknown class {', '.join(map(repr, unknown)) or repr(text)}"
                         f"; valid: {', '.join(CLASS_IDS)}", title="Unknown habitus class")
    return tuple(c for c in CLASS_IDS if c in asked)


def _sourced(item: Sourced | None) -> SourcedValue | None:
    if item is None:
        return None
    return SourcedValue(item.value, item.source, item.status, item.note)


def _probe_ref(inventory: ProbeInventory, probe_id: str) -> ProbeRef:
    label = next((p.label for p in inventory.probes if p.id == probe_id), None)
    return ProbeRef(probe_id, label)


def _inventory_path(protocol: Protocol, protocol_path: str | os.PathLike[str] | None,
                    probes_path: str | os.PathLike[str] | None) -> tuple[str | None, str]:
    """The inventory file to plan with and how to describe it (no absolute paths)."""
    if probes_path is not None:
        return str(probes_path), f"{Path(probes_path).name} (given with --probes)"
    name = protocol.equipment.inventory
    if name and protocol_path is not None:
        return str(Path(protocol_path).parent / name), f"{name} (named by the protocol)"
    return None, "the default generic inventory"


def _view_context(protocol: Protocol, view: View, target, window, patient: Patient) -> ExamContext:
    """Exam context of one view: the protocol's exam type and the view's Doppler modes; the
    engine derives the rest (bone near the focus, lung in the beam, gestation) by its own rules."""
    modes = ("b_mode",) + (view.doppler.modes if view.doppler else ())
    request = PlanRequest(view.target, patient, window_id=view.window,
                          context_overrides={"exam_type": protocol.exam_type, "modes": modes})
    return default_exam_context(request, target, window)


def build_sheet(protocol: Protocol, *, protocol_path: str | os.PathLike[str] | None = None,
                habitus: tuple[str, ...] | None = None,
                probes_path: str | os.PathLike[str] | None = None,
                local_path: str | os.PathLike[str] | None = None,
                gestation_weeks: float | None = None) -> Sheet:
    """Plan every view for every chosen habitus class and gather the sheet.

    Parameters
    ----------
    protocol : Protocol
        A validated protocol (:func:`planner.protocol.load_protocol`).
    protocol_path : str or os.PathLike, optional
        Its file: locates the inventory the protocol names; only the file name is shown.
    habitus : tuple of str, optional
        WHO class ids (:func:`parse_habitus`); all six by default.
    probes_path : str or os.PathLike, optional
        A probe inventory replacing the protocol's own.
    local_path : str or os.PathLike, optional
        A local safety policy; without it the protocol's own limits act as local policy.
    gestation_weeks : float, optional
        Gestation for obstetric protocols; :data:`DEFAULT_GESTATION_WEEKS` when omitted. [weeks]

    Raises
    ------
    DataError
        When the inventory or the local policy file is invalid or missing.
    """
    classes = tuple(habitus) if habitus else CLASS_IDS
    inv_path, inv_text = _inventory_path(protocol, protocol_path, probes_path)
    inventory = load_inventory(inv_path)
    if inventory.qa_log:
        inv_text = f"{inv_text}, each probe's signal budget from its QA log {Path(inventory.qa_log).name}"
    given_local = load_local_policy(local_path) if local_path is not None else None
    policy = given_local or protocol_policy(protocol, protocol_path)
    obstetric = protocol.exam_type == "obstetric"
    weeks = (gestation_weeks if gestation_weeks is not None else DEFAULT_GESTATION_WEEKS.value) \
        if obstetric else None
    sex = "female" if obstetric else None
    views, plots, contexts, shared = _plan_views(protocol, classes, inv_path, inventory, sex, weeks)
    expected_ti, basis = expected_ti_for(protocol, policy)
    exam = ExamContext(exam_type=protocol.exam_type, gestation_weeks=weeks,
                       modes=tuple(m for m in MODES if any(m in c.modes for c in contexts)),
                       bone_near_focus=any(c.bone_near_focus for c in contexts),
                       lung_in_beam=any(c.lung_in_beam for c in contexts),
                       expected_ti=expected_ti, planned_minutes=protocol.total_expected_minutes())
    findings = safety_findings(exam, policy)
    scan_time = next(f for f in findings if f.code == "safety.scan_time")
    s = protocol.safety
    safety = SafetySection(
        monitored_index(exam), s.monitored_index,
        ProtocolLimits(_sourced(s.max_ti), _sourced(s.max_mi), _sourced(s.max_scan_minutes),
                       s.pulsed_doppler, tuple(s.notes)),
        None if policy is None else LocalPolicyRef(
            policy.label, policy.source_key, "file" if given_local is not None else "protocol"),
        tuple(SheetFinding(f.code, f.severity, f.title, f.message, tuple(f.sources))
              for f in findings))
    facts, preparation, personnel, equipment = _header(protocol, protocol_path, inventory,
                                                       inv_text)
    return Sheet(
        DISCLAIMER, facts, preparation, personnel, equipment,
        tuple(HabitusClass(c, CLASS_LABELS[c], REPRESENTATIVE_BMI[c]) for c in classes),
        _assumptions(classes, sex, weeks, gestation_weeks, inv_text, expected_ti, basis, shared),
        views, time_section(protocol, exam, scan_time, basis, given_local), safety, plots)


def _plan_views(protocol: Protocol, classes: tuple[str, ...], inv_path: str | None,
                inventory: ProbeInventory, sex: str | None, weeks: float | None
                ) -> tuple[tuple[SheetView, ...], tuple[Plan, ...], list[ExamContext], bool]:
    """Plan each view for each class (identical requests share one plan).

    Returns the views, the plan of each view for its depth plot (the heaviest class), the
    exam context of each view and whether any plan was shared.
    """
    library = load_library()
    patients = {c: Patient.from_inputs(bmi=REPRESENTATIVE_BMI[c], sex=sex, gestation_weeks=weeks)
                for c in classes}
    plot_class = classes[-1]
    memo: dict[tuple, Plan] = {}
    views: list[SheetView] = []
    plots: list[Plan] = []
    contexts: list[ExamContext] = []
    for view in protocol.views:
        target = library.get(view.target)
        window = target.window(view.window)
        ctx = _view_context(protocol, view, target, window, patients[classes[0]])
        contexts.append(ctx)
        rows: list[SheetRow] = []
        for c in classes:
            key = (view.target, view.window, view.side, c, ctx)   # the side names the plan's
            if key not in memo:                                      # title and assumptions
                memo[key] = make_plan(PlanRequest(view.target, patients[c], window_id=view.window,
                                                  side=view.side, context=ctx, probes_path=inv_path))
            rows.append(sheet_row(c, REPRESENTATIVE_BMI[c], memo[key], rows[-1] if rows else None))
        plots.append(memo[(view.target, view.window, view.side, plot_class, ctx)])
        views.append(SheetView(
            view.id, view.title, NamedRef(target.id, sided_name(target.name, view.side)),
            NamedRef(window.id, window.name),
            view.position, view.position_note, view.breathing, view.expected_minutes,
            _probe_ref(inventory, view.probe or protocol.equipment.probe),
            view.doppler.modes if view.doppler else (), plots[-1].monitored_index, plot_class,
            tuple(rows)))
    shared = len(memo) < len(protocol.views) * len(classes)
    return tuple(views), tuple(plots), contexts, shared


def _header(protocol: Protocol, protocol_path: str | os.PathLike[str] | None,
            inventory: ProbeInventory,
            inv_text: str) -> tuple[ProtocolFacts, Preparation, Personnel, Equipment]:
    """Protocol facts, preparation, personnel and equipment."""
    e, p, staff = protocol.equipment, protocol.preparation, protocol.personnel
    facts = ProtocolFacts(
        protocol.id, protocol.title, protocol.department, protocol.version, protocol.owner,
        protocol.approved_by, protocol.review_date, protocol.exam_type,
        EXAM_TYPES[protocol.exam_type], protocol.scope.strip(),
        Path(protocol_path).name if protocol_path is not None else None)
    preparation = Preparation(p.bladder, _sourced(p.fasting_hours), tuple(p.instructions),
                              tuple(p.checks))
    personnel = Personnel(tuple(staff.performed_by), tuple(staff.reported_by),
                          staff.trainee_supervision,
                          SUPERVISION_TEXT[staff.trainee_supervision], staff.chaperone)
    equipment = Equipment(_probe_ref(inventory, e.probe),
                          tuple(_probe_ref(inventory, a) for a in e.alternative_probes),
                          inv_text, tuple(e.setup), e.infection_control)
    return facts, preparation, personnel, equipment


def _assumptions(classes: tuple[str, ...], sex: str | None, weeks: float | None,
                 weeks_given: float | None, inv_text: str, expected_ti: float | None,
                 basis: str, shared: bool) -> tuple[str, ...]:
    bmis = ", ".join(f"{CLASS_LABELS[c]} {REPRESENTATIVE_BMI[c]:g}" for c in classes)
    out = [f"Each WHO class (WHO2000Obesity) is planned at one BMI inside it: {bmis} kg/m2.",
           "Sex female (obstetric exam)." if sex == "female" else
           "Sex not fixed: wall layers use the mean of the female and male values."]
    if weeks is not None:
        out.append(f"Gestation {weeks:g} weeks" + (" (given)." if weeks_given is not None else
                   f" assumed: the protocol states none, and {DEFAULT_GESTATION_WEEKS.note} "
                   f"({DEFAULT_GESTATION_WEEKS.source}, from memory)."))
    out.append(f"Probes from {inv_text}; for each view and class the plan picks the probe of "
               "that inventory that suits the window best, shown beside the protocol's probe.")
    out.append(f"Expected TI: {number_text(expected_ti)}, {basis}." if expected_ti is not None
               else f"Expected TI: {basis}.")
    out.append("Planned time is the sum of the views' expected minutes.")
    out.append(f"The depth plot of each view is drawn for {CLASS_LABELS[classes[-1]]}, the "
               "heaviest class on the sheet.")
    if shared:
        out.append("Views with the same target, window, side and exam context share one plan per class.")
    return tuple(out)


def sheet_from_file(path: str | os.PathLike[str], *, habitus: tuple[str, ...] | None = None,
                    probes_path: str | os.PathLike[str] | None = None,
                    local_path: str | os.PathLike[str] | None = None) -> Sheet:
    """Load and check a protocol file (``DataError`` lists every problem), then build its sheet."""
    from planner.protocol.loader import load_protocol

    return build_sheet(load_protocol(path), protocol_path=path, habitus=habitus,
                       probes_path=probes_path, local_path=local_path)


def render_sheet(sheet: Sheet, fmt: str = "md") -> str:
    """Render a sheet as ``md``, ``html`` or ``json`` (see :mod:`planner.protocol.sheet_render`)."""
    from planner.protocol import sheet_render

    renderers = {"md": sheet_render.sheet_markdown, "html": sheet_render.sheet_html,
                 "json": sheet_render.sheet_json}
    if fmt not in renderers:
        raise InputError(f"format must be one of {', '.join(FORMATS)}, got {fmt!r}")
    return renderers[fmt](sheet)


@lru_cache(maxsize=1)
def _benchmark_protocol() -> tuple[Protocol, str]:
    """A synthetic 20-view protocol: the shipped views with distinct targets and windows."""
    from planner.protocol.loader import load_protocol

    base_path = _SHIPPED / "harbourside" / "upper-abdomen.yaml"
    if not base_path.exists():
        raise DataError(f"{_SHIPPED}: the shipped protocols are not installed here")
    base = load_protocol(base_path)
    seen, views = set(), []
    for path in [base_path] + sorted(p for p in _SHIPPED.glob("*/*.yaml") if p != base_path):
        if path.name in ("probes.yaml", "qa.yaml") or path.parent.name == "examples":
            continue
        for view in load_protocol(path).views:
            if (view.target, view.window) not in seen:
                seen.add((view.target, view.window))
                views.append(view)
    views = (views * (20 // len(views) + 1))[:20]
    views = [dataclasses.replace(v, id=f"v{i + 1:02d}-{v.id}", probe=None)
             for i, v in enumerate(views)]
    return dataclasses.replace(base, views=tuple(views)), str(base_path)


def benchmark_sheet() -> None:
    """Build and render (HTML) a sheet of 20 views x 6 habitus classes (``scripts/benchmark.py``).

    The views are the shipped protocols' views with distinct target and window (so no plan
    is shared), planned with the Harbourside inventory; loading the protocol files is done
    once and not timed.
    """
    protocol, path = _benchmark_protocol()
    render_sheet(build_sheet(protocol, protocol_path=path), "html")
