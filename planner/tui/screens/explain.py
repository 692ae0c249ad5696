"""The explanation of one finding: its numbers, the formula in words, the full sources."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.markup import escape
from textual.widgets import Static

from planner.findings import Finding
from planner.tui.format import severity_tag, value_rows
from planner.tui.screens.closing import OnceModal

NO_FORMULA = ("No formula: this item states published guidance or common practice; the "
              "sources below say where it comes from.")


def source_lines(keys: list[str]) -> list[str]:
    """``[Key] full citation`` for each distinct key, in order."""
    from planner.references import REFERENCES
    lines = []
    for key in dict.fromkeys(keys):
        citation = REFERENCES.get(key)
        shown = escape(citation) if citation else "[i](not in the bibliography)[/i]"
        lines.append(f"  [b]\\[{escape(key)}][/b] {shown}")
    return lines


def explanation_markup(finding: Finding) -> str:
    """Everything a student and a supervisor need to check one finding."""
    parts = [f"{severity_tag(finding.severity)} [b]{escape(finding.title)}[/b]"
             f"  [$text-muted]{escape(finding.code)}[/]",
             "", escape(finding.message), ""]
    rows = value_rows(dict(finding.values))
    parts.append("[b]The numbers[/b]")
    if rows:
        width = min(max(len(label) for label, _ in rows), 28)
        parts += [f"  {escape(label):<{width}}  {escape(value)}" for label, value in rows]
    else:
        parts.append("  (none: this item has no computed values)")
    parts += ["", "[b]How it is worked out[/b]",
              "  " + escape(finding.explanation or NO_FORMULA), "", "[b]Sources[/b]"]
    parts += source_lines(list(finding.sources)) or ["  (none given)"]
    parts += ["", "[$text-muted]Decision support: defers to local protocols and licensed "
                  "practice.[/]"]
    return "\n".join(parts)


class ExplainScreen(OnceModal[None]):
    """A modal with :func:`explanation_markup`; Escape or Enter closes it."""

    # A scrollbar that appears and disappears as the width changes would make an auto-height
    # scroll area re-lay itself out forever at tiny sizes (a 1x1 terminal): keep its gutter.
    DEFAULT_CSS = "#explain-scroll { scrollbar-gutter: stable; }"

    BINDINGS = [Binding("escape,enter", "close", "Close", show=True)]

    def __init__(self, finding: Finding) -> None:
        super().__init__()
        self.finding = finding

    def compose(self) -> ComposeResult:
        with Vertical(id="explain-box", classes="modal-box"):
            yield Static("Why this finding", classes="modal-title")
            with VerticalScroll(id="explain-scroll"):
                yield Static(explanation_markup(self.finding), id="explain-text")
            yield Static("Esc or Enter closes · ↑↓ scroll", classes="hint")

    def on_mount(self) -> None:
        self.query_one("#explain-scroll").focus()

    def action_close(self) -> None:
        self.close_once(None)
