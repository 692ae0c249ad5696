"""The one-line strip on top: what is planned, where it came from, whether it is a draft."""

from __future__ import annotations

from textual.markup import escape
from textual.widgets import Static


def masthead_markup(target_name: str, source: str, edited: bool, draft: bool) -> str:
    """The masthead text: name of the tool, target, the plan's origin and the draft mark."""
    parts = [f"[b]scanplan[/b] · {escape(target_name)}"]
    if source:
        parts.append(f"[bold $warning]{escape(source)}[/]" + (" (edited)" if edited else ""))
    if draft:
        parts.append("[bold reverse] DRAFT [/] for supervisor review")
    return "  │  ".join(parts)


class Masthead(Static):
    """Shows :func:`masthead_markup`."""

    def show(self, target_name: str, source: str, edited: bool, draft: bool) -> None:
        """Update the strip (one line: no layout pass needed)."""
        markup = masthead_markup(target_name, source, edited, draft)
        if markup != getattr(self, "_shown", None):
            self._shown = markup
            self.update(markup, layout=False)
