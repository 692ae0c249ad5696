"""Findings: what every rule of the engine returns.

A finding is a plain, JSON-serialisable record: a stable ``code``, a ``severity``
from :data:`SEVERITIES`, a short ``title``, a ``message`` that states the numbers,
the ``values`` behind it (units in the key names), the ``sources`` (keys of
:data:`planner.references.REFERENCES`) and an ``explanation``: the formula in words,
for the explanation view and for student drafts.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

SEVERITIES: tuple[str, ...] = ("info", "advice", "caution", "warning")
"""Severity levels, mildest first.

``info`` a fact worth knowing; ``advice`` a recommended action; ``caution`` a
limitation that degrades the exam or a safety limit to watch; ``warning`` the exam
as planned will probably fail, or a safety limit is exceeded.
"""


@dataclass(frozen=True, slots=True)
class Finding:
    """One explained result of a rule."""

    code: str
    severity: str
    title: str
    message: str
    values: dict[str, Any] = field(default_factory=dict)
    sources: tuple[str, ...] = ()
    explanation: str = ""

    def __post_init__(self) -> None:
        if self.severity not in SEVERITIES:
            raise ValueError(
                f"severity must be one of {', '.join(SEVERITIES)}, got {self.severity!r}")

    def to_dict(self) -> dict[str, Any]:
        """Return the finding as a JSON-ready dict (sources as a list)."""
        return {"code": self.code, "severity": self.severity, "title": self.title,
                "message": self.message, "values": dict(self.values),
                "sources": list(self.sources), "explanation": self.explanation}


def severity_rank(severity: str) -> int:
    """Return the position of ``severity`` in :data:`SEVERITIES` (0 = mildest)."""
    return SEVERITIES.index(severity)
