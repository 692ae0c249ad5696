"""Renderers of plans: text, JSON, Markdown, HTML (no user-interface imports)."""

from __future__ import annotations

import json

from planner.engine.model import Plan

from planner.report.text import plan_text


def render_plan(plan: Plan, fmt: str = "text", signoff: dict[str, str] | None = None) -> str:
    """Render a Plan as ``text``, ``json``, ``md`` or ``html`` (sign-off fields for drafts)."""
    if fmt == "json":
        from planner.engine.serialize import plan_to_json_data
        return json.dumps(plan_to_json_data(plan), sort_keys=True, indent=2, allow_nan=False) + "\n"
    if fmt == "text":
        return plan_text(plan)
    if fmt in ("md", "html"):
        from planner.report.document import plan_html, plan_markdown
        return plan_markdown(plan, signoff) if fmt == "md" else plan_html(plan, signoff)
    raise ValueError(f"format must be one of text, json, md, html, got {fmt!r}")
