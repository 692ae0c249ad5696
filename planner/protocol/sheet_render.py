"""Protocol sheets as Markdown, printable HTML (inline SVG depth plots) and JSON.

Every renderer reads the typed, frozen :class:`planner.protocol.sheet_model.Sheet` built by
:func:`planner.protocol.sheet.build_sheet`; only the HTML depth plots use the plans in
``sheet.plot_plans``, and the JSON is the data of
:func:`planner.protocol.sheet_model.sheet_to_json_data`. No absolute paths; the one time
is the stamp at the foot (tool version and generation time,
:mod:`planner.stamp`), fixed by ``SCANPLAN_FIXED_TIME`` for output that must not change.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from html import escape

from planner.engine.model import FrequencyBand
from planner.engine.spread import INPUT_WORDS, top_driver
from planner.protocol.sheet_model import (LimitRow, ProbeRef, PublishedRow, Sheet, SheetView,
                                          SourcedValue, TimeSection, sheet_to_json_data)
from planner.protocol.sheet_rows import SheetRow
from planner.report.svg import depth_plot_svg
from planner.safety.format import minutes_text, number_text
from planner.stamp import current_stamp

__all__ = ["sheet_markdown", "sheet_html", "sheet_json"]

PLOT_WIDTH = 320
PLOT_HEIGHT = 170
"""Size of the per-view depth plot in the HTML sheet. [px]"""

ROW_HEADERS: tuple[str, ...] = ("Habitus (BMI)", "Probe", "Band and start (MHz)", "Harmonic imaging",
                                "Tilt", "Depth (cm)", "Main cautions")


def _words(text: str | None) -> str:
    return "-" if text is None else str(text).replace("_", " ")


def _band(band: FrequencyBand) -> str:
    if band.low is None or band.high is None:
        return "none"
    text = f"{band.low:.1f}-{band.high:.1f}"
    if not band.feasible:
        return text + " (detail not reached)"
    if band.start is not None:
        text += f"; start {band.start:.1f}"
        if band.start_probability is not None and band.top_probability is not None:
            text += (f" ({100 * band.start_probability:.0f} % reach it; the top "
                     f"{100 * band.top_probability:.0f} %{_driver(band)})")
    return text


def _driver(band: FrequencyBand) -> str:
    """The input most of the reach's doubt comes from, as the sheet says it ("" when none
    narrows it: nearly everyone is reached across the band)."""
    top = top_driver(band)
    return "" if top is None else f"; doubt mostly from {INPUT_WORDS.get(top.input, top.input)}"


def _cells(row: SheetRow) -> list[str]:
    """The table cells of one habitus class of one view, as plain text."""
    harmonic = row.harmonic
    tilt = row.tilt_deg
    warnings = "; ".join(f"{w.title} ({w.severity})" for w in row.warnings) or "none"
    return [f"{row.label} ({row.bmi:g})",
            row.probe.label if row.probe else "no probe fits",
            _band(row.band_mhz),
            ("yes: " if harmonic.advised else "no: ") + harmonic.short,
            "free (diffuse target)" if tilt is None else f"within {tilt:.1f} deg",
            f"{row.depth_cm:.1f}", warnings]


def _probe_text(probe: ProbeRef) -> str:
    return f"{probe.label or 'not in this inventory'} ({probe.id})"


def _view_line(view: SheetView) -> str:
    doppler = ", ".join(_words(m) for m in view.doppler_modes)
    return (f"Target: {view.target.name}. Window: {view.window.name}; "
            f"position {_words(view.position)}"
            + (f" ({view.position_note})" if view.position_note else "")
            + f"; breathing {_words(view.breathing)}; {view.expected_minutes:g} min. "
            f"Protocol probe: {_probe_text(view.protocol_probe)}. "
            + (f"Doppler: {doppler}. " if doppler else "")
            + f"Watch {view.monitored_index}.")


def _limit_text(row: LimitRow | PublishedRow) -> str:
    if row.limit == "unlimited":
        return "no time limit"
    if row.limit == "not_recommended":
        return "not recommended"
    if row.limit == "limited":
        return f"< {minutes_text(row.max_minutes)}"
    return "-"


def _limit_cells(row: LimitRow, index: str) -> list[str]:
    status = "" if row.status in ("verified", "local") else f", {_words(row.status)}"
    within = {True: "within", False: "exceeds", None: "-"}[row.within]
    return [row.label + (f" ({row.band})" if row.band else ""), _limit_text(row),
            "-" if row.max_ti is None else f"{index} <= {number_text(row.max_ti)}",
            f"{row.source}{status}", within]


def _sourced_text(item: SourcedValue | None, unit: str = "", index: bool = False) -> str:
    if item is None:
        return "none set"
    status = "" if item.status == "verified" else f", {_words(item.status)}"
    value = number_text(item.value) if index else f"{item.value:g}"
    return f"{value}{unit} ({item.source}{status})"


def _header_facts(sheet: Sheet) -> list[tuple[str, str]]:
    p = sheet.protocol
    return [("Department", p.department), ("Version", p.version), ("Owner", p.owner),
            ("Approved by", p.approved_by or "-"), ("Review date", p.review_date),
            ("Exam type", p.exam_type_label), ("Protocol file", p.file or "-")]


def _setup_items(sheet: Sheet) -> list[tuple[str, list[str]]]:
    """Preparation, personnel and equipment as (heading, items)."""
    prep, staff, eq = sheet.preparation, sheet.personnel, sheet.equipment
    alts = ", ".join(_probe_text(a) for a in eq.alternative_probes) or "-"
    return [
        ("Preparation", [f"Bladder: {_words(prep.bladder)}",
                         f"Fasting: {_sourced_text(prep.fasting_hours, ' h')}",
                         *prep.instructions, *(f"Check: {c}" for c in prep.checks)]),
        ("Personnel and supervision", [
            f"Performed by: {', '.join(staff.performed_by)}",
            f"Reported by: {', '.join(staff.reported_by) or '-'}",
            f"Trainees: {staff.trainee_supervision_text}",
            f"Chaperone: {_words(staff.chaperone)}"]),
        ("Equipment", [f"Main probe: {_probe_text(eq.probe)}",
                       f"Alternatives: {alts}", f"Probe inventory: {eq.inventory}",
                       *(f"Setup: {s}" for s in eq.setup),
                       f"Infection control: {eq.infection_control or '-'}"]),
    ]


def _safety_items(sheet: Sheet) -> list[str]:
    s = sheet.safety
    lim = s.protocol_limits
    agree = "" if s.protocol_monitored_index in (None, s.monitored_index) else \
        f" (the protocol names {s.protocol_monitored_index}: check which applies)"
    items = [f"Thermal index to watch: {s.monitored_index}{agree}",
             f"Protocol limits: highest TI {_sourced_text(lim.max_ti, index=True)}; "
             f"highest MI {_sourced_text(lim.max_mi, index=True)}; "
             f"longest scan time {_sourced_text(lim.max_scan_minutes, ' min')}; "
             f"pulsed Doppler {_words(lim.pulsed_doppler)}",
             *(f"Protocol: {n}" for n in lim.notes)]
    local = s.local_policy
    if local:
        origin = ("the protocol's own safety limits" if local.origin == "protocol"
                  else "the local policy file")
        items.append(f"Local limits ({local.label}) from {origin}, cited as {local.source}")
    return items


def _md_row(cells: list[str]) -> str:
    return "| " + " | ".join(c.replace("|", "\\|") for c in cells) + " |"


def _md_table(headers: list[str] | tuple[str, ...], rows: list[list[str]]) -> list[str]:
    return [_md_row(list(headers)), "|" + "---|" * len(headers)] + [_md_row(r) for r in rows]


def _class_rows(sheet: Sheet) -> list[list[str]]:
    return [[c.label, c.id, f"{c.bmi:g}"] for c in sheet.habitus_classes]


def sheet_markdown(sheet: Sheet) -> str:
    """Render a sheet as Markdown."""
    out = [f"# Protocol sheet: {sheet.protocol.title}", ""]
    out += _md_table(("", ""), [[k, v] for k, v in _header_facts(sheet)]) + [""]
    out += ["## Scope", "", sheet.protocol.scope, ""]
    for heading, items in _setup_items(sheet):
        out += [f"## {heading}", ""] + [f"- {i}" for i in items] + [""]
    out += ["## Habitus classes", ""]
    out += _md_table(("WHO class", "id", "BMI planned"), _class_rows(sheet)) + [""]
    t = sheet.time
    out += [f"## Views ({len(sheet.views)}, {t.planned_minutes:g} min planned)", ""]
    for n, view in enumerate(sheet.views, 1):
        out += [f"### {n}. {view.title}", "", _view_line(view), ""]
        out += _md_table(ROW_HEADERS, [_cells(r) for r in view.classes]) + [""]
    out += _md_time(t) + ["## Safety", ""] + [f"- {i}" for i in _safety_items(sheet)] + [""]
    out += [f"- **{f.title}** ({f.severity}): {f.message} "
            f"*Sources:* {'; '.join(f.sources)}" for f in sheet.safety.findings] + [""]
    out += ["## Assumptions", ""] + [f"- {a}" for a in sheet.assumptions] + [""]
    out += [f"*{sheet.statement}*", "", current_stamp().line(), ""]
    return "\n".join(out)


def _time_lines(t: TimeSection) -> list[str]:
    ti = "not given" if t.expected_ti is None else number_text(t.expected_ti)
    lines = [f"Planned {t.planned_minutes:g} min (sum of the views' expected minutes); "
             f"expected {t.monitored_index} {ti} ({t.expected_ti_basis})."]
    most = "; ".join(f"{m.title}: {t.monitored_index} <= {number_text(m.max_ti)}"
                     if m.max_ti is not None else f"{m.title}: any"
                     for m in t.max_ti_for_planned)
    if most:
        lines.append(f"Highest {t.monitored_index} that still allows "
                     f"{t.planned_minutes:g} min: {most}.")
    lines.append(f"Verdict ({t.severity}): {t.message}")
    return lines


def _limit_headers(t: TimeSection) -> tuple[str, ...]:
    return ("Limit", "Time", "TI", "Source", f"Planned {t.planned_minutes:g} min")


def _md_time(t: TimeSection) -> list[str]:
    out = ["## Scan time against the TI limits", ""]
    out += [line for text in _time_lines(t) for line in (text, "")]
    out += _md_table(_limit_headers(t),
                     [_limit_cells(r, t.monitored_index) for r in t.limits]) + [""]
    for table in t.published_tables:
        out += [f"{table.title} ({table.source}), every band:", ""]
        out += _md_table(("Band", "Time"), [[r.band, _limit_text(r)] for r in table.rows])
        out += [""]
    return out


_CSS = """body{font-family:system-ui,sans-serif;max-width:64rem;margin:1.5rem auto;color:#111;line-height:1.35}
table{border-collapse:collapse;margin:.4rem 0}td,th{border:1px solid #bbb;padding:.2rem .45rem;vertical-align:top;text-align:left}
.facts th{background:#f2f2f2}.view{border-top:1px solid #999;margin-top:1rem}.view-body{display:flex;gap:1rem;flex-wrap:wrap;align-items:flex-start}
figure{margin:0}figcaption{font-size:.8rem;color:#444}.sev-warning{color:#a00}.sev-caution{color:#a55a00}
.statement{font-style:italic;border-top:1px solid #999;margin-top:1rem;padding-top:.5rem}
@media print{body{margin:0;max-width:none;font-size:10pt}.view{break-inside:avoid}h2{break-after:avoid}}"""


def _html_table(headers: Sequence[str], rows: Sequence[Sequence[str]], cls: str = "") -> str:
    e = escape
    head = "".join(f"<th>{e(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{e(c)}</td>" for c in r) + "</tr>" for r in rows)
    attr = f" class='{cls}'" if cls else ""
    return f"<table{attr}><tr>{head}</tr>{body}</table>"


def _html_list(items: list[str]) -> str:
    return "<ul>" + "".join(f"<li>{escape(i)}</li>" for i in items) + "</ul>"


def sheet_html(sheet: Sheet) -> str:
    """Render a sheet as a self-contained, printable HTML page with a depth plot per view."""
    e = escape
    title = f"Protocol sheet: {sheet.protocol.title}"
    facts = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in _header_facts(sheet))
    body = [f"<h1>{e(title)}</h1>", f"<table class='facts'>{facts}</table>",
            f"<h2>Scope</h2><p>{e(sheet.protocol.scope)}</p>"]
    body += [f"<h2>{e(h)}</h2>{_html_list(items)}" for h, items in _setup_items(sheet)]
    body.append("<h2>Habitus classes</h2>" + _html_table(("WHO class", "id", "BMI planned"),
                                                         _class_rows(sheet)))
    t = sheet.time
    body.append(f"<h2>Views ({len(sheet.views)}, {t.planned_minutes:g} min planned)</h2>")
    for n, (view, plan) in enumerate(zip(sheet.views, sheet.plot_plans), 1):
        shown = sheet.habitus_class(view.plot_class)
        caption = (f"Round-trip loss against depth, {shown.label} (BMI {shown.bmi:g}); "
                   "dashed: signal budget and target depth.")
        body.append(
            f"<section class='view'><h3>{n}. {e(view.title)}</h3><p>{e(_view_line(view))}</p>"
            f"<div class='view-body'>{_html_table(ROW_HEADERS, [_cells(r) for r in view.classes])}"
            f"<figure>{depth_plot_svg(plan, PLOT_WIDTH, PLOT_HEIGHT)}"
            f"<figcaption>{e(caption)}</figcaption></figure></div></section>")
    body.append("<h2>Scan time against the TI limits</h2>"
                + "".join(f"<p>{e(line)}</p>" for line in _time_lines(t))
                + _html_table(_limit_headers(t),
                              [_limit_cells(r, t.monitored_index) for r in t.limits]))
    for table in t.published_tables:
        body.append(f"<p>{e(table.title)} ({e(table.source)}), every band:</p>"
                    + _html_table(("Band", "Time"),
                                  [[r.band, _limit_text(r)] for r in table.rows]))
    findings = "".join(
        f"<li class='sev-{e(f.severity)}'><b>{e(f.title)}</b> ({e(f.severity)}): "
        f"{e(f.message)}<br><small>Sources: {e('; '.join(f.sources))}</small></li>"
        for f in sheet.safety.findings)
    body.append(f"<h2>Safety</h2>{_html_list(_safety_items(sheet))}<ul>{findings}</ul>")
    body.append(f"<h2>Assumptions</h2>{_html_list(list(sheet.assumptions))}")
    stamp = current_stamp()
    body.append(f"<p class='statement'>{e(sheet.statement)}</p>")
    body.append(f"<p class='stamp'>{e(stamp.line())}</p>")
    return ("<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>"
            f"<meta name='generator' content='{e(stamp.generated_by)}'>"
            f"<title>{e(title)}</title><style>{_CSS}</style></head><body>"
            + "".join(body) + "</body></html>\n")


def sheet_json(sheet: Sheet) -> str:
    """Render a sheet as JSON (sorted keys, two-space indent, no NaN)."""
    return json.dumps(sheet_to_json_data(sheet), sort_keys=True, indent=2,
                      allow_nan=False) + "\n"
