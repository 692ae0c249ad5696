"""Renderers of plans: text, JSON, Markdown, HTML (no user-interface imports)."""

from __future__ import annotations

import json

from planner.engine.model import Plan

from planner.report.text import plan_text


def render_plan(plan: Plan, fmt: str = "text", signoff: dict[str, str] | None = None, *,
                stamp=None, review=None) -> str:
    """Render a Plan as ``text``, ``json``, ``md`` or ``html`` (sign-off fields and the
    review, :class:`planner.report.review.DraftReview`, for drafts; every format carries
    ``stamp``, a :class:`planner.stamp.Stamp`, made now when None)."""
    from planner.stamp import current_stamp
    stamp = stamp if stamp is not None else current_stamp()
    if fmt == "json":
        from planner.engine.serialize import plan_to_json_data
        return json.dumps(plan_to_json_data(plan, stamp), sort_keys=True, indent=2,
                          allow_nan=False) + "\n"
    if fmt == "text":
        return plan_text(plan, stamp, review)
    if fmt in ("md", "html"):
        from planner.report.document import plan_html, plan_markdown
        render = plan_markdown if fmt == "md" else plan_html
        return render(plan, signoff, stamp, review)
    raise ValueError(f"format must be one of text, json, md, html, got {fmt!r}")
