"""Findings: what every rule of the engine returns.

A finding is a plain, JSON-serialisable record: a stable ``code``, a ``severity``
from :data:`SEVERITIES`, a short ``title``, a ``message`` that states the numbers,
the ``values`` behind it (units in the key names), the ``sources`` (keys of
:data:`planner.references.REFERENCES`) and an ``explanation``: the formula in words,
for the explanation view and for student drafts.
"""

from __future__ import annotations

from dataclasses import field
from collections.abc import Callable, Sequence
from typing import Any, Generic, TypeVar

from planner.records import record

RELEVANCES: tuple[str, ...] = ("main", "more")
"""``main``: changes how this exam is done; ``more``: true but constant across plans or too
small to change the exam (regulatory ceilings, the scan-time table without an expected TI,
a sub-millimetre depth error); shown in a compact section after the main items."""

SEVERITIES: tuple[str, ...] = ("info", "advice", "caution", "warning")
"""Severity levels, mildest first.

``info`` a fact worth knowing; ``advice`` a recommended action; ``caution`` a
limitation that degrades the exam or a safety limit to watch; ``warning`` the exam
as planned will probably fail, or a safety limit is exceeded.
"""


@record
class Finding:
    """One explained result of a rule."""

    code: str
    severity: str
    title: str
    message: str
    values: dict[str, Any] = field(default_factory=dict)
    sources: tuple[str, ...] = ()
    explanation: str = ""
    relevance: str = "main"

    def __post_init__(self) -> None:
        if self.severity not in SEVERITIES:
            raise ValueError(
                f"severity must be one of {', '.join(SEVERITIES)}, got {self.severity!r}")
        if self.relevance not in RELEVANCES:
            raise ValueError(
                f"relevance must be one of {', '.join(RELEVANCES)}, got {self.relevance!r}")

    def to_dict(self) -> dict[str, Any]:
        """Return the finding as a JSON-ready dict (sources as a list)."""
        return {"code": self.code, "severity": self.severity, "title": self.title,
                "message": self.message, "values": dict(self.values),
                "sources": list(self.sources), "explanation": self.explanation,
                "relevance": self.relevance}


def severity_rank(severity: str) -> int:
    """Return the position of ``severity`` in :data:`SEVERITIES` (0 = mildest)."""
    return SEVERITIES.index(severity)


C = TypeVar("C")


def always(ctx: object) -> bool:
    """Scope of a rule that applies to every context."""
    return True


@record
class Rule(Generic[C]):
    """One registered rule: ``run(ctx) -> findings`` when ``applies(ctx)``.

    ``id`` is stable and unique (``area.name``); ``area`` groups rules (habitus, band,
    harmonic, tilt, artefact, shadow, window, condition, plan, doppler, safety); ``scope`` says
    in words what the rule applies to and ``applies`` decides it for a context.
    """

    id: str
    area: str
    scope: str
    run: Callable[[C], Sequence[Finding]]
    applies: Callable[[C], bool] = always


class RuleRegistry(Generic[C]):
    """An ordered set of rules sharing one context type; :meth:`run` returns their findings."""

    def __init__(self, name: str) -> None:
        self.name = name
        self._rules: list[Rule[C]] = []

    def register(self, rule_id: str, area: str, scope: str,
                 applies: Callable[[C], bool] = always
                 ) -> Callable[[Callable[[C], Sequence[Finding]]], Callable[[C], Sequence[Finding]]]:
        """Decorator: register a rule function under ``rule_id`` (registration order is run order)."""
        def add(fn: Callable[[C], Sequence[Finding]]) -> Callable[[C], Sequence[Finding]]:
            self.add(Rule(rule_id, area, scope, fn, applies))
            return fn
        return add

    def add(self, rule: Rule[C]) -> None:
        """Append ``rule``; its id must be new."""
        if any(r.id == rule.id for r in self._rules):
            raise ValueError(f"rule id {rule.id!r} is already registered in {self.name}")
        self._rules.append(rule)

    @property
    def rules(self) -> tuple[Rule[C], ...]:
        """The registered rules in run order."""
        return tuple(self._rules)

    def run(self, ctx: C) -> list[Finding]:
        """Findings of every rule that applies to ``ctx``, in registration order."""
        out: list[Finding] = []
        for rule in self._rules:
            if rule.applies is always or rule.applies(ctx):
                out.extend(rule.run(ctx))
        return out
