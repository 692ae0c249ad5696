"""The Plan view's text: everything the Plan view and the status line show for a plan.

:func:`summary_content` turns a plan into Textual content markup and table rows (no
widgets), so the same text can be made in this process or in the start-up helper
(:mod:`planner.tui.first_plan`); it is the only way the Plan view is filled. Nothing here
imports Textual.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from planner.records import record
from planner.tui.format import summary_rows
from planner.tui.markup import escape

if TYPE_CHECKING:  # the engine loads after the first paint
    from planner.engine.model import Plan

__all__ = ["SummaryContent", "summary_content", "status_markup", "windows_rows",
           "layers_markup"]


@record
class SummaryContent:
    """The text of the Plan view and the status line for one plan (content markup)."""

    rows: tuple[tuple[str, str], ...]
    """The summary card: (label, value) in card order."""
    windows_title: str
    windows: tuple[tuple[str, ...], ...]
    """Rows of the ranked-window table: rank, name, usable, loss, depth, band."""
    tilt: str
    layers: str
    pitfalls: str
    assumptions: str
    status: str
    """The status line above the views (band and window)."""
    title: str = ""
    """The target as the masthead names it, with the side planned ("Left kidney")."""

    def to_json(self) -> dict[str, Any]:
        """A JSON-ready dict (lists for tuples)."""
        return {"rows": [list(r) for r in self.rows], "windows_title": self.windows_title,
                "windows": [list(r) for r in self.windows], "tilt": self.tilt,
                "layers": self.layers, "pitfalls": self.pitfalls,
                "assumptions": self.assumptions, "status": self.status, "title": self.title}

    @classmethod
    def from_json(cls, data: dict[str, Any]) -> SummaryContent:
        """The content :meth:`to_json` wrote (KeyError or TypeError if it is not that)."""
        return cls(tuple((str(a), str(b)) for a, b in data["rows"]),
                   str(data["windows_title"]),
                   tuple(tuple(str(c) for c in r) for r in data["windows"]),
                   str(data["tilt"]), str(data["layers"]), str(data["pitfalls"]),
                   str(data["assumptions"]), str(data["status"]), str(data["title"]))


def windows_rows(plan: Plan) -> list[tuple[str, ...]]:
    """Rows of the ranked-window table: rank, name, usable, loss, depth, band."""
    rows: list[tuple[str, ...]] = []
    for rank, w in enumerate(plan.windows, 1):
        band = w.band_mhz
        rows.append((str(rank), w.label, "yes" if w.feasible else "NO",
                     f"{w.round_trip_loss_db:.0f}", f"{w.depth_cm:.1f}",
                     f"{band.low:.1f}–{band.high:.1f}" if band else "–"))
    return rows


def layers_markup(plan: Plan) -> str:
    """The layer stack of the chosen window, skin first."""
    lines = []
    depth = 0.0
    for layer in plan.layers:
        depth += layer.thickness_cm
        lines.append(f"  {depth:5.1f} cm  {escape(layer.label)} "
                     f"[$text-muted]({layer.thickness_cm:.2f} cm thick)[/]")
    return "\n".join(lines)


def status_markup(plan: Plan) -> str:
    """The status line for a plan: its band and window."""
    band = plan.frequency_mhz
    band_text = (f"{band.low:.1f}–{band.high:.1f} MHz"
                 if band.low is not None and band.high is not None else "no usable band")
    return f"[$success]✓[/] [b]{band_text}[/b] · {escape(plan.window.name)}"


def summary_content(plan: Plan) -> SummaryContent:
    """Everything the Plan view and the status line show for ``plan``."""
    windows = plan.windows
    reference = windows[0].reference_frequency_mhz if windows else None
    advice = plan.tilt.advice
    assumptions, pitfalls = plan.assumptions, plan.pitfalls
    return SummaryContent(
        rows=tuple(summary_rows(plan)),
        windows_title="Windows, best first" + (f" [$text-muted](dB = round-trip loss at "
                                               f"{reference:g} MHz)[/]" if reference else ""),
        windows=tuple(windows_rows(plan)),
        tilt=f"[b]Tilt[/b]  {escape(advice)}" if advice else "",
        layers="[b]Layers on the path[/b] [$text-muted](depth of each layer's bottom)[/]\n"
               + layers_markup(plan),
        pitfalls=("[b]Pitfalls[/b]\n" + "\n".join(f"  • {escape(p)}" for p in pitfalls)
                  if pitfalls else ""),
        assumptions=("[b]Assumptions[/b]\n" + "\n".join(f"  • {escape(a)}" for a in assumptions)
                     if assumptions else ""),
        status=status_markup(plan), title=plan.target_title)
