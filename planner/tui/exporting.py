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


def report_text(plan, inputs: PlanInputs, fmt: str) -> str:
    """Render ``plan`` as ``md`` or ``html``; a supervised draft carries its sign-off fields."""
    from planner.report.document import plan_html, plan_markdown
    signoff = inputs.signoff.as_report_fields() if inputs.draft else None
    if fmt == "md":
        return plan_markdown(plan, signoff)
    if fmt == "html":
        return plan_html(plan, signoff)
    raise ValueError(f"fmt must be 'md' or 'html', got {fmt!r}")
