"""A one-line form input that does not re-lay-out the whole screen on every keystroke."""

from __future__ import annotations

from textual.geometry import Size
from textual.widget import Widget
from textual.widgets import Input


class FormInput(Input):
    """An :class:`~textual.widgets.Input` of fixed size.

    Textual's Input stores the width of its text as its virtual size, a reactive that asks for
    a layout of the whole screen whenever it changes, i.e. on every keystroke. A form field has
    a fixed width and height, so nothing around it moves: the new virtual size is stored
    without the layout pass (horizontal scrolling reads it directly) and only the field is
    repainted.
    """

    def _watch_value(self, value: str) -> None:
        # Store the new virtual size first, so Input's own assignment finds it unchanged and
        # requests no layout; everything else (validation, Changed, cursor) stays Input's.
        self.set_reactive(Widget.virtual_size, Size(self.content_width, 1))
        super()._watch_value(value)
        self.refresh()
