"""Thermal safety: which thermal index to watch, and scan time versus displayed TI.

References
----------
BMUS2009 (Fig. 1: obstetric scan times; TIS up to 10 weeks post-LMP, TIB after),
BMUS2009Detailed (non-obstetric table), AIUM2022TI (Tables 1 and 2; 33 % shorter times
for pulsed Doppler with bone near the focus), IEC62359 (TIS, TIB, TIC definitions).
"""

from __future__ import annotations

import math
from typing import Any

from planner.findings import Finding
from planner.records import record
from planner.safety.context import ExamContext
from planner.safety.format import minutes_text, number_text, short_title, status_text
from planner.safety.policy import LocalPolicy
from planner.safety.tables import TimeTable, safety_data

INDEX_NAMES: dict[str, str] = {
    "TIS": "soft-tissue thermal index",
    "TIB": "bone thermal index",
    "TIC": "cranial-bone thermal index",
}
"""Standard abbreviations of the thermal indices (IEC 62359) -> plain names."""


@record
class IndexChoice:
    """The thermal index to watch, why, and where the rule comes from."""

    index: str
    reason: str
    source: str
    status: str
    assumed: bool = False


def index_choice(ctx: ExamContext) -> IndexChoice:
    """Return the thermal index to monitor for ``ctx`` with its reason and provenance."""
    data = safety_data()
    entry = data.exam_types[ctx.exam_type].thermal_index
    switch = data.value("thermal_index.obstetric_tib_from_weeks")
    if ctx.exam_type == "obstetric" or (ctx.exam_type == "gynaecological"
                                        and ctx.pregnancy_possible):
        weeks = ctx.gestation_weeks
        if weeks is None:
            if ctx.exam_type == "obstetric":
                return IndexChoice("TIB", f"gestational age not given: TIB assumed (TIS applies "
                                   f"only up to {switch.value:g} weeks post-LMP)",
                                   switch.source, switch.status, assumed=True)
            return IndexChoice("TIS", f"pregnancy possible, gestation unknown: early pregnancy "
                               f"assumed (TIS up to {switch.value:g} weeks post-LMP, TIB after)",
                               switch.source, switch.status, assumed=True)
        if weeks <= switch.value:
            return IndexChoice("TIS", f"{weeks:g} weeks: TIS up to {switch.value:g} weeks post-LMP",
                               switch.source, switch.status)
        return IndexChoice("TIB", f"{weeks:g} weeks: TIB after {switch.value:g} weeks post-LMP "
                           "(fetal bone ossifying)", switch.source, switch.status)
    if entry.value == "TIS" and ctx.bone_near_focus:
        bone = data.value("thermal_index.bone_near_focus")
        return IndexChoice("TIB", "bone at or near the focus", bone.source, bone.status)
    return IndexChoice(str(entry.value), entry.note, entry.source, entry.status)


def monitored_index(ctx: ExamContext) -> str:
    """Return the thermal index to watch on the scanner display: ``"TIS"``, ``"TIB"`` or ``"TIC"``.

    Obstetric exams (and gynaecological exams with a possible pregnancy) follow BMUS 2009
    Fig. 1: TIS up to 10 weeks post-LMP, TIB thereafter. Adult transcranial exams use TIC;
    any other soft-tissue exam switches to TIB when bone lies near the focus.
    """
    return index_choice(ctx).index


def index_finding(ctx: ExamContext) -> Finding:
    """Return the ``safety.index`` finding naming the thermal index to watch."""
    choice = index_choice(ctx)
    message = (f"Watch {choice.index} ({INDEX_NAMES[choice.index]}) on the scanner display: "
               f"{choice.reason}{status_text(choice.status)}. A TI is a ratio of powers, not a "
               "temperature rise in degrees.")
    return Finding("safety.index", "advice" if choice.assumed else "info",
                   f"Thermal index to watch: {choice.index}", message,
                   {"monitored_index": choice.index, "assumed": choice.assumed,
                    "status": choice.status},
                   tuple(dict.fromkeys((choice.source, "IEC62359"))),
                   "IEC 62359 defines TIS for soft tissue, TIB for bone at or near the focus and "
                   "TIC for bone at the surface; society guidance says which one to monitor.")


def scan_time_group(ctx: ExamContext) -> str:
    """Return the scan-time group id: ``pregnancy_neonatal``, ``general`` or ``none`` (eye)."""
    if ctx.exam_type == "gynaecological" and ctx.pregnancy_possible:
        return "pregnancy_neonatal"
    return str(safety_data().exam_types[ctx.exam_type].scan_time_group.value)


def _reduction(ctx: ExamContext) -> float:
    if "pulsed_doppler" in ctx.modes and ctx.bone_near_focus:
        return float(safety_data().value("scan_time.pulsed_doppler_bone_reduction_fraction").value)
    return 0.0


@record
class TableLimit:
    """The band of one published scan-time table that holds the expected TI.

    ``kind`` is the band's kind (``unlimited``, ``limited``, ``not_recommended``);
    ``limit_min`` its longest scan time [min], already cut for pulsed Doppler with bone
    near the focus (AIUM2022TI), ``None`` when the band sets no time.
    """

    table: str
    title: str
    band: str
    kind: str
    limit_min: float | None
    source: str
    status: str

    def as_values(self) -> dict[str, Any]:
        """The entry of the ``safety.scan_time`` finding's ``tables`` value."""
        return {"table": self.table, "title": self.title, "band": self.band, "kind": self.kind,
                "limit_min": self.limit_min, "source": self.source, "status": self.status}


def _table_limit(table: TimeTable, ti: float, reduction: float) -> TableLimit:
    row = table.row_at(ti)
    minutes = None if row.max_minutes is None else round(row.max_minutes * (1.0 - reduction), 4)
    return TableLimit(table.id, short_title(table.title), row.band_text(), row.kind, minutes,
                      row.source, row.status)


def table_limits(ctx: ExamContext) -> tuple[TableLimit, ...]:
    """The band of each published table of the exam's group at ``ctx.expected_ti`` (BMUS
    first, then AIUM); empty when no TI is expected or no table covers the exam (eye)."""
    group = scan_time_group(ctx)
    if group == "none" or ctx.expected_ti is None:
        return ()
    reduction = _reduction(ctx)
    return tuple(_table_limit(t, ctx.expected_ti, reduction)
                 for t in safety_data().group_tables(group))


def _row_text(kind: str, minutes: float | None) -> str:
    if kind == "unlimited":
        return "no time limit"
    if kind == "not_recommended":
        return "not recommended"
    return f"< {minutes_text(minutes)}"


def _limit_text(entry: TableLimit) -> str:
    text = _row_text(entry.kind, entry.limit_min)
    return f"{entry.title} {text}{status_text(entry.status)}"


def _severity(planned: float | None, limit: float | None, approaching: float) -> str:
    if planned is None or limit is None:
        return "info"
    if planned > limit:
        return "warning"
    return "caution" if planned > approaching * limit else "info"


def _worst(*severities: str) -> str:
    order = ("info", "advice", "caution", "warning")
    return max(severities, key=order.index)


def _max_ti_text(tables: tuple[TimeTable, ...], minutes: float, reduction: float,
                 index: str) -> str:
    needed = minutes / (1.0 - reduction)
    limits = [t.max_ti_for_minutes(needed) for t in tables]
    best = min((x for x in limits if x is not None), default=None)
    if best is None or math.isinf(best):
        return ""
    return f" For {minutes_text(minutes)} keep {index} <= {number_text(best)}."


def _local_part(ctx: ExamContext, policy: LocalPolicy | None, values: dict[str, Any],
                published: float | None, approaching: float) -> tuple[str, str]:
    """Add local limits to ``values``; return (message part, severity)."""
    if policy is None:
        return "", "info"
    limits = policy.limits_for(ctx.exam_type)
    local_min = policy.time_limit_min(ctx.exam_type, ctx.expected_ti)
    values["local_limit_min"] = local_min
    values["local_max_ti"] = limits.max_ti
    parts, severity = [], "info"
    if local_min is not None:
        text = f"< {minutes_text(local_min)}"
        if published is not None and local_min > published:
            text += " (longer than the published limit)"
        severity = _severity(ctx.planned_minutes, local_min, approaching)
        if ctx.planned_minutes is not None and ctx.planned_minutes >= local_min:
            text += f" (the planned {minutes_text(ctx.planned_minutes)} exceeds it)"
        parts.append(text)
    if limits.max_ti is not None:
        parts.append(f"{monitored_index(ctx)} <= {number_text(limits.max_ti)}")
        if ctx.expected_ti is not None and ctx.expected_ti > limits.max_ti:
            severity = "warning"
    if not parts:
        return "", "info"
    return f" Local practice, {policy.label}: {', '.join(parts)}.", severity


def _without_ti(ctx: ExamContext, tables: tuple[TimeTable, ...], label: str, index: str,
                reduction: float) -> str:
    """Message listing the BMUS table (and the highest TI for the planned time)."""
    bmus = tables[0]
    steps = "; ".join(f"{r.band_text()}: {_row_text(r.kind, r.max_minutes)}"
                      f"{status_text(r.status)}" for r in bmus.rows)
    message = f"Expected {index} not given. {short_title(bmus.title)} limits for {label}: {steps}."
    if ctx.planned_minutes is not None:
        message += _max_ti_text(tables, ctx.planned_minutes, reduction, index)
    return message


def _with_ti(ctx: ExamContext, ti: float, tables: tuple[TimeTable, ...], label: str, index: str,
             reduction: float, approaching: float,
             values: dict[str, Any]) -> tuple[str, str, float | None]:
    """Compare the planned time with the stricter published limit; return (message, severity,
    published limit [min])."""
    entries = [_table_limit(t, ti, reduction) for t in tables]
    blocked = [e for e in entries if e.kind == "not_recommended"]
    timed = [e for e in entries if e.kind == "limited" and e.limit_min is not None]
    if blocked:
        strict = blocked[0]
    else:
        strict = min(timed, key=lambda e: math.inf if e.limit_min is None else e.limit_min,
                     default=entries[0])
    published = strict.limit_min
    values.update(tables=[e.as_values() for e in entries], published_limit_min=published,
                  published_limit_kind=strict.kind, published_source=strict.source,
                  published_status=strict.status)
    message = (f"Expected {index} {number_text(ti)}, limits for {label}: "
               f"{'; '.join(_limit_text(e) for e in entries)}.")
    if reduction:
        message += f" Times cut by {reduction:.0%} for pulsed Doppler with bone near the focus."
    if blocked:
        return (message + f" Lower the output: scanning at this {index} is not recommended.",
                "warning", published)
    severity = _severity(ctx.planned_minutes, published, approaching)
    if ctx.planned_minutes is not None and published is not None:
        values["fraction_of_published_limit"] = ctx.planned_minutes / published
        verdict = {"warning": "exceeds", "caution": "is close to"}.get(severity, "is within")
        message += (f" Planned {minutes_text(ctx.planned_minutes)} {verdict} the published "
                    f"limit of {minutes_text(published)}.")
    elif published is not None:
        message += f" Plan under {minutes_text(published)} at this {index}."
    else:
        message += f" No published time limit at this {index}; observe ALARA."
    return message, severity, published


def scan_time_finding(ctx: ExamContext, policy: LocalPolicy | None = None) -> Finding:
    """Return the ``safety.scan_time`` finding: planned minutes against the limit at the TI.

    The published limit is the stricter of the BMUS and AIUM tables for the exam's group,
    cut by 33 % for pulsed Doppler with bone near the focus. Severity is ``warning`` when
    the planned time exceeds the published (or local) limit at the expected TI, or when
    that TI lies in a band where scanning is not recommended; ``caution`` above 80 % of a
    limit; otherwise ``info``. Local limits appear beside the published ones in the
    message and as ``local_limit_min`` / ``local_max_ti`` in the values.
    """
    data = safety_data()
    index = monitored_index(ctx)
    group = scan_time_group(ctx)
    approaching = float(data.value("scan_time.approaching_fraction").value)
    reduction = _reduction(ctx)
    values: dict[str, Any] = {"monitored_index": index, "expected_ti": ctx.expected_ti,
                              "planned_minutes": ctx.planned_minutes, "table_group": group,
                              "doppler_bone_reduction_fraction": reduction,
                              "published_limit_min": None, "published_limit_kind": None}
    severity, published = "info", None
    if group == "none":
        sources = ["AIUM2022TI"]
        message = (f"Watch {index}. The published scan-time tables do not cover the eye; "
                   "the ophthalmic output limits apply instead.")
    else:
        label = data.groups[group][0]
        tables = data.group_tables(group)
        sources = [t.source for t in tables]
        if ctx.expected_ti is None:
            message = _without_ti(ctx, tables, label, index, reduction)
        else:
            message, severity, published = _with_ti(ctx, ctx.expected_ti, tables, label, index,
                                                    reduction, approaching, values)
    local_text, local_severity = _local_part(ctx, policy, values, published, approaching)
    if local_text and policy is not None:
        sources.append(policy.source_key)
    return Finding("safety.scan_time", _worst(severity, local_severity),
                   f"Scan time at the expected {index}", message + local_text, values,
                   tuple(dict.fromkeys(sources)),
                   "Society tables give a recommended maximum scan (dwell) time for each band "
                   "of displayed TI; the plan's minutes are compared with the stricter of the "
                   "published tables and, separately, with any local limit.")


def doppler_bone_finding(ctx: ExamContext) -> Finding | None:
    """Return a caution when pulsed Doppler is planned with bone near the focus (AIUM 2022)."""
    reduction = _reduction(ctx)
    if not reduction:
        return None
    index = monitored_index(ctx)
    return Finding("safety.doppler_near_bone", "caution",
                   "Pulsed Doppler with bone near the focus",
                   f"Pulsed Doppler with bone near the focus: the displayed {index} tends to "
                   f"underestimate bone heating, so the recommended scan times are cut by "
                   f"{reduction:.0%}. Keep the sample volume and dwell time short.",
                   {"monitored_index": index, "reduction_fraction": reduction},
                   ("AIUM2022TI",),
                   "Standard output measurements underestimate TIB for pulsed Doppler and ARFI; "
                   "since thermal dose grows with dwell time, shorter times compensate.")
