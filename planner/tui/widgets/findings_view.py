"""Findings as a list, most severe first; Enter opens the explanation of one."""

from __future__ import annotations

from textual.binding import Binding
from textual.widgets import OptionList
from textual.widgets.option_list import Option

from collections.abc import Sequence

from planner.findings import SEVERITIES, Finding
from planner.tui.format import finding_markup
from planner.tui.messages import FindingOpened


def by_severity(findings: Sequence[Finding]) -> list[Finding]:
    """Main items before the "more" ones, each most severe first, keeping the engine's order
    within a severity."""
    rank = {s: i for i, s in enumerate(SEVERITIES)}
    return sorted(findings, key=lambda f: (f.relevance != "main", -rank.get(f.severity, 0)))


MORE_HEADER = "[b $text-muted]More[/] [$text-muted]· constant on most plans, or too small to change this exam[/]"


class FindingList(OptionList):
    """One option per finding; Enter (or a click) posts :class:`FindingOpened`."""

    BINDINGS = [Binding("enter", "select", "Explain", show=True)]

    def __init__(self, *, id: str) -> None:
        super().__init__(id=id)
        self.findings: list[Finding] = []

    def set_findings(self, findings: Sequence[Finding]) -> None:
        """Show ``findings`` of a plan, keeping the highlighted one when it remains."""
        old = self.highlighted
        self.findings = by_severity(findings)
        self.clear_options()
        options: list[Option | None] = []
        for index, finding in enumerate(self.findings):
            first_more = finding.relevance != "main" and (
                index == 0 or self.findings[index - 1].relevance == "main")
            if index:
                options.append(None)
            if first_more:
                options += [Option(MORE_HEADER, disabled=True), None]
            options.append(Option(finding_markup(finding), id=f"f{index}"))
        self.add_options(options)
        if self.findings:
            self.highlighted = min(old or 0, self.option_count - 1)

    def highlighted_finding(self) -> Finding | None:
        """The finding under the cursor, if any."""
        if self.highlighted is None:
            return None
        option = self.get_option_at_index(self.highlighted)
        return self.findings[int(option.id[1:])] if option.id else None

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        if event.option.id:
            self.post_message(FindingOpened(self.findings[int(event.option.id[1:])]))
