"""The compact text plan: readable in twenty seconds."""

from __future__ import annotations

import textwrap

from planner.engine.model import Plan

SEVERITY_MARK = {"warning": "!!", "caution": "! ", "advice": "> ", "info": "- "}


def _wrap(text: str, indent: str = "    ", width: int = 96) -> str:
    return textwrap.fill(text, width=width, initial_indent=indent,
                         subsequent_indent=" " * len(indent))


def _band(plan: Plan) -> str:
    f = plan.frequency_mhz
    if f.low is None or f.high is None:
        return "no usable band"
    if f.feasible and f.start is not None:
        from planner.engine.start import basis_text, odds_text
        tag = f"; start at {f.start:.1f} MHz, {basis_text(f.start_basis)}"
        odds = odds_text(f)
        tag += f" ({odds})" if odds else ""
    else:
        tag = "  (needed detail NOT reached)"
    return f"{f.low:.1f}-{f.high:.1f} MHz{tag}"


def plan_text(plan: Plan, stamp=None, review=None) -> str:
    """Render a Plan as plain text; a draft's ``review`` (:class:`~planner.report.review.
    DraftReview`) adds the student's decisions and the signature status; ``stamp``
    (:class:`planner.stamp.Stamp`, None: made now) ends it."""
    from planner.stamp import current_stamp
    t, p = plan.target, plan.patient
    lines: list[str] = []
    if plan.draft:
        lines.append("DRAFT FOR SUPERVISED PRACTICE - to be reviewed and signed off by a supervisor")
    lines.append(f"{plan.target_title}  [{t.id}, {t.reflector}]")
    conds = ", ".join(f"{k}:{v}" for k, v in p.conditions.items()) or "none"
    lines.append(f"Patient: BMI {p.bmi:g} ({p.who_class_label}), conditions: {conds}"
                 + (f", {p.gestation_weeks:g} weeks" if p.gestation_weeks else ""))
    probe = plan.probe.label if plan.probe else "none fits"
    harm = "advised" if plan.harmonic.advised else "not advised"
    w = plan.window
    lines += [
        "",
        f"  Probe      {probe}",
        f"  Band       {_band(plan)}",
        f"  Harmonic   {harm}: {plan.harmonic.reason}",
        f"  Window     {w.name} - {w.position}; {w.breathing}",
        f"  Depth      target {plan.depth_cm:.1f} cm (shown at {plan.displayed_depth_cm:.1f} cm); "
        f"set depth {plan.display.display_depth_cm:.0f} cm, focus {plan.display.focus_cm:.1f} cm",
        f"  Tilt       " + (f"within {plan.tilt.max_deviation_deg:.1f} deg of perpendicular"
                            if plan.tilt.max_deviation_deg is not None else "free (diffuse target)"),
        f"  Watch      {plan.monitored_index}",
        "",
        "Windows (best first; loss at "
        f"{plan.windows[0].reference_frequency_mhz:g} MHz):",
    ]
    for i, win in enumerate(plan.windows, 1):
        band = win.band_mhz
        band_txt = f"{band.low:.1f}-{band.high:.1f} MHz" if band else "-"
        lines.append(f"  {i}. {win.label:<34} {'ok ' if win.feasible else 'NO '} "
                     f"{win.round_trip_loss_db:5.1f} dB  {win.depth_cm:5.1f} cm  {band_txt}")
    lines += ["", "Findings:"]
    for f in plan.findings:
        if f.relevance == "main":
            lines.append(f"  {SEVERITY_MARK[f.severity]} {f.title}")
            lines.append(_wrap(f.message))
    if plan.doppler:
        from planner.report.doppler_text import doppler_text
        lines += ["", *doppler_text(plan.doppler)]
    lines += ["", f"Safety (monitor {plan.monitored_index}):"]
    for f in plan.safety:
        if f.relevance == "main":
            lines.append(f"  {SEVERITY_MARK[f.severity]} {f.title}")
            lines.append(_wrap(f.message))
    more = [f for f in plan.findings + plan.safety if f.relevance == "more"]
    if more:
        lines += ["", "More (constant on most plans, or too small to change this exam):"]
        lines += [_wrap(f"{f.title}: {f.message}", "  - ") for f in more]
    if plan.validity:
        lines += ["", "Outside the validated range:"]
        lines += [_wrap(v.message, "  - ") for v in plan.validity]
    if plan.pitfalls:
        lines += ["", "Pitfalls:"]
        lines += [_wrap(x, "  - ") for x in plan.pitfalls]
    lines += ["", "Assumptions:"]
    lines += [_wrap(x, "  - ") for x in plan.assumptions]
    if review is not None:
        from planner.report.review import review_text
        lines += review_text(review)
    lines += ["", _wrap(plan.disclaimer, ""),
              (stamp if stamp is not None else current_stamp()).line()]
    return "\n".join(lines) + "\n"
