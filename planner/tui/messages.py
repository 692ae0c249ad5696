"""Messages the terminal UI's widgets post (named for what happened)."""

from __future__ import annotations

from typing import Any

from textual.message import Message

from planner.findings import Finding


class InputsEdited(Message):
    """Any input of the plan changed (the screen reads the whole form and recomputes)."""


class TargetPicked(Message):
    """The user chose a target in the target picker."""

    def __init__(self, target_id: str) -> None:
        super().__init__()
        self.target_id = target_id


class FindingOpened(Message):
    """The user asked for the explanation of a finding."""

    def __init__(self, finding: Finding) -> None:
        super().__init__()
        self.finding = finding


class PlanComputed(Message):
    """A recompute finished (with a plan, or with problems to show)."""

    def __init__(self, outcome: Any) -> None:
        super().__init__()
        self.outcome = outcome


class EngineLoaded(Message):
    """The engine and the target library finished loading in the background."""

    def __init__(self, library: Any = None, error: str = "", first: Any = None) -> None:
        super().__init__()
        self.library = library
        self.error = error
        self.first = first
        """The outcome of the opening inputs, computed with the engine (None: compute it)."""


class FirstPlanReady(Message):
    """The start-up helper answered (``content`` None: it failed, was late or disagreed)."""

    def __init__(self, content: Any = None) -> None:
        super().__init__()
        self.content = content
        """The Plan view's text (:class:`planner.tui.plan_text.SummaryContent`) or None."""
