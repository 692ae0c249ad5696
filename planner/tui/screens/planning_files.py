"""The planning screen's file actions: save, open, export, the protocol dialog, quitting
with unsaved edits, and the path dialog that asks again, showing the problem, until a path
works or the user cancels. A mixin of :class:`planner.tui.screens.planning.PlanningScreen`.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from textual.screen import Screen

from planner.atomicfile import user_path
from planner.errors import DataError, InputError, PlannerError
from planner.planfile import PlanInputs
from planner.tui.screens.path_dialog import PathDialog, PathRequest


class FileActions(Screen):
    """Save, Open, Export, Protocol and Quit of the planning screen (the base of
    :class:`~planner.tui.screens.planning.PlanningScreen`, whose state it uses)."""

    engine_ready: bool
    outcome: Any
    plan: Any
    baseline: PlanInputs
    source: str
    signed: Any
    _protocol_path: str
    mounting_form: bool
    quit_pending: bool
    closing: bool

    @property
    def dirty(self) -> bool:  # defined by the planning screen
        raise NotImplementedError

    def _update_masthead(self, inputs: PlanInputs) -> None:
        raise NotImplementedError

    def _adopt(self, inputs: PlanInputs, source: str, signed: Any = None) -> None:
        raise NotImplementedError

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
        if self.mounting_form:
            self.quit_pending = True        # the form mounts, then the app quits
            return
        if not self.dirty:
            self.closing = True             # a form mount still scheduled will not start
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
