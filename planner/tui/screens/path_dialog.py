"""Ask for a file name (save, open, export), showing any problem with the last attempt."""

from __future__ import annotations


from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.markup import escape
from textual.widgets import Input, Static

from planner.records import record
from planner.tui.screens.closing import OnceModal


@record(slots=False)
class PathRequest:
    """What the dialog asks: a title, a hint, the proposed path, and a problem to show."""

    title: str
    hint: str
    path: str
    problems: tuple[str, ...] = ()
    confirm: bool = False


class PathDialog(OnceModal[str | None]):
    """Returns the path typed (Enter) or None (Escape)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", show=True)]

    def __init__(self, request: PathRequest) -> None:
        super().__init__()
        self.request = request

    def compose(self) -> ComposeResult:
        r = self.request
        with Vertical(id="path-box", classes="modal-box"):
            yield Static(r.title, classes="modal-title")
            yield Static(escape(r.hint), classes="hint")
            yield Input(value=r.path, id="path-input")
            if r.problems:
                with VerticalScroll(id="path-problems"):
                    yield Static("\n".join(f"✗ {escape(p)}" for p in r.problems),
                                 classes="field-error")
            yield Static("Enter " + ("confirms" if r.confirm else "accepts") + " · Esc cancels",
                         classes="hint")

    def on_mount(self) -> None:
        self.query_one("#path-input", Input).focus()

    @on(Input.Submitted, "#path-input")
    def _submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.close_once(event.value.strip() or None)

    def action_cancel(self) -> None:
        self.close_once(None)
