"""The plan at a glance: the summary card, the ranked windows, tilt, layers, pitfalls."""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.content import Content
from textual.coordinate import Coordinate
from textual.widget import Widget
from textual.widgets import DataTable, Static

from planner.tui.markup import escape
from planner.tui.plan_text import SummaryContent, summary_content

if TYPE_CHECKING:  # the engine loads after the first paint
    from planner.engine.model import Plan


def _line_count(markup: str, width: int) -> int:
    return sum(max(1, len(Content.from_markup(line).wrap(width))) for line in markup.split("\n"))


def set_markup(static: Static, markup: str) -> None:
    """Update ``static`` when its markup changes; skip the layout pass when the new text
    takes as many lines as the old (the common case while typing a number)."""
    old = getattr(static, "_markup_shown", None)
    if old == markup:
        return
    setattr(static, "_markup_shown", markup)
    width = static.content_region.width
    same_height = old is not None and width > 0 and \
        _line_count(old, width) == _line_count(markup, width)
    static.update(markup, layout=not same_height)


LABEL_WIDTH: int = 9
"""Width of the card's label column, in cells (the longest label and a space)."""


class SummaryCard(Widget):
    """The summary card: one label per row and its value wrapped beside it, in one widget.

    One widget instead of a row container, a label and a value per row (31 widgets): the
    card mounts and lays out in one step, which the first plan on screen waits for.
    """

    DEFAULT_CSS = """
    SummaryCard { height: auto; }
    """

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self.rows: tuple[tuple[str, str], ...] = ()
        self._laid_out: tuple[tuple, int, list[Content]] | None = None

    def set_rows(self, rows: tuple[tuple[str, str], ...]) -> None:
        """Show ``rows`` ((label, value markup) pairs); a relayout only when the height changes."""
        if rows == self.rows:
            return
        width = self.content_region.width
        same_height = width > 0 and len(self._lines(self.rows, width)) == \
            len(self._lines(rows, width))
        self.rows = rows
        self.refresh(layout=not same_height)

    def row_text(self, index: int) -> str:
        """The plain text of row ``index``'s value (for tests and screen readers)."""
        return Content.from_markup(self.rows[index][1]).plain

    def _lines(self, rows: tuple[tuple[str, str], ...], width: int) -> list[Content]:
        """The card's lines at ``width``; the last layout is kept, as the height, the render
        and the next update all ask for the same one."""
        cached = self._laid_out
        if cached is not None and cached[0] == rows and cached[1] == width:
            return cached[2]
        lines = self._wrap(rows, width)
        self._laid_out = (rows, width, lines)
        return lines

    @staticmethod
    def _wrap(rows: tuple[tuple[str, str], ...], width: int) -> list[Content]:
        value_width = max(8, width - LABEL_WIDTH)
        indent = Content(" " * LABEL_WIDTH)
        lines: list[Content] = []
        for label, markup in rows:
            head = Content.from_markup(f"[$text-muted]{escape(label.ljust(LABEL_WIDTH))}[/]")
            for i, line in enumerate(Content.from_markup(markup).wrap(value_width) or [Content("")]):
                lines.append((head if i == 0 else indent) + line)
        return lines

    def get_content_height(self, container, viewport, width: int) -> int:
        return len(self._lines(self.rows, width))

    def render(self) -> Content:
        return Content("\n").join(self._lines(self.rows, self.content_region.width))


class PlanSummary(VerticalScroll):
    """Summary card, windows table and the guidance under them."""

    def compose(self) -> ComposeResult:
        yield Static("Working out the plan…", id="summary-message")
        yield SummaryCard(id="summary-card")
        yield Static("", id="windows-title", classes="subhead")
        table: DataTable[str] = DataTable(id="windows-table", cursor_type="row", zebra_stripes=False,
                          show_cursor=False)
        table.add_columns("#", "Window", "OK", "dB", "cm", "MHz")
        yield table
        yield Static("", id="tilt-advice")
        yield Static("", id="layers")
        yield Static("", id="pitfalls")
        yield Static("", id="assumptions")

    def show_plan(self, plan: Plan) -> None:
        """Show ``plan``."""
        self.show_content(summary_content(plan))

    def show_content(self, content: SummaryContent) -> None:
        """Show a plan's text (from this process or the start-up helper)."""
        message, card = self.query_one("#summary-message"), self.query_one("#summary-card")
        if message.display:
            message.display = False
        if not card.display:
            card.display = True
        self.query_one(SummaryCard).set_rows(content.rows)
        set_markup(self.query_one("#windows-title", Static), content.windows_title)
        rows = list(content.windows)
        table: DataTable[str] = self.query_one("#windows-table", DataTable)
        shown = getattr(table, "_rows_shown", None)
        if rows != shown:
            setattr(table, "_rows_shown", rows)
            if shown is not None and len(shown) == len(rows) and \
                    all(len(a[1]) == len(b[1]) for a, b in zip(shown, rows)):
                for y, (old_row, new_row) in enumerate(zip(shown, rows)):
                    for x, (old_cell, new_cell) in enumerate(zip(old_row, new_row)):
                        if old_cell != new_cell:
                            table.update_cell_at(Coordinate(y, x), new_cell)
            else:
                table.clear()
                for row in rows:
                    table.add_row(*row)
        set_markup(self.query_one("#tilt-advice", Static), content.tilt)
        set_markup(self.query_one("#layers", Static), content.layers)
        set_markup(self.query_one("#assumptions", Static), content.assumptions)
        set_markup(self.query_one("#pitfalls", Static), content.pitfalls)

    def on_mount(self) -> None:
        self.query_one("#summary-card").display = False

    def show_message(self, message: str) -> None:
        """Show a message instead of a plan (before the first plan, or when none can be made)."""
        self.query_one("#summary-card").display = False
        message_box = self.query_one("#summary-message", Static)
        message_box.display = True
        message_box.update(message)
