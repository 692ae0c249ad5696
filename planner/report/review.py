"""The draft's review block: the student's decisions against the plan, the signature
status, and the stamp (tool version and generation time) at the foot of every document.

:func:`draft_review` gathers what a supervised draft prints besides the plan; the text,
Markdown and HTML renderers call :func:`review_text`, :func:`review_markdown` and
:func:`review_html`. The supervisor's name, date and comment are printed only from a
verified signature (:class:`planner.signing.Verification`), never from the student's form.
"""

from __future__ import annotations

from html import escape
from typing import Any

from planner.choices import ChoiceRow, StudentChoices, compare_choices
from planner.records import record

__all__ = ["DraftReview", "draft_review", "review_html", "review_markdown", "review_text"]

COLUMNS = ("Decision", "Tool", "Student", "Verdict")


@record(slots=False)
class DraftReview:
    """What a draft prints besides the plan: comparison rows and the signature's status."""

    rows: tuple[ChoiceRow, ...]
    signature: str
    verified: bool = False


def draft_review(plan, choices: StudentChoices | None, verification: Any = None
                 ) -> DraftReview:
    """The review of a draft: ``choices`` compared with ``plan``; ``verification`` is a
    :class:`planner.signing.Verification` (None: not signed)."""
    rows = compare_choices(plan, choices if choices is not None else StudentChoices())
    if verification is None:
        return DraftReview(rows, "not signed")
    return DraftReview(rows, verification.line(), bool(verification.ok))


def signed_fields(signoff: dict[str, str] | None, verification: Any) -> dict[str, str]:
    """The sign-off fields to print: the student's own, and the supervisor's only from a
    signature whose content is unchanged (``valid`` or ``unchecked``)."""
    out = {k: v for k, v in (signoff or {}).items()
           if k in ("Student", "Student's reflection")}
    if verification is not None and verification.status in ("valid", "unchecked"):
        out.update({"Supervisor": verification.name, "Date": verification.signed_at,
                    "Supervisor's comments": verification.comment})
    out["Signature"] = verification.line() if verification is not None else "not signed"
    return out


def review_text(review: DraftReview) -> list[str]:
    """The review as plain-text lines."""
    rows = [COLUMNS] + [(r.item, r.tool, r.student, r.verdict) for r in review.rows]
    widths = [min(max(len(row[i]) for row in rows), 40) for i in range(3)]

    def cut(text: str, width: int) -> str:
        return text if len(text) <= width else text[:width - 3] + "..."
    lines = ["", "Student's decisions against the plan:"]
    lines += ["  " + "  ".join(cut(c, w).ljust(w) for c, w in zip(row[:3], widths)) + "  " + row[3]
              for row in rows]
    lines += ["", f"Sign-off: {review.signature}"]
    return lines


def _md(text: str) -> str:
    return text.replace("|", "\\|")


def review_markdown(review: DraftReview) -> list[str]:
    """The review as Markdown lines."""
    out = ["## Student's decisions against the plan", "", "| " + " | ".join(COLUMNS) + " |",
           "|---|---|---|---|"]
    out += [f"| {_md(r.item)} | {_md(r.tool)} | {_md(r.student)} | {r.verdict} |"
            for r in review.rows]
    return out + ["", f"**Signature:** {review.signature}", ""]


def review_html(review: DraftReview) -> str:
    """The review as an HTML fragment."""
    e = escape
    head = "".join(f"<th>{c}</th>" for c in COLUMNS)
    rows = "".join(f"<tr><td>{e(r.item)}</td><td>{e(r.tool)}</td><td>{e(r.student)}</td>"
                   f"<td class='verdict-{r.verdict.replace(' ', '-')}'>{e(r.verdict)}</td></tr>"
                   for r in review.rows)
    return (f"<h2>Student's decisions against the plan</h2><table><tr>{head}</tr>{rows}</table>"
            f"<p><b>Signature:</b> {e(review.signature)}</p>")
