"""The planning screen: inputs on the left, the live plan on the right.

Start-up is progressive, so that the first frame comes as fast as a bare Textual app and
the first plan soon after: the first paint shows the masthead and a loading line; then
:meth:`PlanningScreen.build` starts loading the engine (numpy, the data tables, the target
library) in a thread and mounts the plan views; the first plan, made from the opening
inputs, is shown as soon as the engine is ready, and the form mounts after it. From then on
every change recomputes the plan synchronously (a few milliseconds) and never lets an
exception escape.
"""

from __future__ import annotations

import gc
import time

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.markup import escape
from textual.widgets import Checkbox, Footer, Input, Static

from planner.planfile import PlanInputs
from planner.tui.compute import FIELD_LABELS, Outcome, compute, form_values
from planner.tui.demo import DEMO_INPUTS, DEMO_LABEL
from planner.tui.messages import (EngineLoaded, FindingOpened, FirstPlanReady, InputsEdited,
                                  PlanComputed)
from planner.tui.screens.explain import ExplainScreen
from planner.tui.screens.planning_files import FileActions
from planner.tui.widgets import guards
from planner.tui.widgets.masthead import Masthead

guards.install()   # Textual 8.2.8: PageDown at 1x1, a burst of Enters in the palette


FORM_DELAY_S: float = 0.05
"""Pause between painting the first plan and mounting the form, so that the plan reaches the
terminal first (measured: the plan otherwise appears only with the form, 300-400 ms later). [s]"""


async def _descendants_mounted(widget, limit_s: float = 3.0) -> None:
    """Wait until every widget under ``widget`` has mounted (an awaited mount returns when
    the top widget has; its descendants, such as a Select's overlay, mount in their own
    tasks, and exiting before they do breaks them)."""
    import asyncio
    deadline = asyncio.get_running_loop().time() + limit_s
    while any(not w.is_mounted for w in widget.walk_children(with_self=True)):
        if asyncio.get_running_loop().time() > deadline:
            return
        await asyncio.sleep(0.005)


class PlanningScreen(FileActions):
    """Inputs, live plan, and the file actions."""

    AUTO_FOCUS = None
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (110, "-wide")]
    BINDINGS = [
        Binding("ctrl+s", "save", "Save"),
        Binding("ctrl+o", "open", "Open"),
        Binding("ctrl+r", "export", "Export"),
        Binding("ctrl+g", "toggle_draft", "Draft"),
        Binding("f7", "protocol", "Protocol"),
        Binding("f2", "view('plan')", "Views", key_display="F2-F6"),
        Binding("f3", "view('findings')", "Findings", show=False),
        Binding("f4", "view('safety')", "Safety", show=False),
        Binding("f5", "view('depth')", "Depth profile", show=False),
        Binding("f6", "view('doppler')", "Doppler", show=False),
        Binding("ctrl+t", "focus_target", "Target", show=False),
        Binding("ctrl+n", "new_plan", "New plan", show=False),
        Binding("escape", "back_to_inputs", "Inputs", show=False),
    ]

    def __init__(self, inputs: PlanInputs = DEMO_INPUTS, source: str = DEMO_LABEL) -> None:
        super().__init__()
        self.baseline = inputs
        self.source = source
        self.engine_ready = False
        self.outcome: Outcome | None = None
        self.plan = None
        self.recompute_ms: float = 0.0
        self.recomputes = 0
        self._last_input_id = "bmi"
        self.built = False              # the form and the plan views are mounted
        self._building = False
        self._pane_mounted = False
        self._pending_engine: EngineLoaded | None = None
        self._pending_first: FirstPlanReady | None = None
        self._first_title = ""          # the target's name in the start-up helper's plan
        self._library_info: tuple | None = None
        self._last_raw: dict | None = None
        self.mounting_form = False
        self.quit_pending = False
        self.closing = False            # the app is exiting: nothing more to mount
        self._form_timer: object | None = None
        self._protocol_path = "protocol.yaml"
        self.signed = None          # planner.tui.signoff.SignedFile of the opened file

    def compose(self) -> ComposeResult:
        yield Masthead(id="masthead")
        yield Static("Loading the planner…", id="loading")
        yield Footer(show_command_palette=False)

    def on_mount(self) -> None:
        self._update_masthead(self.baseline)

    async def build(self) -> None:
        """Start loading the engine, mount the plan views; the form follows the first plan.

        The engine (numpy, the data tables, the target library) loads in a thread while the
        plan views mount, and the first plan is shown from the opening inputs as soon as it
        is ready; the form (about a hundred widgets) mounts after that, and from then on
        every plan is computed from the form.
        """
        if self._building:
            return
        self._building = True
        helper = getattr(self.app, "first_plan", None)
        if helper is None:
            self.load_engine()
        else:                   # the engine loads once the helper's plan is on screen
            self.await_first_plan(helper)
        from planner.tui.widgets.plan_pane import PlanPane
        body = Horizontal(Static("Loading the form…", id="inputs-placeholder"), id="body")
        await self.mount(body, before=self.query_one(Footer))
        await body.mount(PlanPane())
        await self.query_one("#loading").remove()
        self._pane_mounted = True
        if self._pending_first is not None:
            first, self._pending_first = self._pending_first, None
            self.on_first_plan_ready(first)
        if self._pending_engine is not None:
            event, self._pending_engine = self._pending_engine, None
            self.on_engine_loaded(event)

    async def _mount_form(self) -> None:
        """Mount the input form (after the first plan is on screen) and plan from it."""
        if self.built or self.quit_pending or self.closing or not self.is_attached:
            return              # quit (Ctrl+Q) before the form came: nothing to mount
        from planner.tui.widgets.input_panel import InputPanel
        panel = InputPanel(form_values(self.baseline))
        body = self.query_one("#body")
        self.mounting_form = True       # a quit now waits: exiting mid-mount breaks widgets
        try:
            await self.query_one("#inputs-placeholder").remove()
            await body.mount(panel, before=self.pane)
            await _descendants_mounted(panel)
        finally:
            self.mounting_form = False
        self.built = True
        if self.quit_pending:
            self.call_after_refresh(self.app.exit)
            return
        if self._library_info is not None:
            panel.set_library(*self._library_info)
            self.engine_ready = True
            self.recompute()

    @property
    def panel(self):
        """The input panel (after :meth:`build`)."""
        return self.query_one("#inputs")

    @property
    def pane(self):
        """The plan pane (after :meth:`build`)."""
        return self.query_one("#plan-pane")

    # -- engine -----------------------------------------------------------------------------
    @work(thread=True, exclusive=True, group="first-plan")
    def await_first_plan(self, helper) -> None:
        """Wait (off the main thread, without the interpreter lock) for the start-up helper's
        first plan (:mod:`planner.tui.first_plan`)."""
        content = None
        try:
            content = helper.result(form_values(self.baseline))
        finally:
            self.post_message(FirstPlanReady(content))

    def on_first_plan_ready(self, event: FirstPlanReady) -> None:
        if not self._pane_mounted:
            self._pending_first = event
            return
        if event.content is not None:
            self.pane.show_first(event.content)
            self._first_title = event.content.title
            self._update_masthead(self.baseline)
        # the engine loads after this frame: its imports would hold the interpreter lock
        self.call_after_refresh(self.load_engine)

    @work(thread=True, exclusive=True, group="engine")
    def load_engine(self) -> None:
        """Import the engine and load the library off the main thread."""
        try:
            from planner.body.conditions import CONDITIONS
            from planner.engine import make_plan  # noqa: F401 - imported to warm the cache
            from planner.library.targets import load_library
            from planner.safety.context import EXAM_TYPES, MODES
            gc.freeze()     # numpy's and the engine's objects live as long as the app (run_app)
            library = load_library()
            first = compute(form_values(self.baseline))    # the opening inputs; warms the caches
            gc.freeze()     # and so do the library and the data tables
            self.post_message(EngineLoaded((library, dict(EXAM_TYPES), dict(MODES),
                                            list(CONDITIONS)), first=first))
        except Exception as exc:  # noqa: BLE001 - shown to the user instead of a crash
            message = getattr(exc, "message", None) or f"{type(exc).__name__}: {exc}"
            self.post_message(EngineLoaded(error=message))

    def on_engine_loaded(self, event: EngineLoaded) -> None:
        if not self._pane_mounted:         # the engine won the race with the plan views
            self._pending_engine = event
            return
        pane = self.pane
        if event.error:
            pane.show_status(f"[bold $error]✗ The planner could not start:[/] {escape(event.error)}")
            pane.show_failure(event.error)
        else:
            self._library_info = event.library
            first = event.first or compute(form_values(self.baseline))   # before the form
            if first.plan is not None:
                self._show_plan(first.plan)
        # a short pause lets the first plan reach the terminal before the form's widgets
        # (hundreds of milliseconds of mounting) hold the event loop
        self._form_timer = self.set_timer(FORM_DELAY_S, self._mount_form)

    # -- recompute --------------------------------------------------------------------------
    def on_inputs_edited(self, event: InputsEdited) -> None:
        event.stop()
        if not self.engine_ready:
            return
        raw = self.panel.raw_values()
        if raw == self._last_raw:
            return              # e.g. the Changed events of the form's own first fill
        self.recompute(raw)

    def recompute(self, raw: dict | None = None) -> Outcome | None:
        """Read the form, make the plan, show it or the problems. Never raises."""
        if not self.engine_ready:
            return None
        start = time.perf_counter()
        panel, pane = self.panel, self.pane
        self._last_raw = panel.raw_values() if raw is None else raw
        outcome = compute(self._last_raw)
        self.outcome = outcome
        unplaced = panel.show_problems(outcome.problems)
        if outcome.plan is not None:
            try:
                self._show_plan(outcome.plan)
            except Exception as exc:  # noqa: BLE001 - a display bug must not end the session
                outcome.message = f"cannot show this plan ({type(exc).__name__}: {exc}); please report it"
                outcome.plan = None
        if outcome.plan is not None:
            self.plan = outcome.plan
        else:
            names = ", ".join(FIELD_LABELS.get(k, k) for k in outcome.problems)
            detail = outcome.message or "; ".join(f"{k}: {v}" for k, v in unplaced.items())
            text = "[bold $error]✗ Fix the marked field" + ("s" if len(outcome.problems) > 1 else "")
            text = (f"{text}[/] ({escape(names)})" if names else "[bold $error]✗ No plan[/]")
            if detail:
                text += f": {escape(detail)}"
            if self.plan is not None:
                text += " [$text-muted]· showing the last valid plan[/]"
            pane.show_status(text, stale=self.plan is not None)
            if self.plan is None:
                pane.show_failure(detail or "fix the marked fields")
        self._update_masthead(outcome.inputs)
        self.recompute_ms = (time.perf_counter() - start) * 1000.0
        self.recomputes += 1
        self.post_message(PlanComputed(outcome))
        return outcome

    def _show_plan(self, plan) -> None:
        """Show ``plan`` in the views and its band and window on the status line."""
        from planner.tui.plan_text import status_markup
        pane = self.pane
        pane.show_plan(plan)
        pane.show_status(status_markup(plan))

    def _update_masthead(self, inputs: PlanInputs) -> None:
        name = inputs.target_id
        library = self.panel.library if self.built else None
        if library is not None and inputs.target_id in library:
            name = library.get(inputs.target_id).name
        plan = self.outcome.plan if self.outcome is not None else None
        if plan is not None and plan.target.id == inputs.target_id:
            name = plan.target_title  # with the side planned ("Left kidney")
        elif plan is None and self._first_title and inputs == self.baseline:
            name = self._first_title
        signature = ""
        if self.signed is not None:
            from planner.tui.signoff import state_for, supervisor_fields
            state = state_for(self.signed, inputs)
            signature = {"valid": f"signed by {state.name} at {state.signed_at}",
                         "unchecked": f"signed by {state.name} at {state.signed_at}",
                         "changed": "changed after signing",
                         "unknown": "signed by an unknown key"}.get(state.status, "")
            if self.built:
                self.panel.show_signature(state.line(), supervisor_fields(state))
        self.query_one(Masthead).show(name, self.source, inputs != self.baseline, inputs.draft,
                                      signature)

    @property
    def dirty(self) -> bool:
        """True when the form holds edits not saved (or opened) as they are."""
        return bool(self.built and self.outcome is not None
                    and self.outcome.inputs != self.baseline)

    # -- views and focus --------------------------------------------------------------------
    async def action_view(self, view: str) -> None:
        if self.built:
            await self.pane.switch_to(view)

    def action_focus_target(self) -> None:
        if self.built:
            target = self.query_one("#target-filter", Input)
            target.focus()
            target.scroll_visible()

    def action_back_to_inputs(self) -> None:
        focused = self.focused
        if self.built and focused is not None and self.pane in focused.ancestors_with_self:
            found = self.query(f"#{self._last_input_id}")
            (found.first() if found else self.query_one("#bmi")).focus()

    def on_descendant_focus(self, event) -> None:
        widget = event.widget
        if self.built and widget.id and self.panel in widget.ancestors:
            self._last_input_id = widget.id

    def on_finding_opened(self, event: FindingOpened) -> None:
        event.stop()
        self.app.push_screen(ExplainScreen(event.finding))

    def action_toggle_draft(self) -> None:
        """Turn the supervised draft on and put the cursor in the student's first field."""
        if not self.built:
            return
        from planner.tui.widgets.input_panel import DRAFT_FIRST_FIELD
        box = self.query_one("#draft", Checkbox)
        if not box.value:
            box.value = True
        self.query_one("#signoff").display = True
        first = self.query_one(f"#{DRAFT_FIRST_FIELD}", Input)
        self.call_after_refresh(first.focus)
        self.call_after_refresh(first.scroll_visible)

    def action_new_plan(self) -> None:
        self.signed = None
        target = self.outcome.inputs.target_id if self.outcome else self.baseline.target_id
        self._adopt(PlanInputs(target_id=target), "new plan")
        if self.built:      # a new patient starts at the first field (the BMI)
            self.query_one("#bmi", Input).focus()

    def _adopt(self, inputs: PlanInputs, source: str, signed=None) -> None:
        self.baseline, self.source, self.signed = inputs, source, signed
        self.panel.fill(form_values(inputs))
        self.recompute()

