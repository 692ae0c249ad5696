"""Renderers of plans: text, JSON, Markdown, HTML (no user-interface imports)."""

from __future__ import annotations

import json

from planner.report.text import plan_text


def render_plan(plan, fmt: str = "text", signoff: dict | None = None) -> str:
    """Render a Plan as ``text``, ``json``, ``md`` or ``html`` (sign-off fields for drafts)."""
    if fmt == "json":
        return json.dumps(plan.to_dict(), sort_keys=True, indent=2, allow_nan=False) + "\n"
    if fmt == "text":
        return plan_text(plan)
    if fmt in ("md", "html"):
        from planner.report.document import plan_html, plan_markdown
        return plan_markdown(plan, signoff) if fmt == "md" else plan_html(plan, signoff)
    raise ValueError(f"format must be one of text, json, md, html, got {fmt!r}")
