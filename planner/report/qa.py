"""The probe QA report (``scanplan qa``): each probe's derived budget, its trend and the flags.

Input: :class:`planner.engine.qa_budget.QaReport`. JSON keys (sorted): ``qa_log``, ``demo``,
``inventory``, ``default_budget_db``, ``action_level_cm``, ``implausible_fraction``,
``probes`` (per probe: ``probe``, ``known``, ``bandwidth_fraction``, ``budget_db``,
``budget_sd_db``, ``scatter_db``, ``scatter_dof``, ``date``,
``fall_cm``, ``trend_cm_per_month``, ``baseline``, ``sessions``, ``measurements``, ``flags``), ``flags``
(every flag), ``sources``, ``note``, ``generated_by``, ``generated_at``.
"""

from __future__ import annotations

from typing import Any

from planner.engine.qa_budget import (IMPLAUSIBLE_FRACTION, QA_ACTION_CM, QA_SOURCES, ProbeQa,
                                      QaReport)
from planner.physics.constants import SIGNAL_BUDGET_DIFFUSE_DB

__all__ = ["qa_data", "qa_text"]

NOTE = ("Budgets are derived with the engine's broadband pulse-echo loss model from the phantom "
        "depth of penetration (the depth where background speckle disappears at maximum output and "
        "gain; IEC 61391-2, Goodsitt et al. 1998). QA support only: the department's QA programme "
        "and service engineers decide on a probe's fitness for use.")


def _probe_data(p: ProbeQa) -> dict[str, Any]:
    return {
        "probe": p.probe, "known": p.known, "bandwidth_fraction": p.bandwidth_fraction,
        "budget_db": p.budget_db, "budget_sd_db": p.budget_sd_db, "scatter_db": p.scatter_db,
        "scatter_dof": p.scatter_dof, "date": p.date,
        "fall_cm": None if p.fall_cm is None else round(p.fall_cm, 2),
        "trend_cm_per_month": p.trend_cm_per_month,
        "baseline": None if p.baseline is None else {"frequency_mhz": p.baseline[0],
                                                     "phantom_attenuation_db_per_cm_mhz": p.baseline[1]},
        "sessions": [{"date": d, "budget_db": b, "dop_equivalent_cm": cm} for d, b, cm in p.sessions],
        "measurements": [{"index": m.entry.index, "line": m.entry.line, "date": m.entry.date.isoformat(),
                          "frequency_mhz": m.entry.frequency_mhz,
                          "phantom_attenuation_db_per_cm_mhz": m.entry.phantom_attenuation_db_per_cm_mhz,
                          "depth_of_penetration_cm": m.entry.depth_of_penetration_cm,
                          "budget_db": m.budget_db, "predicted_cm": m.predicted_cm, "used": m.used,
                          "flags": list(m.flags)} for m in p.measurements],
        "flags": list(p.flags)}


def qa_data(report: QaReport, inventory_origin: str, stamp: Any) -> dict[str, Any]:
    """The report as JSON-ready data (keys listed in the module docstring)."""
    return {"qa_log": report.path, "demo": report.demo, "inventory": inventory_origin,
            "default_budget_db": SIGNAL_BUDGET_DIFFUSE_DB.value, "action_level_cm": QA_ACTION_CM,
            "implausible_fraction": IMPLAUSIBLE_FRACTION,
            "probes": [_probe_data(p) for p in report.probes],
            "flags": [f for p in report.probes for f in p.flags],
            "sources": list(QA_SOURCES), "note": NOTE, **stamp.as_data()}


def qa_text(report: QaReport, inventory_origin: str, stamp: Any) -> str:
    """The report for people: one block per probe, then the flags."""
    origin = f"the {inventory_origin}" if inventory_origin.startswith("default") else inventory_origin
    out = [f"Probe QA log {report.path}" + (" (demo values)" if report.demo else ""),
           f"Probes from {origin}; default budget {SIGNAL_BUDGET_DIFFUSE_DB.value:g} dB; "
           f"action level {QA_ACTION_CM:g} cm.", ""]
    for p in report.probes:
        budget = f"{p.budget_db:g} dB (from {p.date})" if p.budget_db is not None else "not derived"
        out.append(f"{p.probe}: budget {budget}, pulse bandwidth {p.bandwidth_fraction:g}")
        if p.budget_sd_db is not None:
            why = (f"the log's repeats scatter {p.scatter_db:g} dB, {p.scatter_dof} degrees of "
                   f"freedom; never below the reading precision" if p.scatter_db is not None
                   else "the reading precision: too few repeats to measure the log's own scatter")
            out.append(f"  spread in plans +/-{p.budget_sd_db:g} dB (s.d.; {why})")
        if p.baseline is not None:
            out.append(f"  sessions: budget, and depth of penetration at the baseline's "
                       f"{p.baseline[0]:g} MHz in {p.baseline[1]:g} dB/cm/MHz")
        for d, b, cm in p.sessions:
            out.append(f"  {d}  {b:6.1f} dB  {cm:5.1f} cm")
        if p.trend_cm_per_month is not None:
            fall = p.fall_cm or 0.0
            out.append(f"  trend {p.trend_cm_per_month:+.2f} cm/month; change since baseline "
                       f"{-fall:+.1f} cm")
        for m in p.measurements:
            if not m.used:
                out.append(f"  not used: line {m.entry.line}, {m.entry.date.isoformat()}, "
                           f"{m.entry.depth_of_penetration_cm:g} cm at {m.entry.frequency_mhz:g} MHz")
        out.append("")
    flags = [f for p in report.probes for f in p.flags]
    out.append(f"QA warnings ({len(flags)}):" if flags else "QA warnings: none.")
    out.extend(f"  ! {f}" for f in flags)
    out += ["", NOTE, f"Sources: {', '.join(QA_SOURCES)}.", stamp.line()]
    return "\n".join(out) + "\n"
