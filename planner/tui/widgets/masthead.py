"""The one-line strip on top: what is planned, where it came from, whether it is a draft."""

from __future__ import annotations

from textual.markup import escape
from textual.widgets import Static


def masthead_markup(target_name: str, source: str, edited: bool, draft: bool,
                    signature: str = "") -> str:
    """The masthead text: the tool, the draft mark, where the plan came from, the target
    (most important first, as a narrow terminal cuts the end)."""
    parts = ["[b]scanplan[/b]"]
    if draft:
        parts.append("[bold reverse] DRAFT [/] for supervisor review")
    if source:
        parts.append(f"[bold $warning]{escape(source)}[/]" + (" (edited)" if edited else ""))
    if signature:
        parts.append(escape(signature))
    parts.append(escape(target_name))
    return " │ ".join(parts)


class Masthead(Static):
    """Shows :func:`masthead_markup`."""

    def show(self, target_name: str, source: str, edited: bool, draft: bool,
             signature: str = "") -> None:
        """Update the strip (one line: no layout pass needed)."""
        markup = masthead_markup(target_name, source, edited, draft, signature)
        if markup != getattr(self, "_shown", None):
            self._shown = markup
            self.update(markup, layout=False)
