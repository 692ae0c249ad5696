"""All safety findings for an exam context, in a fixed order.

:func:`safety_findings` always returns the ALARA finding and the thermal-index finding
first, then the scan-time comparison, then every rule that applies (Doppler near bone,
early-pregnancy Doppler, fever, mechanical index, eye, local preferences) and last the
regulatory output ceilings as context. Local policy values appear inside the finding
they refine, next to the published value.
"""

from __future__ import annotations

from typing import Any

from planner.findings import Finding, Rule, RuleRegistry
from planner.records import record
from planner.safety.context import ExamContext
from planner.safety.mechanical import mi_findings, ophthalmic_finding, output_ceiling_finding
from planner.safety.policy import LocalPolicy
from planner.safety.pregnancy import doppler_findings, febrile_finding, pregnancy_possible_finding
from planner.safety.statement import DISCLAIMER
from planner.safety.tables import safety_data
from planner.safety.thermal import (doppler_bone_finding, index_finding, monitored_index,
                                    scan_time_finding)


def alara_finding(ctx: ExamContext) -> Finding:
    """Return the ``safety.alara`` finding (always present; pregnancy scans add two points)."""
    index = monitored_index(ctx)
    message = ("ALARA: use the lowest output and the shortest scan time that give a useful "
               f"diagnostic result, and watch {index} and MI on the display (BMUS 2009).")
    values: dict[str, Any] = {"monitored_index": index}
    sources = ["BMUS2009"]
    if ctx.obstetric_scope:
        data = safety_data()
        start = data.value("pregnancy.start_ti")
        souvenir = data.value("pregnancy.no_souvenir_scans")
        values["start_ti"] = start.value
        sources += [start.source, souvenir.source]
        message += f" Start at a displayed TI of {start.value:g} (AIUM). {souvenir.value}"
    return Finding("safety.alara", "advice", "ALARA", message, values,
                   tuple(dict.fromkeys(sources)),
                   "As low as reasonably achievable: exposure grows with output and dwell time, "
                   "so both are kept at the minimum the diagnosis needs.")


def preferences_finding(ctx: ExamContext, policy: LocalPolicy | None) -> Finding | None:
    """Return the department's preferred settings for this exam, beside the published start TI."""
    if policy is None:
        return None
    prefs = policy.preferences_for(ctx.exam_type)
    if prefs is None or (prefs.start_ti is None and not prefs.notes):
        return None
    values: dict[str, Any] = {"local_start_ti": prefs.start_ti, "local_notes": list(prefs.notes)}
    parts = []
    if prefs.start_ti is not None:
        text = f"start at TI {prefs.start_ti:g}"
        if ctx.obstetric_scope:
            published = safety_data().value("pregnancy.start_ti").value
            values["published_start_ti"] = published
            text += f" (published: {published:g}, AIUM)"
        parts.append(text)
    parts += list(prefs.notes)
    sources: tuple[str, ...] = (policy.source_key,)
    if "published_start_ti" in values:
        sources += ("AIUMEarlyDoppler",)
    return Finding("safety.local.preferences", "advice", "Local preferred settings",
                   f"Local practice, {policy.label}: {'; '.join(parts)}.", values, sources)


@record
class SafetyContext:
    """Inputs of every safety rule: the exam context and the department's local policy."""

    exam: ExamContext
    policy: LocalPolicy | None = None


def _listed(found: Finding | None) -> list[Finding]:
    return [] if found is None else [found]


SAFETY_RULES: RuleRegistry[SafetyContext] = RuleRegistry("safety")
"""The safety rules in output order; each takes a :class:`SafetyContext`."""

_rule: Rule[SafetyContext]
for _rule in (
    Rule("safety.alara", "safety", "every exam", lambda c: [alara_finding(c.exam)]),
    Rule("safety.index", "safety", "every exam", lambda c: [index_finding(c.exam)]),
    Rule("safety.scan_time", "safety", "every exam", lambda c: [scan_time_finding(c.exam, c.policy)]),
    Rule("safety.doppler_near_bone", "safety", "Doppler with bone near the focus",
         lambda c: _listed(doppler_bone_finding(c.exam))),
    Rule("safety.early_pregnancy_doppler", "safety", "Doppler in early pregnancy (published or local)",
         lambda c: doppler_findings(c.exam, c.policy)),
    Rule("safety.febrile", "safety", "febrile patients", lambda c: _listed(febrile_finding(c.exam))),
    Rule("safety.pregnancy_possible", "safety", "exams where a pregnancy is possible",
         lambda c: _listed(pregnancy_possible_finding(c.exam))),
    Rule("safety.mi", "safety", "gas in the beam, contrast agents or a stated MI",
         lambda c: mi_findings(c.exam, c.policy)),
    Rule("safety.ophthalmic", "safety", "ophthalmic exams",
         lambda c: _listed(ophthalmic_finding(c.exam, c.policy))),
    Rule("safety.local.preferences", "safety", "exams with local preferred settings",
         lambda c: _listed(preferences_finding(c.exam, c.policy)), lambda c: c.policy is not None),
    Rule("safety.output_ceiling", "safety", "every exam", lambda c: [output_ceiling_finding(c.exam)]),
):
    SAFETY_RULES.add(_rule)


def safety_findings(ctx: ExamContext, policy: LocalPolicy | None = None) -> list[Finding]:
    """Return every safety finding for ``ctx``: the safety registry run in order.

    Parameters
    ----------
    ctx : ExamContext
        Exam type, modes, pregnancy, risks, expected TI/MI and planned minutes.
    policy : LocalPolicy, optional
        A department's local limits; shown beside the published values.

    Returns
    -------
    list of Finding
        Codes ``safety.alara``, ``safety.index``, ``safety.scan_time`` always; then, as they
        apply, ``safety.doppler_near_bone``, ``safety.early_pregnancy_doppler`` or
        ``safety.local.doppler``, ``safety.febrile``, ``safety.pregnancy_possible``,
        ``safety.mi.*``, ``safety.ophthalmic``, ``safety.local.preferences``, and
        ``safety.output_ceiling`` last.
    """
    return SAFETY_RULES.run(SafetyContext(ctx, policy))


@record(slots=False)
class SafetyReport:
    """Everything the safety section of an output shows: statement, index, findings."""

    statement: str
    monitored_index: str
    findings: tuple[Finding, ...]

    def to_dict(self) -> dict[str, Any]:
        """Return a JSON-ready dict."""
        return {"statement": self.statement, "monitored_index": self.monitored_index,
                "findings": [f.to_dict() for f in self.findings]}


def safety_report(ctx: ExamContext, policy: LocalPolicy | None = None) -> SafetyReport:
    """Return the statement, the thermal index to watch and all safety findings for ``ctx``."""
    return SafetyReport(DISCLAIMER, monitored_index(ctx), tuple(safety_findings(ctx, policy)))
