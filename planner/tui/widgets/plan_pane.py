"""The right side of the planning screen: a status line and five views of the plan.

Only the Plan view is mounted with the pane (it is the one on screen at start-up); each other
view mounts the first time it is shown, so the first plan appears sooner.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.markup import escape
from textual.widget import Widget
from textual.widgets import Static, TabbedContent, TabPane

from planner.tui.widgets.doppler_view import DopplerView
from planner.tui.widgets.findings_view import FindingList
from planner.tui.widgets.profile_plot import DepthProfile
from planner.tui.widgets.safety_view import SafetyView
from planner.tui.widgets.summary_view import PlanSummary

if TYPE_CHECKING:  # the engine loads after the first paint
    from planner.engine.model import Plan
    from planner.tui.plan_text import SummaryContent

VIEWS: dict[str, str] = {"plan": "Plan", "findings": "Findings", "safety": "Safety",
                         "depth": "Depth", "doppler": "Doppler"}
"""View id -> tab label, in tab order (F2 to F6)."""


class PlanPane(Vertical):
    """Status line on top, then the views in tabs."""

    def __init__(self) -> None:
        super().__init__(id="plan-pane")
        self.plan: Plan | None = None
        self._stale: set[str] = set()
        self._status = ""
        self._mounted_views: set[str] = set()

    def compose(self) -> ComposeResult:
        yield Static("Loading the engine and the target library…", id="plan-status")
        with TabbedContent(id="views", initial="plan"):
            with TabPane(VIEWS["plan"], id="plan"):
                yield PlanSummary(id="summary")
            for view in ("findings", "safety", "depth", "doppler"):
                yield TabPane(VIEWS[view], id=view)

    @staticmethod
    def _view_widgets(view: str) -> list[Widget]:
        """The widgets of a view that mounts when first shown."""
        if view == "findings":
            return [Static("Enter explains the highlighted finding", classes="hint"),
                    FindingList(id="findings-list")]
        if view == "safety":
            return [SafetyView(id="safety-view")]
        if view == "depth":
            from planner.tui.widgets.odds_plot import ReachOdds
            return [DepthProfile(id="profile"), ReachOdds(id="odds")]
        return [DopplerView(id="doppler-view")]

    async def _ensure_view(self, view: str) -> None:
        """Mount view ``view``'s widgets if this is the first time it is shown."""
        if view == "plan" or view in self._mounted_views:
            return
        self._mounted_views.add(view)
        await self.query_one(f"#{view}", TabPane).mount_all(self._view_widgets(view))

    def show_plan(self, plan: Plan) -> None:
        """Show a freshly computed plan: now in the visible view, the others when shown."""
        self.plan = plan
        self._stale = set(VIEWS)
        self._refresh_view(self.query_one(TabbedContent).active)
        if self.has_class("-stale"):
            self.set_class(False, "-stale")

    def show_first(self, content: SummaryContent) -> None:
        """Show the start-up helper's text of the first plan in the Plan view and the status
        line (the views fill from the screen's own first plan, which follows)."""
        if self.plan is None:
            self.query_one(PlanSummary).show_content(content)
            self.show_status(content.status)

    def _refresh_view(self, view: str) -> None:
        if self.plan is None or view not in self._stale:
            return
        if view != "plan" and view not in self._mounted_views:
            return                      # shown (and filled) when its tab is first activated
        self._stale.discard(view)
        plan = self.plan
        if view == "plan":
            self.query_one(PlanSummary).show_plan(plan)
        elif view == "findings":
            self.query_one("#findings-list", FindingList).set_findings(plan.findings)
        elif view == "safety":
            self.query_one(SafetyView).show_plan(plan)
        elif view == "depth":
            self.query_one(DepthProfile).show_plan(plan)
            from planner.tui.widgets.odds_plot import ReachOdds
            self.query_one(ReachOdds).show_plan(plan)
        elif view == "doppler":
            self.query_one(DopplerView).show_plan(plan)

    async def on_tabbed_content_tab_activated(self, event: TabbedContent.TabActivated) -> None:
        if event.pane.id:
            await self._ensure_view(event.pane.id)
            self._refresh_view(event.pane.id)

    def show_status(self, markup: str, *, stale: bool = False) -> None:
        """Set the status line; ``stale`` dims the views (they show the last valid plan)."""
        if markup != self._status:
            self._status = markup
            self.query_one("#plan-status", Static).update(markup, layout=False)
        if self.has_class("-stale") != stale:
            self.set_class(stale, "-stale")

    def show_failure(self, message: str) -> None:
        """No plan at all (e.g. the engine could not load): say why in the summary."""
        self.query_one(PlanSummary).show_message(f"[bold $error]No plan:[/] {escape(message)}")

    async def switch_to(self, view: str) -> None:
        """Show view ``view`` (a key of :data:`VIEWS`) and focus its main widget."""
        await self._ensure_view(view)
        self.query_one(TabbedContent).active = view
        self._refresh_view(view)
        target = {"findings": "#findings-list", "safety": "#safety-list"}.get(view)
        if target:
            self.query_one(target).focus()
        else:
            pane = self.query_one(f"#{view}", TabPane)
            focusable = [w for w in pane.query("*") if w.can_focus]
            if focusable:
                focusable[0].focus()
