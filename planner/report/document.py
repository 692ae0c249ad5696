"""Plans as Markdown and printable HTML, including student drafts with a sign-off block."""

from __future__ import annotations

from html import escape

from planner.engine.model import Plan
from planner.references import REFERENCES

DRAFT_BANNER = ("Draft for supervised practice: a student's plan for review and sign-off by a "
                "supervisor. It defers to local protocol and to the supervisor.")
SIGNOFF_FIELDS = ("Student", "Supervisor", "Date", "Supervisor's comments", "Student's reflection",
                  "Signature")


def _cite(key: str) -> str:
    return REFERENCES.get(key, key)


def _band(plan: Plan) -> str:
    f = plan.frequency_mhz
    if f.low is None or f.high is None:
        return "no usable band"
    if not f.feasible or f.start is None:
        return f"{f.low:.1f}-{f.high:.1f} MHz" + ("" if f.feasible else " (needed detail not reached)")
    from planner.engine.start import odds_text
    odds = odds_text(f)
    return (f"{f.low:.1f}-{f.high:.1f} MHz; start at {f.start:.1f} MHz"
            + (f" ({odds}; for the median patient {f.start_median:.1f} MHz)" if odds else ""))


def _summary_rows(plan: Plan) -> list[tuple[str, str]]:
    w = plan.window
    tilt = (f"within {plan.tilt.max_deviation_deg:.1f} deg of perpendicular"
            if plan.tilt.max_deviation_deg is not None else "free (diffuse target)")
    return [
        ("Target", f"{plan.target_title} ({plan.target.reflector})"),
        ("Patient", f"BMI {plan.patient.bmi:g}, {plan.patient.who_class_label}"),
        ("Probe", plan.probe.label if plan.probe else "none fits"),
        ("Band", _band(plan)),
        ("Harmonic imaging", ("advised: " if plan.harmonic.advised else "not advised: ")
         + plan.harmonic.reason),
        ("Window", f"{w.name}; {w.position}; {w.breathing}"),
        ("Depth and focus", f"target {plan.depth_cm:.1f} cm (drawn at {plan.displayed_depth_cm:.1f} cm); "
                            f"display depth {plan.display.display_depth_cm:.0f} cm, focus "
                            f"{plan.display.focus_cm:.1f} cm"),
        ("Tilt", tilt),
        ("Index to watch", plan.monitored_index),
    ]


def _sources(plan: Plan) -> list[str]:
    keys: list[str] = []
    for f in plan.findings + plan.safety:
        for k in f.sources:
            if k not in keys:
                keys.append(k)
    return keys


def plan_markdown(plan: Plan, signoff: dict[str, str] | None = None, stamp=None,
                  review=None) -> str:
    """Render a Plan as Markdown (a draft carries the banner, the student's decisions
    against the plan, the signature status and the sign-off block; the foot the stamp)."""
    from planner.stamp import current_stamp
    out = [f"# Scan plan: {plan.target_title}", ""]
    if plan.draft:
        out += [f"> **{DRAFT_BANNER}**", ""]
    out += ["| | |", "|---|---|"] + [f"| {k} | {v} |" for k, v in _summary_rows(plan)] + [""]
    out += ["## Windows, best first", "", "| # | window | usable | loss (dB) | depth (cm) | band (MHz) |",
            "|---|---|---|---|---|---|"]
    for i, win in enumerate(plan.windows, 1):
        band = win.band_mhz
        band_txt = "-" if not band else f"{band.low:.1f}-{band.high:.1f}"
        out.append(f"| {i} | {win.label} | {'yes' if win.feasible else 'no'} | "
                   f"{win.round_trip_loss_db:.1f} | {win.depth_cm:.1f} | {band_txt} |")
    out += ["", "## Findings and the reasons behind them", ""]
    for f in plan.findings:
        if f.relevance != "main":
            continue
        out += [f"### {f.title} ({f.severity})", "", f.message, ""]
        if f.explanation:
            out += [f"*Why:* {f.explanation}", ""]
        if f.sources:
            out += ["*Sources:* " + "; ".join(f.sources), ""]
    if plan.doppler:
        from planner.report.doppler_text import doppler_text
        out += ["## Doppler", "", "```", *doppler_text(plan.doppler), "```", ""]
    out += ["## Safety", ""] + [f"- **{f.title}**: {f.message}" for f in plan.safety
                                if f.relevance == "main"] + [""]
    more = [f for f in plan.findings + plan.safety if f.relevance == "more"]
    if more:
        out += ["## More", "", "*Constant on most plans, or too small to change this exam.*", ""]
        out += [f"- **{f.title}**: {f.message}" for f in more] + [""]
    if plan.validity:
        out += ["## Outside the validated range", ""] + [f"- {v.message}" for v in plan.validity] + [""]
    if plan.pitfalls:
        out += ["## Pitfalls", ""] + [f"- {p}" for p in plan.pitfalls] + [""]
    out += ["## Assumptions", ""] + [f"- {a}" for a in plan.assumptions] + [""]
    out += ["## References", ""] + [f"- **{k}**: {_cite(k)}" for k in _sources(plan)] + [""]
    if review is not None:
        from planner.report.review import review_markdown
        out += review_markdown(review)
    if plan.draft:
        filled = signoff or {}
        out += ["## Supervisor sign-off", ""] + [f"- {name}: {filled.get(name, '')}"
                                                 for name in SIGNOFF_FIELDS] + [""]
    out += [f"*{plan.disclaimer}*", "", (stamp if stamp is not None else current_stamp()).line(),
            ""]
    return "\n".join(out)


_CSS = """body{font-family:system-ui,sans-serif;max-width:52rem;margin:1.5rem auto;color:#111;line-height:1.4}
table{border-collapse:collapse;margin:.5rem 0}td,th{border:1px solid #bbb;padding:.25rem .5rem;vertical-align:top}
.draft{border:2px solid #b5531d;padding:.5rem;font-weight:bold}.sev-warning{color:#a00}.sev-caution{color:#a55a00}
.statement{font-style:italic;border-top:1px solid #999;margin-top:1rem;padding-top:.5rem}
.signoff td{height:2rem;min-width:20rem}@media print{body{margin:0}}"""


def plan_html(plan: Plan, signoff: dict[str, str] | None = None, stamp=None,
              review=None) -> str:
    """Render a Plan as a self-contained, printable HTML page with an inline depth plot
    (drafts as in :func:`plan_markdown`; the foot carries the stamp)."""
    from planner.report.svg import depth_plot_svg
    from planner.stamp import current_stamp
    stamp = stamp if stamp is not None else current_stamp()

    e = escape
    rows = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in _summary_rows(plan))
    wins = "".join(
        f"<tr><td>{i}</td><td>{e(w.label)}</td><td>{'yes' if w.feasible else 'no'}</td>"
        f"<td>{w.round_trip_loss_db:.1f}</td><td>{w.depth_cm:.1f}</td></tr>"
        for i, w in enumerate(plan.windows, 1))
    finds = "".join(
        f"<li class='sev-{f.severity}'><b>{e(f.title)}</b> ({f.severity}): {e(f.message)}"
        + (f"<br><small>Why: {e(f.explanation)}</small>" if f.explanation else "")
        + (f"<br><small>Sources: {e('; '.join(f.sources))}</small>" if f.sources else "")
        + "</li>" for f in plan.findings if f.relevance == "main")
    safety = "".join(f"<li class='sev-{f.severity}'><b>{e(f.title)}</b>: {e(f.message)}</li>"
                     for f in plan.safety if f.relevance == "main")
    more = "".join(f"<li><b>{e(f.title)}</b>: {e(f.message)}</li>"
                   for f in plan.findings + plan.safety if f.relevance == "more")
    refs = "".join(f"<li><b>{e(k)}</b>: {e(_cite(k))}</li>" for k in _sources(plan))
    body = [f"<h1>Scan plan: {e(plan.target_title)}</h1>"]
    if plan.draft:
        body.append(f"<p class='draft'>{e(DRAFT_BANNER)}</p>")
    body += [f"<table>{rows}</table>", "<h2>Round-trip loss against depth</h2>", depth_plot_svg(plan),
             "<h2>Windows, best first</h2><table><tr><th>#</th><th>window</th><th>usable</th>"
             f"<th>loss (dB)</th><th>depth (cm)</th></tr>{wins}</table>",
             f"<h2>Findings and the reasons behind them</h2><ul>{finds}</ul>"]
    if plan.doppler:
        from planner.report.doppler_text import doppler_text
        body.append("<h2>Doppler</h2><pre>" + e("\n".join(doppler_text(plan.doppler))) + "</pre>")
    body.append(f"<h2>Safety</h2><ul>{safety}</ul>")
    if more:
        body.append("<h2>More</h2><p><small>Constant on most plans, or too small to change this "
                    f"exam.</small></p><ul class='more'><small>{more}</small></ul>")
    if plan.validity:
        body.append("<h2>Outside the validated range</h2><ul>"
                    + "".join(f"<li>{e(v.message)}</li>" for v in plan.validity) + "</ul>")
    if plan.pitfalls:
        body.append("<h2>Pitfalls</h2><ul>" + "".join(f"<li>{e(p)}</li>" for p in plan.pitfalls) + "</ul>")
    body.append("<h2>Assumptions</h2><ul>" + "".join(f"<li>{e(a)}</li>" for a in plan.assumptions) + "</ul>")
    body.append(f"<h2>References</h2><ul>{refs}</ul>")
    if review is not None:
        from planner.report.review import review_html
        body.append(review_html(review))
    if plan.draft:
        filled = signoff or {}
        body.append("<h2>Supervisor sign-off</h2><table class='signoff'>" + "".join(
            f"<tr><th>{e(n)}</th><td>{e(str(filled.get(n, '')))}</td></tr>" for n in SIGNOFF_FIELDS)
            + "</table>")
    body.append(f"<p class='statement'>{e(plan.disclaimer)}</p>")
    body.append(f"<p class='stamp'>{e(stamp.line())}</p>")
    return ("<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>"
            f"<meta name='generator' content='{e(stamp.generated_by)}'>"
            f"<title>Scan plan: {e(plan.target_title)}</title><style>{_CSS}</style></head><body>"
            + "".join(body) + "</body></html>\n")
