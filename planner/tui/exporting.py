"""Reports written from the terminal UI: Markdown or HTML, sign-off fields filled in."""

from __future__ import annotations

from pathlib import Path

from planner.errors import InputError
from planner.planfile import PlanInputs

FORMATS: dict[str, str] = {".md": "md", ".markdown": "md", ".html": "html", ".htm": "html"}
"""File extension -> report format."""


def format_for(path: str | Path) -> str:
    """The report format for a file name; InputError names the accepted extensions."""
    name = Path(path).name
    suffix = Path(path).suffix.lower()
    if suffix not in FORMATS:
        shown = name if len(name) <= 60 else f"{name[:40]}…{name[-19:]}"
        raise InputError(f"report file must end in {', '.join(FORMATS)}, got {shown!r}")
    return FORMATS[suffix]


def report_text(plan, inputs: PlanInputs, fmt: str, verification=None) -> str:
    """Render ``plan`` as ``md`` or ``html``; a supervised draft carries the student's
    decisions against the plan, the signature's status (``verification``, a
    :class:`planner.signing.Verification`, None: not signed) and the sign-off fields (the
    supervisor's only from an unchanged signature)."""
    from planner.report.document import plan_html, plan_markdown
    from planner.report.review import draft_review, signed_fields
    signoff = review = None
    if inputs.draft:
        signoff = signed_fields(inputs.signoff.as_report_fields(), verification)
        review = draft_review(plan, inputs.choices, verification)
    if fmt == "md":
        return plan_markdown(plan, signoff, review=review)
    if fmt == "html":
        return plan_html(plan, signoff, review=review)
    raise ValueError(f"fmt must be 'md' or 'html', got {fmt!r}")
