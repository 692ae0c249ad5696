"""One labelled input line with its inline problem underneath."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.markup import escape
from textual.widget import Widget
from textual.widgets import Label, Static


class FieldRow(Vertical):
    """A label, a control and (when there is one) the reason the value is refused.

    The row is a two-column grid (label, control) with the problem spanning both
    columns underneath; a stacked row puts the control under the label.

    Parameters
    ----------
    label : str
        Short label with the unit, e.g. ``"BMI kg/m²"``.
    control : Widget
        The input widget.
    field : str
        The input's field name (the key of the problems dict); the row's id is
        ``row-<field>``.
    stacked : bool
        Put the control under the label (for tall controls such as lists).
    """

    def __init__(self, label: str, control: Widget, *, field: str, stacked: bool = False) -> None:
        super().__init__(id=f"row-{field}", classes="field-row -stacked" if stacked else "field-row")
        self.label = label
        self.control = control
        self.field = field
        self._error = ""

    def compose(self) -> ComposeResult:
        yield Label(self.label, classes="field-label")
        yield self.control
        yield Static("", classes="field-error", markup=True)

    def set_error(self, message: str | None) -> None:
        """Show ``message`` under the field (None or empty clears it)."""
        self._error = message or ""
        error = self.query_one(".field-error", Static)
        error.update(f"✗ {escape(message)}" if message else "")
        error.display = bool(message)
        self.set_class(bool(message), "-invalid")

    @property
    def error(self) -> str:
        """The problem shown, or an empty string."""
        return self._error
