"""Mechanical-index cautions, ophthalmic limits and regulatory output ceilings.

References
----------
AIUMGasBodies (lung capillary haemorrhage from MI about 0.4, intestine about 1.4, in
laboratory mammals), AIUM2023Lung (neonatal lung MI < 0.4), BMUS2009Detailed (neonatal MI
bands 0-0.3 and 0.3-0.7; contrast above 0.7), TerHaar2009 (contrast microvascular effects
from about 0.4), FDA2019Track3 and KingLiuHarris2017 (output ceilings, ophthalmic limits).
"""

from __future__ import annotations

from typing import Any

from planner.findings import Finding
from planner.safety.context import ExamContext
from planner.safety.format import number_text, sourced_text, status_text
from planner.safety.policy import LocalPolicy
from planner.safety.tables import safety_data
from planner.safety.thermal import monitored_index

_ORDER = ("info", "advice", "caution", "warning")


def _worst(*severities: str) -> str:
    return max(severities, key=_ORDER.index)


def _v(path: str) -> float:
    return float(safety_data().value(path).value)


def _local_mi(ctx: ExamContext, policy: LocalPolicy | None, values: dict[str, Any],
              sources: list[str]) -> tuple[str, str]:
    """Add the local MI ceiling (if any) to ``values``/``sources``; return (text, severity)."""
    if policy is None:
        return "", "info"
    ceiling = policy.limits_for(ctx.exam_type).max_mi
    if ceiling is None:
        return "", "info"
    values["local_max_mi"] = ceiling
    sources.append(policy.source_key)
    severity = "warning" if ctx.expected_mi is not None and ctx.expected_mi > ceiling else "info"
    return f" Local practice, {policy.label}: MI <= {ceiling:g}.", severity


def _expected(ctx: ExamContext, caution_above: float, warning_above: float) -> str:
    if ctx.expected_mi is None:
        return "info"
    if ctx.expected_mi > warning_above:
        return "warning"
    return "caution" if ctx.expected_mi > caution_above else "info"


def _neonatal(ctx: ExamContext, policy: LocalPolicy | None) -> Finding:
    data = safety_data()
    free = data.value("mechanical_index.neonatal_unrestricted_up_to_mi")
    minimise = data.value("mechanical_index.neonatal_minimise_up_to_mi")
    lung = data.value("mechanical_index.neonatal_lung_max_mi")
    values: dict[str, Any] = {"expected_mi": ctx.expected_mi, "published_max_mi": free.value,
                              "intestine_threshold_mi": _v("mechanical_index.intestine_mi")}
    sources = [free.source, "AIUMGasBodies"]
    message = (f"Neonate: no known reason to restrict MI up to {free.value:g}; from "
               f"{free.value:g} to {minimise.value:g} minor damage to neonatal lung or intestine "
               "is possible, so minimise exposure (BMUS).")
    if ctx.lung_in_beam:
        values["aium_lung_max_mi"] = lung.value
        sources += [lung.source, "NeonatalCardiacMIAudit"]
        message += (f" Lung in the beam: keep MI below {free.value:g} (BMUS) and in any case "
                    f"below {lung.value:g} (AIUM 2023 lung statement).")
        severity = _worst("caution", _expected(ctx, free.value, lung.value))
    else:
        severity = _worst("advice", _expected(ctx, free.value, minimise.value))
    text, local = _local_mi(ctx, policy, values, sources)
    return Finding("safety.mi.neonatal", _worst(severity, local), "Mechanical index in a neonate",
                   message + text, values, tuple(dict.fromkeys(sources)),
                   "Gas in lung and bowel makes neonatal tissue the most sensitive to mechanical "
                   "effects; MI estimates the peak rarefactional pressure at the focus.")


def _lung(ctx: ExamContext, policy: LocalPolicy | None) -> Finding:
    threshold = safety_data().value("mechanical_index.lung_haemorrhage_mi")
    values: dict[str, Any] = {"expected_mi": ctx.expected_mi, "published_max_mi": threshold.value}
    sources = [threshold.source]
    text, local = _local_mi(ctx, policy, values, sources)
    severity = _worst("advice", _expected(ctx, threshold.value, float("inf")), local)
    return Finding("safety.mi.lung", severity, "Lung in the beam",
                   f"Lung in the beam: capillary haemorrhage appears in laboratory mammals from an "
                   f"in situ MI of about {threshold.value:g} (AIUM). Use the lowest MI that "
                   f"answers the question and keep lung dwell time short.{text}",
                   values, tuple(dict.fromkeys(sources)),
                   "The threshold comes from animal studies; no human lung injury from diagnostic "
                   "ultrasound has been shown.")


def _contrast(ctx: ExamContext, policy: LocalPolicy | None) -> Finding:
    data = safety_data()
    micro = data.value("mechanical_index.contrast_microvascular_mi")
    cavitation = data.value("mechanical_index.contrast_cavitation_above_mi")
    values: dict[str, Any] = {"expected_mi": ctx.expected_mi, "published_max_mi": cavitation.value,
                              "microvascular_threshold_mi": micro.value}
    sources = [micro.source, cavitation.source]
    text, local = _local_mi(ctx, policy, values, sources)
    severity = _worst("caution", _expected(ctx, micro.value, cavitation.value), local)
    return Finding("safety.mi.contrast", severity, "Gas contrast agent and MI",
                   f"Gas contrast agent: microvascular effects are reported from an MI of about "
                   f"{micro.value:g} (no absolute threshold), and cavitation is a risk above MI "
                   f"{sourced_text(cavitation)} (BMUS). Use the lowest MI that gives contrast "
                   f"images and limit high-MI frames.{text}",
                   values, tuple(dict.fromkeys(sources)),
                   "Microbubbles are cavitation nuclei: they lower the pressure at which "
                   "mechanical effects begin.")


def mi_findings(ctx: ExamContext, policy: LocalPolicy | None = None) -> list[Finding]:
    """Return the mechanical-index findings that apply to ``ctx`` (possibly none)."""
    out: list[Finding] = []
    if ctx.neonatal:
        out.append(_neonatal(ctx, policy))
    elif ctx.lung_in_beam:
        out.append(_lung(ctx, policy))
    if ctx.contrast_agent:
        out.append(_contrast(ctx, policy))
    if not out and ctx.exam_type != "ophthalmic" and policy is not None:
        values: dict[str, Any] = {"expected_mi": ctx.expected_mi,
                                  "regulatory_max_mi": _v("regulatory.max_mi")}
        sources = ["FDA2019Track3"]
        text, severity = _local_mi(ctx, policy, values, sources)
        if text:
            out.append(Finding("safety.mi.local", severity, "Local MI ceiling",
                               f"MI ceiling set by local practice (the regulatory ceiling is "
                               f"{values['regulatory_max_mi']:g}).{text}", values, tuple(sources)))
    return out


def ophthalmic_finding(ctx: ExamContext, policy: LocalPolicy | None = None) -> Finding | None:
    """Return the ophthalmic limits finding for eye exams (``None`` otherwise)."""
    if ctx.exam_type != "ophthalmic":
        return None
    data = safety_data()
    max_ti, max_mi = data.value("ophthalmic.max_ti"), data.value("ophthalmic.max_mi")
    ispta = data.value("ophthalmic.max_ispta_mw_per_cm2")
    index = monitored_index(ctx)
    values: dict[str, Any] = {"monitored_index": index, "expected_ti": ctx.expected_ti,
                              "expected_mi": ctx.expected_mi, "published_max_ti": max_ti.value,
                              "published_max_mi": max_mi.value,
                              "max_ispta_mw_per_cm2": ispta.value}
    sources = [max_ti.source, ispta.source]
    severity = "caution"
    if ((ctx.expected_ti is not None and ctx.expected_ti > max_ti.value)
            or (ctx.expected_mi is not None and ctx.expected_mi > max_mi.value)):
        severity = "warning"
    local_text = ""
    if policy is not None:
        limits = policy.limits_for(ctx.exam_type)
        parts = []
        if limits.max_ti is not None:
            values["local_max_ti"] = limits.max_ti
            parts.append(f"{index} <= {number_text(limits.max_ti)}")
            if ctx.expected_ti is not None and ctx.expected_ti > limits.max_ti:
                severity = "warning"
        text, local = _local_mi(ctx, policy, values, sources)
        severity = _worst(severity, local)
        if parts:
            local_text = f" Local practice, {policy.label}: {', '.join(parts)}."
            sources.append(policy.source_key)
        local_text += text
    return Finding("safety.ophthalmic", severity, "Ophthalmic output limits",
                   f"Eye: keep {index} <= {sourced_text(max_ti)}, MI <= {max_mi.value:g} and "
                   f"derated I_SPTA.3 <= {ispta.value:g} mW/cm² (FDA ophthalmic limits). "
                   f"{index} does not model the eye (lens absorption, orbital fat), so use the "
                   f"scanner's ophthalmic application setting and keep the exam short.{local_text}",
                   values, tuple(dict.fromkeys(sources)),
                   "The lens has no blood flow to carry heat away, so the eye has its own, "
                   "lower output limits.")


def output_ceiling_finding(ctx: ExamContext) -> Finding:
    """Return the regulatory output ceilings as context (``warning`` if the MI exceeds them)."""
    data = safety_data()
    if ctx.exam_type == "ophthalmic":
        ispta, mi = data.value("ophthalmic.max_ispta_mw_per_cm2"), data.value("ophthalmic.max_mi")
        what = "ophthalmic"
    else:
        ispta, mi = data.value("regulatory.max_ispta_mw_per_cm2"), data.value("regulatory.max_mi")
        what = "non-ophthalmic"
    values: dict[str, Any] = {"max_ispta_mw_per_cm2": ispta.value, "max_mi": mi.value,
                              "expected_mi": ctx.expected_mi}
    message = (f"Regulatory output ceilings ({what}, US FDA Track 3), for context: derated "
               f"I_SPTA.3 <= {ispta.value:g} mW/cm²{status_text(ispta.status)} and MI <= "
               f"{mi.value:g}. They bound what a scanner may emit; they are not exam targets.")
    severity = "info"
    if ctx.expected_mi is not None and ctx.expected_mi > mi.value:
        severity = "warning"
        message += f" The expected MI {ctx.expected_mi:g} is above the ceiling: check the value."
    if ctx.obstetric_scope:
        before = data.value("regulatory.fetal_ispta_before_1992_mw_per_cm2")
        values["fetal_ispta_before_1992_mw_per_cm2"] = before.value
        message += (f" The fetal ceiling was {before.value:g} mW/cm² before output indices were "
                    "displayed; today the operator's choice of TI and time is the safeguard.")
    sources = tuple(dict.fromkeys((ispta.source, mi.source)
                                  + (("Abramowicz2009",) if ctx.obstetric_scope else ())))
    return Finding("safety.output_ceiling", severity, "Regulatory output ceilings", message,
                   values, sources)
