"""Scan time and local limits of a protocol sheet.

The planned minutes of a protocol (the sum of its views' expected minutes) are compared,
at the expected thermal index, with the published scan-time tables (BMUS2009,
BMUS2009Detailed, AIUM2022TI), with a local policy file when one is given and with the
protocol's own limits; all are shown side by side, the published value never hidden.
"""

from __future__ import annotations

import os
from pathlib import Path

from planner.findings import Finding
from planner.protocol.schema import Protocol
from planner.protocol.sheet_model import (LimitRow, PublishedRow, PublishedTable, TableMaxTi,
                                          TimeSection)
from planner.safety import ExamContext, LocalPolicy, monitored_index
from planner.safety.policy import LocalExamLimits
from planner.safety.format import short_title
from planner.safety.tables import safety_data
from planner.safety.thermal import scan_time_group, table_limits

__all__ = ["expected_ti_for", "protocol_policy", "time_section"]


def protocol_policy(protocol: Protocol,
                    protocol_path: str | os.PathLike[str] | None) -> LocalPolicy | None:
    """The protocol's own safety limits as a local policy (``None`` when it sets none)."""
    s = protocol.safety
    if s.max_scan_minutes is None and s.max_ti is None and s.max_mi is None:
        return None
    limits = LocalExamLimits(*(None if x is None else float(x.value)
                               for x in (s.max_ti, s.max_mi, s.max_scan_minutes)))
    name = Path(protocol_path).name if protocol_path is not None else ""
    return LocalPolicy(protocol.department, name, protocol.version,
                       exam_limits={protocol.exam_type: limits})


def _limit_row(kind: str, label: str, band: str | None, limit_kind: str,
               minutes: float | None, max_ti: float | None, source: str, status: str,
               planned: float) -> LimitRow:
    """One limit beside the ``planned`` minutes; ``within`` is ``None`` for a limit without
    a time (``limit_kind`` ``none``)."""
    within: bool | None
    if limit_kind == "limited" and minutes is not None:
        within = planned <= minutes
    else:
        within = None if limit_kind == "none" else limit_kind == "unlimited"
    return LimitRow(kind, label, band, limit_kind, minutes, max_ti, source, status, within)


def time_section(protocol: Protocol, ctx: ExamContext, finding: Finding, basis: str,
                 local: LocalPolicy | None) -> TimeSection:
    """Planned minutes against the published, local (file) and protocol limits.

    ``ctx`` carries the planned minutes and expected TI (the published bands are read at it
    with :func:`planner.safety.thermal.table_limits`), ``finding`` is its ``safety.scan_time``
    finding (its severity and message are the verdict), ``local`` the policy given as a file
    (``None`` when the protocol's own limits act as local policy: they get their own row
    anyway).
    """
    planned = float(ctx.planned_minutes or 0.0)
    limits = [_limit_row("published", t.title, t.band, t.kind, t.limit_min, None, t.source,
                         t.status, planned) for t in table_limits(ctx)]
    if local is not None:
        minutes = local.time_limit_min(ctx.exam_type, ctx.expected_ti)
        limits.append(_limit_row("local", local.label, None,
                                 "limited" if minutes is not None else "none", minutes,
                                 local.limits_for(ctx.exam_type).max_ti, local.source_key,
                                 "local", planned))
    s = protocol.safety
    if s.max_scan_minutes is not None or s.max_ti is not None:
        ref = s.max_scan_minutes if s.max_scan_minutes is not None else s.max_ti
        assert ref is not None
        limits.append(_limit_row(
            "protocol", f"protocol {protocol.id}", None,
            "limited" if s.max_scan_minutes is not None else "none",
            None if s.max_scan_minutes is None else float(s.max_scan_minutes.value),
            None if s.max_ti is None else float(s.max_ti.value), ref.source, ref.status, planned))
    group = scan_time_group(ctx)
    tables = safety_data().group_tables(group) if group != "none" else ()
    published = tuple(PublishedTable(short_title(t.title), t.source, tuple(
        PublishedRow(r.band_text(), r.kind, r.max_minutes, r.status) for r in t.rows))
        for t in tables)
    most = []
    for t in tables:
        best = t.max_ti_for_minutes(planned)
        most.append(TableMaxTi(short_title(t.title), t.source,
                               None if best is None or best == float("inf") else best))
    return TimeSection(planned, monitored_index(ctx), ctx.expected_ti, basis, tuple(limits),
                       tuple(most), published, finding.severity, finding.message)


def expected_ti_for(protocol: Protocol, local: LocalPolicy | None) -> tuple[float | None, str]:
    """The TI at which limits are read, and why: the protocol's highest accepted TI, else
    the local policy's, else none (the tables are then listed band by band)."""
    if protocol.safety.max_ti is not None:
        ti = protocol.safety.max_ti
        return float(ti.value), (f"the protocol's highest accepted TI ({ti.source}, {ti.status}): "
                                 "limits are read at the worst case the protocol allows")
    local_ti = None if local is None else local.limits_for(protocol.exam_type).max_ti
    if local is not None and local_ti is not None:
        return (float(local_ti),
                f"the highest TI of the {local.label}")
    return None, "none given: the published tables are listed band by band"
