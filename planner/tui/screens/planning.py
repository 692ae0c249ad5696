"""The planning screen: inputs on the left, the live plan on the right.

Start-up is progressive, so that the first frame comes as fast as a bare Textual app:
the first paint shows the masthead and a loading line; then :meth:`PlanningScreen.build`
mounts the form (demo values) and the plan views, and the engine (numpy, the data
tables, the target library) loads in a thread. From then on every change recomputes
the plan synchronously (a few milliseconds) and never lets an exception escape.
"""

from __future__ import annotations

import time
from pathlib import Path

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.markup import escape
from textual.screen import Screen
from textual.widgets import Checkbox, Footer, Input, Static

from planner.atomicfile import user_path
from planner.errors import DataError, InputError, PlannerError
from planner.planfile import PlanInputs
from planner.tui.compute import FIELD_LABELS, Outcome, compute, form_values
from planner.tui.demo import DEMO_INPUTS, DEMO_LABEL
from planner.tui.messages import EngineLoaded, FindingOpened, InputsEdited, PlanComputed
from planner.tui.screens.explain import ExplainScreen
from planner.tui.screens.path_dialog import PathDialog, PathRequest
from planner.tui.widgets import guards
from planner.tui.widgets.masthead import Masthead

guards.install()   # Textual 8.2.8: PageDown at 1x1, a burst of Enters in the palette


class PlanningScreen(Screen):
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
        self.built = False
        self._building = False
        self._protocol_path = "protocol.yaml"
        self.signed = None          # planner.tui.signoff.SignedFile of the opened file

    def compose(self) -> ComposeResult:
        yield Masthead(id="masthead")
        yield Static("Loading the planner…", id="loading")
        yield Footer(show_command_palette=False)

    def on_mount(self) -> None:
        self._update_masthead(self.baseline)

    async def build(self) -> None:
        """Mount the form and the plan views, then start loading the engine."""
        if self._building:
            return
        self._building = True
        from planner.tui.widgets.input_panel import InputPanel
        from planner.tui.widgets.plan_pane import PlanPane
        body = Horizontal(id="body")
        await self.mount(body, before=self.query_one(Footer))
        await body.mount_all([InputPanel(form_values(self.baseline)), PlanPane()])
        await self.query_one("#loading").remove()
        self.built = True
        self.load_engine()

    @property
    def panel(self):
        """The input panel (after :meth:`build`)."""
        return self.query_one("#inputs")

    @property
    def pane(self):
        """The plan pane (after :meth:`build`)."""
        return self.query_one("#plan-pane")

    # -- engine -----------------------------------------------------------------------------
    @work(thread=True, exclusive=True, group="engine")
    def load_engine(self) -> None:
        """Import the engine and load the library off the main thread."""
        try:
            from planner.body.conditions import CONDITIONS
            from planner.engine import make_plan  # noqa: F401 - imported to warm the cache
            from planner.library.targets import load_library
            from planner.safety.context import EXAM_TYPES, MODES
            library = load_library()
            compute(form_values(DEMO_INPUTS))          # warms the data caches
            self.post_message(EngineLoaded((library, dict(EXAM_TYPES), dict(MODES),
                                            list(CONDITIONS))))
        except Exception as exc:  # noqa: BLE001 - shown to the user instead of a crash
            message = getattr(exc, "message", None) or f"{type(exc).__name__}: {exc}"
            self.post_message(EngineLoaded(error=message))

    def on_engine_loaded(self, event: EngineLoaded) -> None:
        pane = self.pane
        if event.error:
            pane.show_status(f"[bold $error]✗ The planner could not start:[/] {escape(event.error)}")
            pane.show_failure(event.error)
            return
        library, exam_types, modes, conditions = event.library
        self.panel.set_library(library, exam_types, modes, conditions)
        self.engine_ready = True
        self.recompute()

    # -- recompute --------------------------------------------------------------------------
    def on_inputs_edited(self, event: InputsEdited) -> None:
        event.stop()
        self.recompute()

    def recompute(self) -> Outcome | None:
        """Read the form, make the plan, show it or the problems. Never raises."""
        if not self.engine_ready:
            return None
        start = time.perf_counter()
        panel, pane = self.panel, self.pane
        outcome = compute(panel.raw_values())
        self.outcome = outcome
        unplaced = panel.show_problems(outcome.problems)
        if outcome.plan is not None:
            plan = outcome.plan
            try:
                pane.show_plan(plan)
            except Exception as exc:  # noqa: BLE001 - a display bug must not end the session
                outcome.message = f"cannot show this plan ({type(exc).__name__}: {exc}); please report it"
                outcome.plan = None
        if outcome.plan is not None:
            self.plan = outcome.plan
            band = plan.frequency_mhz
            band_text = (f"{band.low:.1f}–{band.high:.1f} MHz"
                         if band.low is not None and band.high is not None else "no usable band")
            pane.show_status(f"[$success]✓[/] [b]{band_text}[/b] · "
                             f"{escape(plan.window.name)}")
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

    def _update_masthead(self, inputs: PlanInputs) -> None:
        name = inputs.target_id
        library = self.panel.library if self.built else None
        if library is not None and inputs.target_id in library:
            name = library.get(inputs.target_id).name
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
    def action_view(self, view: str) -> None:
        if self.built:
            self.pane.switch_to(view)

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

    def _adopt(self, inputs: PlanInputs, source: str, signed=None) -> None:
        self.baseline, self.source, self.signed = inputs, source, signed
        self.panel.fill(form_values(inputs))
        self.recompute()

    # -- files ------------------------------------------------------------------------------
    def _ready_inputs(self, verb: str) -> PlanInputs | None:
        if not self.engine_ready or self.outcome is None:
            self.notify("The planner is still loading.", severity="warning")
            return None
        if self.outcome.plan is None:
            self.notify(f"Fix the marked fields before you {verb}.", severity="error")
            return None
        return self.outcome.inputs

    def action_save(self, then=None) -> None:
        inputs = self._ready_inputs("save")
        if inputs is not None:
            self._ask(PathRequest("Save the plan", "A YAML file: the inputs and the plan as "
                                  "computed now.", f"plan-{inputs.target_id}.yaml"),
                      lambda path, confirm: self._save(path, inputs, confirm, then))

    def _save(self, path: str, inputs: PlanInputs, overwrite: bool, then=None) -> str | None:
        from planner.planfile import save_plan_inputs
        save_plan_inputs(user_path(path), inputs, overwrite=overwrite, plan=self.plan)
        signed = self.signed is not None
        self.baseline, self.source, self.signed = inputs, Path(path).name, None
        self._update_masthead(inputs)
        self.notify(f"Saved {path}" + (" (without the signature: a supervisor signs the "
                                       "saved file again)" if signed else ""))
        if then is not None:
            then()
        return None

    def request_quit(self) -> None:
        """Quit, asking first (save, discard, cancel) when there are unsaved edits."""
        if not self.dirty:
            self.app.exit()
            return
        from planner.tui.screens.decide import QuitDialog

        def chosen(choice: str | None) -> None:
            if choice == "discard":
                self.app.exit()
            elif choice == "save":
                self.action_save(then=self.app.exit)
        self.app.push_screen(QuitDialog(), chosen)

    def action_open(self) -> None:
        if not self.engine_ready:
            self.notify("The planner is still loading.", severity="warning")
            return
        self._ask(PathRequest("Open a saved plan", "A plan file saved with Ctrl+S.", "plan.yaml"),
                  lambda path, confirm: self._open(path), must_exist=True)

    def _open(self, path: str) -> str | None:
        from planner.headline import headline_changes, headline_data
        from planner.plandoc import load_plan_document
        from planner.planfile import make_plan_for
        from planner.tui.screens.decide import ChangesDialog
        from planner.tui.signoff import open_signed
        document = load_plan_document(user_path(path))
        signed = open_signed(document)
        try:
            changes = headline_changes(document.computed,
                                       headline_data(make_plan_for(document.inputs)))
        except PlannerError:          # the form shows why these inputs make no plan
            changes = []

        def adopt(accept: bool | None = True) -> None:
            if accept:
                self._adopt(document.inputs, Path(path).name, signed)
                self.notify(f"Opened {path}" + (f"; {signed.problem}" if signed and signed.problem
                                                else ""))
        if changes:
            made = f"saved by {(document.computed or {}).get('generated_by', 'an older version')}"
            self.app.push_screen(ChangesDialog(path, made, changes), adopt)
        else:
            adopt()
        return None

    def action_protocol(self) -> None:
        self._ask(PathRequest("Open a department protocol", "A protocol file (YAML): its "
                              "problems, or its sheet for every WHO habitus class.",
                              self._protocol_path),
                  lambda path, confirm: self._open_protocol(path), must_exist=True)

    def _open_protocol(self, path: str) -> str | None:
        from planner.tui.screens.protocol import ProtocolScreen
        target = user_path(path)
        if target.is_dir():
            raise InputError(f"{path}: is a folder, not a protocol file")
        if not target.exists():
            raise InputError(f"{path}: no such file")
        self._protocol_path = path
        self.app.push_screen(ProtocolScreen(target))
        return None

    def action_export(self) -> None:
        inputs = self._ready_inputs("export")
        if inputs is not None:
            plan = self.plan
            self._ask(PathRequest("Export a report", "Markdown (.md) or HTML (.html).",
                                  f"plan-{inputs.target_id}.md"),
                      lambda path, confirm: self._export(path, plan, inputs, confirm))

    def _export(self, path: str, plan, inputs: PlanInputs, overwrite: bool) -> str | None:
        from planner.tui.exporting import format_for, report_text
        from planner.yamlio import atomic_write_text
        from planner.tui.signoff import state_for
        text = report_text(plan, inputs, format_for(path), state_for(self.signed, inputs))
        atomic_write_text(user_path(path), text, overwrite=overwrite)
        self.notify(f"Exported {path}")
        return None

    def _ask(self, request: PathRequest, act, *, must_exist: bool = False) -> None:
        """Ask for a path and run ``act(path, overwrite)``; on a problem, ask again showing it."""
        def done(path: str | None) -> None:
            if not path:
                return
            try:
                target = user_path(path)      # ~ expanded; ~nosuchuser, long names refused
                confirm = request.confirm and path == request.path
                if not must_exist and target.is_file() and not confirm:
                    self._ask(PathRequest(request.title, request.hint, path,
                                          (f"{path} exists: press Enter again to replace it",),
                                          confirm=True), act, must_exist=must_exist)
                    return
                act(path, confirm)
            except DataError as exc:
                self._retry(request, path, tuple(exc.problems), act, must_exist)
            except (PlannerError, ValueError, OSError) as exc:
                self._retry(request, path, (getattr(exc, "message", None) or str(exc),), act,
                            must_exist)
            except Exception as exc:  # noqa: BLE001 - never crash on a file action
                self._retry(request, path, (f"unexpected error: {type(exc).__name__}: {exc}",),
                            act, must_exist)
        self.app.push_screen(PathDialog(request), done)

    def _retry(self, request: PathRequest, path: str, problems: tuple[str, ...], act,
               must_exist: bool) -> None:
        self._ask(PathRequest(request.title, request.hint, path, problems), act,
                  must_exist=must_exist)
