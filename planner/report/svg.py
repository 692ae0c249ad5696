"""A small inline SVG of round-trip loss against depth (for HTML plans and protocol sheets)."""

from __future__ import annotations

from html import escape

from planner.engine.model import Plan
from planner.report.profile import plan_loss_profile

COLOURS = ("#1f5f8b", "#b5531d", "#3d7d3a")
"""Stroke colours of the frequency curves (chosen for contrast in print)."""


def depth_plot_svg(plan: Plan, width: int = 360, height: int = 190) -> str:
    """SVG: loss (dB, downwards) against depth (cm, across), budget line and target depth marked."""
    prof = plan_loss_profile(plan, points=60)         # the curves the UI's depth view draws
    left, right, top, bottom = 42, 10, 12, 30
    w, h = width - left - right, height - top - bottom
    max_depth = max(prof.depth_cm[-1] * 1.1, 1.0)
    max_loss = max(plan.budget_db * 1.25, max(max(c) for c in prof.loss_db))

    def x(d):
        return left + w * d / max_depth

    def y(loss):
        return top + h * min(loss, max_loss) / max_loss

    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
             f'viewBox="0 0 {width} {height}" role="img" aria-label="Round-trip loss against depth">',
             f'<rect x="{left}" y="{top}" width="{w}" height="{h}" fill="none" stroke="#888"/>']
    for k, freq in enumerate(prof.frequencies_mhz):
        pts = " ".join(f"{x(d):.1f},{y(l):.1f}" for d, l in zip(prof.depth_cm, prof.loss_db[k]))
        colour = COLOURS[k % len(COLOURS)]
        parts.append(f'<polyline fill="none" stroke="{colour}" stroke-width="1.6" points="{pts}"/>')
        parts.append(f'<text x="{left + 6}" y="{top + h - 6 - 11 * (len(prof.frequencies_mhz) - 1 - k)}" font-size="10" fill="{colour}">'
                     f'{freq:g} MHz</text>')
    yb = y(plan.budget_db)
    parts.append(f'<line x1="{left}" y1="{yb:.1f}" x2="{left + w}" y2="{yb:.1f}" stroke="#c00" '
                 f'stroke-dasharray="4 3"/><text x="{left + w - 4}" y="{yb - 3:.1f}" font-size="10" '
                 f'text-anchor="end" fill="#c00">budget {plan.budget_db:g} dB</text>')
    xt = x(prof.target_depth_cm)
    parts.append(f'<line x1="{xt:.1f}" y1="{top}" x2="{xt:.1f}" y2="{top + h}" stroke="#555" '
                 f'stroke-dasharray="2 2"/><text x="{xt:.1f}" y="{top + h + 22}" font-size="10" '
                 f'text-anchor="middle">target {prof.target_depth_cm:.1f} cm</text>')
    for d in range(0, int(max_depth) + 1, max(1, int(max_depth // 5))):
        parts.append(f'<text x="{x(d):.1f}" y="{top + h + 11}" font-size="9" text-anchor="middle">{d}</text>')
    for loss in range(0, int(max_loss) + 1, 20):
        parts.append(f'<text x="{left - 4}" y="{y(loss) + 3:.1f}" font-size="9" text-anchor="end">{loss}</text>')
    parts.append(f'<text x="10" y="{top + h / 2:.0f}" font-size="9" transform="rotate(-90 10 {top + h / 2:.0f})" '
                 f'text-anchor="middle">{escape("loss, dB")}</text></svg>')
    return "".join(parts)
