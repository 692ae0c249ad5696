"""The scanplan terminal UI: the app, its global keys and its stylesheet.

``scanplan`` (or ``scanplan ui``) calls :func:`run_app`. The planning screen does the
work; see :mod:`planner.tui.screens.planning`.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from textual.app import App
from textual.binding import Binding

from planner.planfile import PlanInputs
from planner.tui.demo import DEMO_INPUTS, DEMO_LABEL
from planner.tui.screens.help import HelpScreen
from planner.tui.screens.planning import PlanningScreen

if TYPE_CHECKING:
    from planner.tui.first_plan import FirstPlan


class ScanplanApp(App[int]):
    """Plan an ultrasound exam live as you type (decision support only).

    Parameters
    ----------
    inputs : PlanInputs, optional
        The plan to open with; the invented demo patient by default.
    source : str
        How the masthead names where the inputs came from.
    first_plan : FirstPlan, optional
        The start-up helper planning the opening inputs on another core
        (:mod:`planner.tui.first_plan`); without it the screen plans them itself.
    """

    CSS_PATH = Path(__file__).with_name("app.tcss")
    TITLE = "scanplan"
    BINDINGS = [
        Binding("ctrl+q", "request_quit", "Quit", priority=True),
        Binding("f1", "help", "Help"),
        Binding("f9", "toggle_theme", "Theme", show=False),
    ]

    def __init__(self, inputs: PlanInputs | None = None, source: str | None = None,
                 first_plan: FirstPlan | None = None) -> None:
        super().__init__()
        self.first_plan = first_plan
        self._inputs = inputs if inputs is not None else DEMO_INPUTS
        self._source = source if source is not None else (DEMO_LABEL if inputs is None else "")

    def get_default_screen(self) -> PlanningScreen:
        self.planning = PlanningScreen(self._inputs, self._source)
        return self.planning

    def on_ready(self) -> None:
        # The form, the views and the engine load only after the first frame is on screen.
        self.call_after_refresh(self.planning.build)

    def action_request_quit(self) -> None:
        """Ctrl+Q: quit at once, or ask (save, discard, cancel) when there are unsaved edits
        (while the question is shown, Ctrl+Q waits for its answer)."""
        from planner.tui.screens.decide import QuitDialog
        if isinstance(self.screen, QuitDialog):
            return
        planning = getattr(self, "planning", None)
        if planning is None:
            self.exit()
            return
        planning.request_quit()     # waits for a form that is mounting; asks when edited

    def action_help(self) -> None:
        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen())

    def action_toggle_theme(self) -> None:
        self.theme = "textual-light" if self.theme != "textual-light" else "textual-dark"


def run_app(first_plan: FirstPlan | None = None) -> int:
    """Run the terminal UI until the user quits; return the exit code (0).

    The objects made by the imports so far (Textual's, mostly) are moved out of the garbage
    collector's reach with :func:`gc.freeze`: they live as long as the app, and every full
    collection would walk them again. Measured on this project's machine: with them frozen,
    decoding the target library's JSON twin after the UI has loaded takes 3-5 ms instead of
    29-41 ms (the decode's allocations set off full collections over Textual's objects).
    """
    import gc
    app = ScanplanApp(first_plan=first_plan)
    gc.freeze()
    try:
        app.run()
    finally:
        if first_plan is not None:
            first_plan.close()
    return int(app.return_code or 0)
