"""Two questions the planning screen asks: quit with unsaved edits (save, discard, cancel),
and open a plan file whose recomputed headline differs from the one saved (accept, cancel)."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.markup import escape
from textual.widgets import Static

from planner.tui.screens.closing import OnceModal


class QuitDialog(OnceModal[str | None]):
    """Returns ``"save"``, ``"discard"`` or None (cancel)."""

    BINDINGS = [Binding("s", "choose('save')", "Save"),
                Binding("d", "choose('discard')", "Discard"),
                Binding("escape,c", "choose('')", "Cancel")]

    def compose(self) -> ComposeResult:
        with Vertical(id="quit-box", classes="modal-box"):
            yield Static("The plan has unsaved edits", classes="modal-title")
            yield Static("S save them first · D quit without saving · Esc keep working",
                         classes="hint")

    def action_choose(self, choice: str) -> None:
        self.close_once(choice or None)


class ChangesDialog(OnceModal[bool]):
    """Lists what recomputing a saved plan changed, old beside new; Enter accepts the
    recomputed plan (True), Esc keeps the plan on screen (False)."""

    BINDINGS = [Binding("enter", "answer(True)", "Accept"),
                Binding("escape", "answer(False)", "Cancel")]

    def __init__(self, path: str, made_by: str, changes: list[tuple[str, str, str]]) -> None:
        super().__init__()
        self.path, self.made_by, self.changes = path, made_by, changes

    def compose(self) -> ComposeResult:
        width = max(len(item) for item, _, _ in self.changes)
        rows = [f"{'':<{width}}  as saved → now"] + [
            f"{escape(item):<{width}}  {escape(old)} → {escape(new)}"
            for item, old, new in self.changes]
        with Vertical(id="changes-box", classes="modal-box"):
            yield Static(f"{escape(self.path)}: the plan recomputed now differs from the one "
                         f"saved ({escape(self.made_by)})", classes="modal-title")
            yield Static("\n".join(rows), id="changes-table")
            yield Static("Enter opens it with the plan as computed now · Esc cancels",
                         classes="hint")

    def action_answer(self, accept: bool) -> None:
        self.close_once(accept)
