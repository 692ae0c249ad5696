"""The safety panel: the deference statement, the index to watch, the safety items, validity."""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.markup import escape
from textual.widgets import Static

from planner.tui.widgets.findings_view import FindingList

if TYPE_CHECKING:  # the engine loads after the first paint
    from planner.engine.model import Plan

DEFERS = ("Decision support only: this plan defers to local protocols, licensed practice and "
          "the TI and MI the scanner displays.")
"""Shown above the safety items whatever the plan says (the plan's own statement follows)."""


def validity_markup(plan: Plan) -> str:
    """Inputs outside the model's validated range (empty when every input is inside it)."""
    return "\n".join(f"[bold $warning]OUTSIDE RANGE[/] {escape(flag.message)}"
                     for flag in plan.validity)


class SafetyView(Vertical):
    """Statement and index on top, safety items in the middle, validity below."""

    def compose(self) -> ComposeResult:
        yield Static(f"[b]{escape(DEFERS)}[/b]", id="safety-statement")
        yield FindingList(id="safety-list")
        yield Static("", id="validity")

    def show_plan(self, plan: Plan) -> None:
        """Show the safety part of ``plan``."""
        index = plan.monitored_index
        statement = escape(DEFERS)
        if plan.disclaimer and plan.disclaimer != DEFERS:
            statement = escape(plan.disclaimer)
        self.query_one("#safety-statement", Static).update(
            f"[b]{statement}[/b] Watch [b]{escape(str(index))}[/b].")
        self.query_one("#safety-list", FindingList).set_findings(plan.safety)
        validity = validity_markup(plan)
        self.query_one("#validity", Static).update(validity)
        self.query_one("#validity", Static).display = bool(validity)
