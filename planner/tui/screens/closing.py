"""A modal screen that closes once, however fast the keys arrive."""

from __future__ import annotations

from typing import Generic, TypeVar

from textual.screen import ModalScreen

ResultType = TypeVar("ResultType")


class OnceModal(ModalScreen[ResultType], Generic[ResultType]):
    """Modal screen whose close is idempotent.

    Two closing keys that arrive before the first close has taken effect (a fast typist, a
    pasted burst) would otherwise pop the screen under it as well, or pop an empty stack.
    """

    _close_requested = False

    def close_once(self, result: ResultType | None = None) -> None:
        """Dismiss with ``result`` the first time; later calls do nothing."""
        if self._close_requested or not self.is_current:
            return
        self._close_requested = True
        self.dismiss(result)
