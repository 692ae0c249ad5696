"""Choose the target: type to filter the library, Enter to take the highlighted one."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.markup import escape
from textual.widgets import Input, OptionList, Static
from textual.widgets.option_list import Option

from planner.tui.messages import TargetPicked


def matches(query: str, *texts: str) -> bool:
    """True when every word of ``query`` occurs in one of ``texts`` (case-insensitive)."""
    haystack = " ".join(texts).lower().replace("-", " ")
    return all(word in haystack for word in query.lower().replace("-", " ").split())


def region_label(region: str) -> str:
    """A region id as a reader sees it (``small_parts`` -> ``small parts``)."""
    return region.replace("_", " ")


class TargetFilter(Input):
    """The filter line; Down moves into the list."""

    BINDINGS = [Binding("down", "into_list", "Targets", show=False)]

    def action_into_list(self) -> None:
        self.screen.query_one("#target-list", OptionList).focus()


class TargetPicker(Vertical):
    """A filter line, the matching targets and the target chosen.

    The list is empty until :meth:`set_targets` gives the library (it loads after the
    first paint).
    """

    def __init__(self, chosen_id: str, chosen_name: str = "") -> None:
        super().__init__(id="target-picker")
        self.targets: list[tuple[str, str, str]] = []
        self.chosen_id = chosen_id
        self._chosen_name = chosen_name or chosen_id

    def compose(self) -> ComposeResult:
        yield TargetFilter(placeholder="type to filter, Enter picks", id="target-filter",
                           compact=True)
        yield OptionList(id="target-list", compact=True)
        yield Static(self._chosen_markup(), id="target-chosen")

    def _chosen_markup(self) -> str:
        return f"[$text-muted]Chosen:[/] [b]{escape(self._chosen_name)}[/b]"

    def set_targets(self, targets: list[tuple[str, str, str]]) -> None:
        """Give the library as ``(id, name, region)`` rows, in library order."""
        self.targets = list(targets)
        names = {t[0]: t[1] for t in self.targets}
        self._chosen_name = names.get(self.chosen_id, self.chosen_id)
        self.query_one("#target-chosen", Static).update(self._chosen_markup())
        self.refilter()

    def refilter(self) -> None:
        """Show the targets that match the filter text."""
        query = self.query_one("#target-filter", Input).value
        shown = [t for t in self.targets if matches(query, *t)]
        options = self.query_one("#target-list", OptionList)
        options.clear_options()
        options.add_options([Option(f"{escape(name)} [$text-muted]{escape(region_label(region))}[/]",
                                    id=tid) for tid, name, region in shown])
        ids = [t[0] for t in shown]
        if ids:
            options.highlighted = ids.index(self.chosen_id) if self.chosen_id in ids else 0

    def choose(self, target_id: str, *, announce: bool = True) -> None:
        """Make ``target_id`` the chosen target (posts TargetPicked when ``announce``)."""
        names = {t[0]: t[1] for t in self.targets}
        self.chosen_id = target_id
        self._chosen_name = names.get(target_id, target_id)
        self.query_one("#target-chosen", Static).update(self._chosen_markup())
        if announce:
            self.post_message(TargetPicked(target_id))

    @on(Input.Changed, "#target-filter")
    def _filter_changed(self, event: Input.Changed) -> None:
        event.stop()
        self.refilter()

    @on(Input.Submitted, "#target-filter")
    def _filter_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        options = self.query_one("#target-list", OptionList)
        if options.option_count:
            index = options.highlighted if options.highlighted is not None else 0
            option_id = options.get_option_at_index(index).id
            if option_id:
                self.choose(option_id)

    @on(OptionList.OptionSelected, "#target-list")
    def _option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        if event.option.id:
            self.choose(event.option.id)
