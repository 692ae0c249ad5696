"""Round-trip loss against depth for two or three frequencies, with the budget and the target.

The plot widget (textual-plotext) is imported and mounted the first time the view is
shown, so that it costs nothing at start-up.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.markup import escape
from textual.widgets import Static

if TYPE_CHECKING:
    from textual_plotext import PlotextPlot

    from planner.engine.model import Plan
    from planner.report.profile import LossProfile

MARKERS: tuple[str, ...] = ("braille", "•", "x")
"""One marker per curve, so the curves stay apart without colour (NO_COLOR)."""


def caption_markup(profile) -> str:
    """The loss at the target for each curve, and where the budget runs out."""
    parts = []
    for k, freq in enumerate(profile.frequencies_mhz):
        loss = profile.loss_at_target_db(k)
        over = profile.budget_db is not None and loss > profile.budget_db
        reach = profile.reach_cm(k)
        verdict = (f"[bold $error]OVER[/] (budget spent at {reach:.1f} cm)" if over and reach
                   else "[bold $error]OVER[/]" if over else "[$success]ok[/]")
        parts.append(f"{freq:g} MHz {loss:.0f} dB {verdict}")
    budget = f"budget {profile.budget_db:g} dB" if profile.budget_db is not None else \
        "budget unknown"
    return (f"[$text-muted]Round-trip loss at the target ({profile.target_depth_cm:.1f} cm; "
            f"{budget}):[/] " + " · ".join(parts))


def ticks_db(highest_db: float) -> list[float]:
    """Round tick values from 0 up to ``highest_db`` (steps of 10, 20 or 40 dB). [dB]"""
    span = max(highest_db, 10.0)
    step = 10.0 if span <= 60 else 20.0 if span <= 140 else 40.0
    ticks, value = [], 0.0
    while value <= span + step - 1e-9:
        ticks.append(value)
        value += step
    return ticks


class DepthProfile(Vertical):
    """The plot and its caption."""

    def __init__(self, *, id: str) -> None:
        super().__init__(id=id)
        self.plan: Plan | None = None
        self.profile: LossProfile | None = None
        self._plot: PlotextPlot | None = None
        self._stale = True

    def compose(self) -> ComposeResult:
        yield Static("", id="profile-caption")

    def show_plan(self, plan: Plan) -> None:
        """Remember ``plan``; draw it now if the view is on screen."""
        self.plan = plan
        self._stale = True
        if self.is_on_screen:
            self.redraw()

    def on_show(self) -> None:
        if self._stale:
            self.redraw()

    def redraw(self) -> None:
        """Compute the profile and draw it (mounting the plot widget the first time)."""
        if self.plan is None:
            return
        from planner.report.profile import plan_loss_profile
        caption = self.query_one("#profile-caption", Static)
        try:
            self.profile = plan_loss_profile(self.plan)
        except ValueError as exc:
            caption.update(f"[bold $error]No profile:[/] {escape(str(exc))}")
            return
        caption.update(caption_markup(self.profile))
        if self._plot is None:
            from textual_plotext import PlotextPlot
            self._plot = PlotextPlot(id="profile-plot")
            self.mount(self._plot, before=caption)
        self._draw(self._plot.plt, self.profile)
        self._plot.refresh()
        self._stale = False

    def _draw(self, plt: Any, p: LossProfile) -> None:
        plt.clear_figure()
        depth = list(p.depth_cm)
        highest = max(max(row) for row in p.loss_db)
        if p.budget_db is not None:
            highest = max(highest, p.budget_db)
        ticks = ticks_db(highest)
        for k, freq in enumerate(p.frequencies_mhz):
            plt.plot(depth, list(p.loss_db[k]), label=f"{freq:g} MHz",
                     marker=MARKERS[k % len(MARKERS)])
        if p.budget_db is not None:
            plt.plot([0.0, p.target_depth_cm], [p.budget_db] * 2,
                     label=f"budget {p.budget_db:g} dB", marker="─", color="gray")
        plt.plot([p.target_depth_cm] * 2, [0.0, ticks[-1]], label="target", marker="│",
                 color="gray")
        plt.title("round-trip loss (dB) against depth (cm)")
        plt.yticks(ticks, [f"{t:g}" for t in ticks])
        plt.ylim(0.0, ticks[-1])
        plt.xlim(0.0, p.target_depth_cm * 1.02)
