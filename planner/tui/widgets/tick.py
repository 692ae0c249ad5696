"""A check box whose state is a glyph, not only a colour (readable under NO_COLOR)."""

from __future__ import annotations

from textual.widgets import Checkbox


class Tick(Checkbox):
    """Shows ✓ when on and a blank when off."""

    # Textual reads BUTTON_INNER as a class attribute; a property makes it follow the value.
    @property
    def BUTTON_INNER(self) -> str:  # type: ignore[override]  # noqa: N802
        return "✓" if self.value else " "
