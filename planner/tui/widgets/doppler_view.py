"""The Doppler section: Nyquist limit at depth, recommended frequency and angle, aliasing."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.markup import escape
from textual.widgets import Static

if TYPE_CHECKING:  # the engine loads after the first paint
    from planner.engine.doppler_model import (DopplerPlan, NyquistCell, SourcedValue, Threshold,
                                              VesselSummary)
    from planner.engine.model import Plan


NO_DOPPLER = ("No Doppler section. Tick a Doppler mode (colour, power or pulsed) under "
              "Exam → Modes; vessel targets then get the Nyquist limit at their depth, the "
              "recommended frequency and angle, and the remedies for aliasing.")


def _num(value: Any, digits: int = 0) -> str:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return "?"
    return f"{value:.{digits}f}" if digits else f"{value:g}" if abs(value) < 10 else f"{value:.0f}"


def _sourced(record: SourcedValue | Threshold) -> tuple[str, str]:
    """``(value, 'Source, status')`` of a sourced record."""
    return _num(record.value), f"{record.source}, {record.status.replace('_', ' ')}"


def _expected_lines(vessel: VesselSummary) -> list[str]:
    (low, low_src), (high, high_src) = _sourced(vessel.expected_cm_s.low), \
        _sourced(vessel.expected_cm_s.high)
    lines = [f"Expected [b]{low}–{high} cm/s[/b] [$text-muted]({escape(low_src)}; "
             f"{escape(high_src)})[/]"]
    for threshold in vessel.thresholds:
        value, source = _sourced(threshold)
        lines.append(f"  {escape(threshold.label)}: {value} cm/s "
                     f"[$text-muted]({escape(source)})[/]")
    return lines


def _nyquist_lines(table: Sequence[NyquistCell]) -> list[str]:
    by_freq: dict[float, list[tuple[float, float]]] = {}
    for row in table:
        by_freq.setdefault(row.frequency_mhz, []).append((row.angle_deg, row.v_max_cm_s))
    lines = []
    for freq, cells in by_freq.items():
        angles = "/".join(_num(a) for a, _ in cells)
        limits = " / ".join(_num(v) for _, v in cells)
        lines.append(f"  {_num(freq)} MHz: {limits} cm/s at {angles}°")
    return lines


def no_doppler_text(plan: Plan | None) -> str:
    """Why a plan has no Doppler section: none was asked for, or the target has no
    velocity data (the plan's ``doppler.no_vessel_data`` finding says so and why)."""
    if plan is not None:
        for finding in plan.findings:
            if finding.code == "doppler.no_vessel_data":
                return f"No Doppler section: {finding.message}"
    return NO_DOPPLER


def doppler_markup(doppler: DopplerPlan | None, plan: Plan | None = None) -> str:
    """The Doppler section of a plan as markup (why there is none when there is none)."""
    if doppler is None:
        return escape(no_doppler_text(plan))
    vessel = doppler.vessel
    kind = ", ".join(v for v in (vessel.flow, vessel.quantity) if v)
    lines = [f"[b]{escape(vessel.name)}[/b]" + (f" [$text-muted]({escape(kind)})[/]" if kind else "")]
    lines += _expected_lines(vessel)
    lines.append(f"Depth {_num(doppler.depth_cm, 1)} cm · range-limited PRF up to "
                 f"{_num(doppler.prf_max_hz)} Hz")
    rec = doppler.recommended
    lines.append(f"[b]Set {_num(rec.frequency_mhz)} MHz at {_num(rec.angle_deg)}°"
                 f"[/b]: no aliasing up to {_num(rec.v_max_cm_s)} cm/s")
    if rec.how:
        lines.append(f"  {escape(rec.how)}")
    plus, minus = doppler.velocity_error_percent.plus_5_deg, doppler.velocity_error_percent.minus_5_deg
    if plus is not None and minus is not None:
        lines.append(f"Velocity error if the angle is off by +5°: {plus:+.1f} %, "
                     f"by −5°: {minus:+.1f} %")
    if doppler.aliasing_expected:
        margin = doppler.margin
        lines.append(f"[bold $error]ALIASING EXPECTED[/]: {_num(margin.design_velocity_cm_s)}"
                     f" cm/s against a limit of {_num(margin.v_max_cm_s)} cm/s")
    else:
        lines.append("[bold $success]No aliasing expected[/] at the recommended setting")
    if doppler.remedies:
        lines.append("[b]Remedies[/b] (each recomputed with the change applied)")
        for index, remedy in enumerate(doppler.remedies, 1):
            verdict = ("removes aliasing" if remedy.removes_aliasing
                       else "[$warning]not enough alone[/]")
            lines.append(f"  {index}. {escape(remedy.text or remedy.action)}"
                         f": {verdict}" + (f" [$text-muted]({escape(remedy.cost)})[/]"
                                           if remedy.cost else ""))
    if doppler.nyquist:
        lines.append("[b]Nyquist limit at this depth[/b]")
        lines += _nyquist_lines(doppler.nyquist)
    if doppler.sources:
        lines.append(f"[$text-muted]Sources: {escape(', '.join(doppler.sources))}"
                     " (full citations: F3, Enter on a Doppler finding)[/]")
    return "\n".join(lines)


class DopplerView(VerticalScroll):
    """Shows :func:`doppler_markup` of the plan."""

    # Without a fixed gutter, the scrollbar appearing and disappearing as the text rewraps
    # re-lays the view out forever in a small pane (measured: 20-35 % of a core at 30x10).
    DEFAULT_CSS = "DopplerView { scrollbar-gutter: stable; }"

    def compose(self) -> ComposeResult:
        yield Static(escape(NO_DOPPLER), id="doppler-text")

    def show_plan(self, plan: Plan) -> None:
        """Show the Doppler part of ``plan``."""
        self.query_one("#doppler-text", Static).update(doppler_markup(plan.doppler, plan))
