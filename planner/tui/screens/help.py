"""The help screen: keys and how the planner works."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.widgets import Static

from planner.tui.screens.closing import OnceModal

KEYS: tuple[tuple[str, str], ...] = (
    ("Tab / Shift+Tab", "next / previous field"),
    ("Ctrl+T", "jump to the target filter (type, then Enter picks)"),
    ("F2 … F6", "Plan, Findings, Safety, Depth profile, Doppler"),
    ("Enter", "in Findings or Safety: explain the highlighted item"),
    ("Esc", "back from a view to the inputs; closes a dialog"),
    ("Ctrl+S / Ctrl+O", "save / open a plan file (inputs and the plan as computed)"),
    ("Ctrl+R", "export a report (.md or .html)"),
    ("Ctrl+G", "supervised draft: your own decisions, from the first field (Tab for the next)"),
    ("Ctrl+N", "new plan (clear the inputs)"),
    ("F7", "a department protocol: its problems or its sheet"),
    ("F9", "light or dark theme"),
    ("Ctrl+P", "command palette"),
    ("F1", "this help"),
    ("Ctrl+Q", "quit (asks first when there are unsaved edits)"),
)
"""Key, what it does."""

ABOUT = (
    "Type the patient's BMI (or height and weight), any measured wall thickness or target "
    "depth, the conditions (name:grade, comma-separated), pick a target and, if you like, a "
    "window and the exam context. The plan is recomputed on every change; a field the "
    "engine cannot use is marked in red with the reason, and the views keep the last valid "
    "plan until it is fixed.\n\n"
    "The plan is decision support. It defers to local protocols, licensed practice and the "
    "TI and MI the scanner displays; it never makes a diagnosis. Every finding names its "
    "sources; open it for the numbers and the formula in words.\n\n"
    "In a supervised draft, write your own decisions before you read the plan; the export "
    "sets them beside the plan. Only a supervisor's signature (scanplan draft sign) fills "
    "the supervisor's fields; with SCANPLAN_TRUSTED_KEYS naming the department's trusted-"
    "keys file, the signer is checked too.")


class HelpScreen(OnceModal[None]):
    """Keys and a short description; Escape closes it."""

    # A scrollbar that appears and disappears as the width changes would make an auto-height
    # scroll area re-lay itself out forever at tiny sizes (a 1x1 terminal): keep its gutter.
    DEFAULT_CSS = "#help-scroll { scrollbar-gutter: stable; }"

    BINDINGS = [Binding("escape,f1,enter", "close", "Close", show=True)]

    def compose(self) -> ComposeResult:
        width = max(len(k) for k, _ in KEYS)
        keys = "\n".join(f"[b]{key:<{width}}[/b]  {what}" for key, what in KEYS)
        with Vertical(id="help-box", classes="modal-box"):
            yield Static("scanplan: keys and use", classes="modal-title")
            with VerticalScroll(id="help-scroll"):
                yield Static(keys, id="help-keys")
                yield Static(ABOUT, id="help-about")
            yield Static("Esc closes", classes="hint")

    def on_mount(self) -> None:
        self.query_one("#help-scroll").focus()

    def action_close(self) -> None:
        self.close_once(None)
