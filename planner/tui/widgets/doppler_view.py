"""The Doppler section: Nyquist limit at depth, recommended frequency and angle, aliasing."""

from __future__ import annotations

from typing import Any

from textual.containers import VerticalScroll
from textual.markup import escape
from textual.widgets import Static

from planner.tui.format import value_text

NO_DOPPLER = ("No Doppler planning in this plan. Tick a Doppler mode (colour, power or pulsed) "
              "under Exam → Modes to add it for a vessel target.")


def _remedy_line(remedy: dict[str, Any]) -> str:
    removes = remedy.get("removes_aliasing")
    verdict = "" if removes is None else (" [$success]removes aliasing[/]" if removes
                                          else " [$warning]not enough alone[/]")
    changes = remedy.get("changes") or remedy.get("effect") or ""
    text = escape(str(remedy.get("action", "")))
    if changes:
        text += f" [$text-muted]({escape(value_text(changes))})[/]"
    return f"  • {text}{verdict}"


def doppler_markup(doppler: dict[str, Any] | None) -> str:
    """The Doppler section of a plan as markup (a note when there is none)."""
    if not doppler:
        return escape(NO_DOPPLER)
    lines = []
    vessel = doppler.get("vessel") or {}
    if vessel:
        lines.append(f"[b]{escape(str(vessel.get('name', vessel.get('id', 'vessel'))))}[/b]")
        for key, value in vessel.items():
            if key not in ("id", "name", "sources"):
                lines.append(f"  {escape(key.replace('_', ' '))}: {escape(value_text(value))}")
    if doppler.get("depth_cm") is not None:
        lines.append(f"Depth {doppler['depth_cm']:.1f} cm · range-limited PRF "
                     f"{value_text(doppler.get('prf_max_hz'), 'Hz')}")
    rec = doppler.get("recommended") or {}
    if rec:
        lines.append(f"[b]Recommended[/b] {value_text(rec.get('frequency_mhz'), 'MHz')} at "
                     f"{value_text(rec.get('angle_deg'))}°, Nyquist limit "
                     f"{value_text(rec.get('v_max_cm_s'), 'cm/s')}")
        if rec.get("how"):
            lines.append(f"  {escape(str(rec['how']))}")
    if "aliasing_expected" in doppler:
        flag = ("[bold $error]ALIASING EXPECTED[/]" if doppler["aliasing_expected"]
                else "[$success]no aliasing expected[/]")
        margin = doppler.get("margin")
        lines.append(flag + (f" [$text-muted]({escape(value_text(margin))})[/]" if margin else ""))
    remedies = doppler.get("remedies") or []
    if remedies:
        lines.append("[b]Remedies[/b], in order")
        lines += [_remedy_line(r) for r in remedies if isinstance(r, dict)]
    error = doppler.get("velocity_error_percent") or {}
    if error:
        lines.append(f"Velocity error for ±5° angle uncertainty: {escape(value_text(error, '%'))}")
    table = doppler.get("nyquist") or []
    if table:
        lines.append("[b]Nyquist limit[/b] (frequency, angle → v max)")
        for row in table[:12]:
            if isinstance(row, dict):
                lines.append("  " + escape(", ".join(value_text(v, _unit(k)) for k, v in row.items())))
    if doppler.get("sources"):
        lines.append(f"[$text-muted]Sources: {escape(', '.join(map(str, doppler['sources'])))}[/]")
    return "\n".join(lines)


def _unit(key: str) -> str:
    from planner.tui.format import split_unit
    return split_unit(key)[1]


class DopplerView(VerticalScroll):
    """Shows :func:`doppler_markup` of the plan."""

    def compose(self):
        yield Static(escape(NO_DOPPLER), id="doppler-text")

    def show_plan(self, plan: dict) -> None:
        """Show the Doppler part of ``plan`` (a plan as a dict)."""
        self.query_one("#doppler-text", Static).update(doppler_markup(plan.get("doppler")))
