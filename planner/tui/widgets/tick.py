"""A check box whose state is a glyph, not only a colour (readable under NO_COLOR)."""

from __future__ import annotations

from textual.widgets import Checkbox


class Tick(Checkbox):
    """Shows ✓ when on and a blank when off."""

    @property
    def BUTTON_INNER(self) -> str:  # noqa: N802 - the name Textual's toggle button reads
        return "✓" if self.value else " "
