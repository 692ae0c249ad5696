"""The Doppler section: Nyquist limit at depth, recommended frequency and angle, aliasing."""

from __future__ import annotations

from typing import Any

from textual.containers import VerticalScroll
from textual.markup import escape
from textual.widgets import Static

NO_DOPPLER = ("No Doppler section. Tick a Doppler mode (colour, power or pulsed) under "
              "Exam → Modes; vessel targets then get the Nyquist limit at their depth, the "
              "recommended frequency and angle, and the remedies for aliasing.")


def _num(value: Any, digits: int = 0) -> str:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return "?"
    return f"{value:.{digits}f}" if digits else f"{value:g}" if abs(value) < 10 else f"{value:.0f}"


def _sourced(record: Any) -> tuple[str, str]:
    """``(value, 'Source, status')`` of a ``{value, source, status}`` record."""
    if isinstance(record, dict):
        status = str(record.get("status", "")).replace("_", " ")
        return _num(record.get("value")), f"{record.get('source', '?')}, {status}"
    return _num(record), ""


def _expected_lines(vessel: dict) -> list[str]:
    lines = []
    expected = vessel.get("expected_cm_s") or {}
    if expected:
        (low, low_src), (high, high_src) = _sourced(expected.get("low")), \
            _sourced(expected.get("high"))
        lines.append(f"Expected [b]{low}–{high} cm/s[/b] [$text-muted]({escape(low_src)}; "
                     f"{escape(high_src)})[/]")
    for threshold in vessel.get("thresholds") or []:
        value, source = _sourced(threshold)
        lines.append(f"  {escape(str(threshold.get('label', '')))}: {value} cm/s "
                     f"[$text-muted]({escape(source)})[/]")
    return lines


def _nyquist_lines(table: list[dict]) -> list[str]:
    by_freq: dict[float, list[tuple[float, float]]] = {}
    for row in table:
        if isinstance(row, dict):
            by_freq.setdefault(row.get("frequency_mhz"), []).append(
                (row.get("angle_deg"), row.get("v_max_cm_s")))
    lines = []
    for freq, cells in by_freq.items():
        angles = "/".join(_num(a) for a, _ in cells)
        limits = " / ".join(_num(v) for _, v in cells)
        lines.append(f"  {_num(freq)} MHz: {limits} cm/s at {angles}°")
    return lines


def doppler_markup(doppler: dict[str, Any] | None) -> str:
    """The Doppler section of a plan as markup (a note when there is none)."""
    if not doppler:
        return escape(NO_DOPPLER)
    vessel = doppler.get("vessel") or {}
    kind = ", ".join(str(vessel[k]) for k in ("flow", "quantity") if vessel.get(k))
    lines = [f"[b]{escape(str(vessel.get('name', 'Vessel')))}[/b]"
             + (f" [$text-muted]({escape(kind)})[/]" if kind else "")]
    lines += _expected_lines(vessel)
    lines.append(f"Depth {_num(doppler.get('depth_cm'), 1)} cm · range-limited PRF up to "
                 f"{_num(doppler.get('prf_max_hz'))} Hz")
    rec = doppler.get("recommended") or {}
    if rec:
        lines.append(f"[b]Set {_num(rec.get('frequency_mhz'))} MHz at {_num(rec.get('angle_deg'))}°"
                     f"[/b]: no aliasing up to {_num(rec.get('v_max_cm_s'))} cm/s")
        if rec.get("how"):
            lines.append(f"  {escape(str(rec['how']))}")
    error = doppler.get("velocity_error_percent") or {}
    if error:
        plus, minus = error.get("plus_5_deg"), error.get("minus_5_deg")
        if isinstance(plus, (int, float)) and isinstance(minus, (int, float)):
            lines.append(f"Velocity error if the angle is off by +5°: {plus:+.1f} %, "
                         f"by −5°: {minus:+.1f} %")
    if doppler.get("aliasing_expected"):
        margin = doppler.get("margin") or {}
        lines.append(f"[bold $error]ALIASING EXPECTED[/]: {_num(margin.get('design_velocity_cm_s'))}"
                     f" cm/s against a limit of {_num(margin.get('v_max_cm_s'))} cm/s")
    elif "aliasing_expected" in doppler:
        lines.append("[bold $success]No aliasing expected[/] at the recommended setting")
    remedies = [r for r in doppler.get("remedies") or [] if isinstance(r, dict)]
    if remedies:
        lines.append("[b]Remedies[/b] (each recomputed with the change applied)")
        for index, remedy in enumerate(remedies, 1):
            verdict = ("removes aliasing" if remedy.get("removes_aliasing")
                       else "[$warning]not enough alone[/]")
            lines.append(f"  {index}. {escape(str(remedy.get('text') or remedy.get('action', '')))}"
                         f": {verdict}" + (f" [$text-muted]({escape(str(remedy['cost']))})[/]"
                                           if remedy.get("cost") else ""))
    table = doppler.get("nyquist") or []
    if table:
        lines.append("[b]Nyquist limit at this depth[/b]")
        lines += _nyquist_lines(table)
    if doppler.get("sources"):
        lines.append(f"[$text-muted]Sources: {escape(', '.join(map(str, doppler['sources'])))}"
                     " (full citations: F3, Enter on a Doppler finding)[/]")
    return "\n".join(lines)


class DopplerView(VerticalScroll):
    """Shows :func:`doppler_markup` of the plan."""

    # Without a fixed gutter, the scrollbar appearing and disappearing as the text rewraps
    # re-lays the view out forever in a small pane (measured: 20-35 % of a core at 30x10).
    DEFAULT_CSS = "DopplerView { scrollbar-gutter: stable; }"

    def compose(self):
        yield Static(escape(NO_DOPPLER), id="doppler-text")

    def show_plan(self, plan: dict) -> None:
        """Show the Doppler part of ``plan`` (a plan as a dict)."""
        self.query_one("#doppler-text", Static).update(doppler_markup(plan.get("doppler")))
