"""Guards around two Textual 8.2.8 behaviours that end the app, found by fuzzing the UI.

1. ``OptionList._move_page`` (PageUp/PageDown in any option list, the command palette's
   included) looks up the highlighted option's first line in a table that is empty when
   the list has no room to lay its options out (a 1x1 terminal): ``KeyError: 0``. The
   guard moves the highlight by one option instead, which is what a page is when the page
   holds at most one line.
2. The command palette selects and dismisses itself once per Enter; two Enters that arrive
   before the first dismissal has taken effect dismiss it twice, and the second pops the
   screen below (or an empty stack: ``ScreenStackError``) and runs the command twice. The
   guard ignores a selection once the palette is no longer the current screen, as
   :class:`planner.tui.screens.closing.OnceModal` does for the project's own dialogs.

:func:`install` patches both, once, when the planning screen is imported (see
:mod:`planner.tui.screens.planning`); each changes nothing in the ordinary case.
"""

from __future__ import annotations

from typing import Any

from textual.command import CommandPalette
from textual.widgets import OptionList

__all__ = ["install"]

_ORIGINAL: Any = getattr(OptionList, "_move_page", None)
_ORIGINAL_SELECT: Any = CommandPalette.__dict__.get("_select_or_command")


def _move_page_guarded(self: OptionList, direction: int) -> None:
    if self._options and (self.highlighted or 0) not in self._index_to_line:
        (self.action_cursor_down if direction > 0 else self.action_cursor_up)()
        return
    _ORIGINAL(self, direction)


def _select_or_command_once(self: CommandPalette, event=None) -> None:
    if not self.is_current:
        if event is not None:
            event.stop()
        return
    _ORIGINAL_SELECT(self, event)


def install() -> bool:
    """Install both guards (idempotent); False when this Textual lacks either method."""
    if _ORIGINAL is None or _ORIGINAL_SELECT is None:
        return False
    setattr(OptionList, "_move_page", _move_page_guarded)
    setattr(CommandPalette, "_select_or_command", _select_or_command_once)
    # Textual dispatches @on handlers from a per-class table filled at class creation.
    for handlers in CommandPalette.__dict__.get("_decorated_handlers", {}).values():
        for index, (method, selectors) in enumerate(handlers):
            if method is _ORIGINAL_SELECT:
                handlers[index] = (_select_or_command_once, selectors)
    return True
