"""Pregnancy and temperature cautions: early-pregnancy Doppler, fever, possible pregnancy.

References
----------
WFUMBISUOG2011 (Doppler at 11-14 weeks or earlier: not routine, TI <= 1.0, usually 5-10 min,
never > 60 min), AIUMEarlyDoppler (TI 0.7), AIUM2022TI (febrile gravidas; Table 1 for
gynaecological exams when pregnancy is possible), WFUMB1998 (thermal thresholds, from memory).
"""

from __future__ import annotations

from typing import Any

from planner.findings import Finding
from planner.safety.context import MODES, ExamContext
from planner.safety.format import minutes_text, number_text
from planner.safety.policy import PERMISSIONS, LocalDopplerRule, LocalPolicy
from planner.safety.tables import safety_data
from planner.safety.thermal import monitored_index

_ORDER = ("info", "advice", "caution", "warning")


def _worst(*severities: str) -> str:
    return max(severities, key=_ORDER.index)


def early_doppler_applies(ctx: ExamContext) -> bool:
    """Return whether the early-pregnancy Doppler statement covers ``ctx``.

    It covers Doppler modes in obstetric exams and gynaecological exams with a possible
    pregnancy, up to 14 weeks; an unknown gestation is treated as possibly early.
    """
    if not ctx.obstetric_scope or not ctx.doppler_modes:
        return False
    limit = safety_data().value("first_trimester_doppler.up_to_weeks").value
    return ctx.gestation_weeks is None or ctx.gestation_weeks <= limit


def _rule_text(rule: LocalDopplerRule) -> str:
    modes = ", ".join(MODES[m] for m in rule.modes)
    parts = [f"{modes} {PERMISSIONS[rule.permitted]}"]
    if rule.before_weeks is not None:
        parts[0] += f" before {rule.before_weeks:g} weeks"
    if rule.max_ti is not None:
        parts.append(f"TI <= {number_text(rule.max_ti)}")
    if rule.max_minutes is not None:
        parts.append(f"<= {minutes_text(rule.max_minutes)}")
    if rule.note:
        parts.append(rule.note)
    return ", ".join(parts)


def _local_doppler(ctx: ExamContext, policy: LocalPolicy | None, values: dict[str, Any],
                   sources: list[str]) -> tuple[str, str]:
    """Add the matching local Doppler rules; return (message part, severity)."""
    if policy is None:
        return "", "info"
    rules = policy.doppler_rules_for(ctx.exam_type, ctx.doppler_modes, ctx.gestation_weeks)
    if not rules:
        return "", "info"
    severity = "caution"
    for rule in rules:
        if rule.permitted == "not_permitted":
            severity = "warning"
        if (rule.max_ti is not None and ctx.expected_ti is not None
                and ctx.expected_ti > rule.max_ti):
            severity = "warning"
        if (rule.max_minutes is not None and ctx.planned_minutes is not None
                and ctx.planned_minutes > rule.max_minutes):
            severity = "warning"
    given_ti = [r.max_ti for r in rules if r.max_ti is not None]
    given_min = [r.max_minutes for r in rules if r.max_minutes is not None]
    values.update(local_rules=[_rule_text(r) for r in rules],
                  local_max_ti=min(given_ti) if given_ti else None,
                  local_max_minutes=min(given_min) if given_min else None)
    sources.append(policy.source_key)
    return f" Local practice, {policy.label}: {'; '.join(_rule_text(r) for r in rules)}.", severity


def doppler_findings(ctx: ExamContext, policy: LocalPolicy | None = None) -> list[Finding]:
    """Return the early-pregnancy Doppler finding and/or a local Doppler-restriction finding."""
    values: dict[str, Any] = {"doppler_modes": list(ctx.doppler_modes),
                              "gestation_weeks": ctx.gestation_weeks,
                              "expected_ti": ctx.expected_ti,
                              "planned_minutes": ctx.planned_minutes}
    sources: list[str] = []
    if not early_doppler_applies(ctx):
        text, severity = _local_doppler(ctx, policy, values, sources)
        if not text:
            return []
        return [Finding("safety.local.doppler", severity, "Local Doppler restriction",
                        f"No published Doppler restriction applies to this exam.{text}",
                        values, tuple(sources))]
    data = safety_data()
    weeks = data.value("first_trimester_doppler.up_to_weeks")
    max_ti = data.value("first_trimester_doppler.max_ti")
    aium_ti = data.value("first_trimester_doppler.aium_max_ti")
    usual = data.value("first_trimester_doppler.usual_max_minutes")
    never = data.value("first_trimester_doppler.absolute_max_minutes")
    index = monitored_index(ctx)
    values.update(monitored_index=index, published_max_ti=max_ti.value,
                  aium_max_ti=aium_ti.value, usual_max_minutes=usual.value,
                  absolute_max_minutes=never.value)
    sources += [weeks.source, aium_ti.source]
    when = ("gestational age not given; possibly early pregnancy" if ctx.gestation_weeks is None
            else f"{ctx.gestation_weeks:g} weeks")
    message = (f"Doppler up to {weeks.value:g} weeks ({when}): not for routine use, only for a "
               f"clinical indication. Keep the displayed {index} <= {number_text(max_ti.value)} "
               f"(AIUM: <= {number_text(aium_ti.value)}) and the exposure as short as possible, "
               f"usually <= {minutes_text(usual.value)} and never > {minutes_text(never.value)}. "
               "Uterine-artery Doppler is no fetal concern while the embryo lies outside the "
               "beam.")
    severity = "caution"
    if ctx.expected_ti is not None and ctx.expected_ti > max_ti.value:
        severity = "warning"
    if ctx.planned_minutes is not None and ctx.planned_minutes > never.value:
        severity = "warning"
    text, local = _local_doppler(ctx, policy, values, sources)
    return [Finding("safety.early_pregnancy_doppler", _worst(severity, local),
                    "Doppler in early pregnancy", message + text, values,
                    tuple(dict.fromkeys(sources)),
                    "Doppler modes deliver more energy to a small region than B-mode, and the "
                    "embryo is most sensitive to heating during organogenesis.")]


def febrile_finding(ctx: ExamContext) -> Finding | None:
    """Return a caution for a febrile patient (stronger in pregnancy), else ``None``."""
    if not ctx.febrile:
        return None
    index = monitored_index(ctx)
    if ctx.pregnant:
        data = safety_data()
        rule = data.value("pregnancy.febrile")
        rise = data.value("pregnancy.hazardous_rise_c")
        minutes = data.value("pregnancy.hazardous_rise_minutes")
        return Finding("safety.febrile", "caution", "Febrile pregnant patient",
                       f"{rule.value} Fever adds to any ultrasound heating: a rise of "
                       f"{rise.value:g} °C above normal for {minutes.value:g} min or more is "
                       f"potentially hazardous to embryo and fetus (WFUMB 1998"
                       f"{', from memory' if rise.status == 'from_memory' else ''}). Keep {index} "
                       "and scan time as low as possible.",
                       {"monitored_index": index, "hazardous_rise_c": rise.value,
                        "hazardous_rise_minutes": minutes.value},
                       (rule.source, rise.source))
    return Finding("safety.febrile", "advice", "Raised body temperature",
                   f"Raised body temperature: thermal indices assume a normal core temperature, "
                   f"and fever adds to any ultrasound heating. Keep {index} and dwell time low.",
                   {"monitored_index": index}, ("CommonPractice", "WFUMB1998"))


def pregnancy_possible_finding(ctx: ExamContext) -> Finding | None:
    """Return advice for a possible pregnancy in a non-obstetric, non-gynaecological exam."""
    if not ctx.pregnancy_possible or ctx.exam_type in ("obstetric", "gynaecological"):
        return None
    return Finding("safety.pregnancy_possible", "advice", "Pregnancy possible",
                   "Pregnancy possible: if the uterus lies in or near the beam, follow the "
                   "obstetric scan-time table and the early-pregnancy Doppler guidance "
                   "(AIUM 2022 applies its obstetric table to gynaecological exams when "
                   "pregnancy is possible).", {"pregnancy_possible": True}, ("AIUM2022TI",))
