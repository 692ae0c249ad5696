"""Escaping text for Textual content markup, without importing Textual.

:func:`escape` is the same rule as :func:`textual.markup.escape` (Textual 8): a square
bracket that would open a tag (``[`` followed by a lower-case letter, ``#``, ``/`` or ``@``,
up to the next ``]``) gets a backslash, backslashes before it are doubled, and a lone
trailing backslash is doubled. It lives here so that the text of a plan can be written by a
process that never loads Textual (:mod:`planner.tui.first_plan`); a test checks it against
Textual's own function.
"""

from __future__ import annotations

import re

__all__ = ["escape"]

_TAG = re.compile(r"(\\*)(\[[a-z#/@][^[]*?])")


def _escaped(match: re.Match[str]) -> str:
    backslashes, text = match.groups()
    return f"{backslashes}{backslashes}\\{text}"


def escape(markup: str) -> str:
    """``markup`` with every would-be tag escaped, so that it shows as written."""
    markup = _TAG.sub(_escaped, markup)
    if markup.endswith("\\") and not markup.endswith("\\\\"):
        return markup + "\\"
    return markup
