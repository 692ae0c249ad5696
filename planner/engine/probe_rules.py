"""Rules about the probe: why a curved array replaced the usual linear one, and what the
linear would still do."""

from __future__ import annotations

from planner.engine.context import RuleContext
from planner.findings import Finding
from planner.library.names import in_sentence

LINEAR_TYPES: frozenset[str] = frozenset({"linear", "linear_hf"})
"""Probe families that are linear arrays."""


def applies(ctx: RuleContext) -> bool:
    """A target whose practice changes to a curved array in larger patients, planned on one."""
    return (ctx.option is not None and ctx.option.probe.type == "curvilinear"
            and bool(ctx.target.curved_first(10.0 * ctx.stack.wall_cm)))


def curved_for_habitus_findings(ctx: RuleContext) -> list[Finding]:
    """The curved array a larger patient gets instead of the usual linear one, with the best
    linear alternative the inventory has (its band through this window)."""
    target, option = ctx.target, ctx.option
    assert option is not None and target.curved_array_from_wall_mm is not None
    wall_mm = 10.0 * ctx.stack.wall_cm
    threshold = target.curved_array_from_wall_mm
    source = target.provenance["curved_array_from_wall_mm"]
    linears = [o for o in ctx.chosen.options if o.probe.type in LINEAR_TYPES and o.fit != "n/a"]
    reaching = [o for o in linears if o.feasible]
    alternative = max(reaching, key=lambda o: o.high_mhz, default=None)
    if alternative is not None:
        alt_text = (f"The {alternative.probe.label} still reaches {ctx.stack.depth_cm:.1f} cm at "
                    f"{alternative.low_mhz:.1f}-{alternative.high_mhz:.1f} MHz: change to it for "
                    "near-field detail when the image allows.")
    elif linears:
        alt_text = (f"No linear array of the inventory gives {target.detail_mm:g} mm detail at "
                    f"{ctx.stack.depth_cm:.1f} cm through this wall.")
    else:
        alt_text = "The inventory has no linear array for this window."
    values = {"wall_mm": round(wall_mm, 1), "curved_from_wall_mm": threshold,
              "linear_alternative": alternative.probe.id if alternative else None,
              "linear_band_mhz": ([round(alternative.low_mhz, 1), round(alternative.high_mhz, 1)]
                                  if alternative else None)}
    return [Finding(
        "probe.curved_for_habitus", "advice", "Curved array for a larger patient",
        f"The body wall at {in_sentence(ctx.window.name)} is {wall_mm:.0f} mm; from "
        f"{threshold:g} mm (the wall of an obese patient, WHO BMI 30, at this route) practice "
        f"takes a curved array for the {target.name_in_sentence}: a wider field at depth and "
        f"lower frequencies that keep the focus through the wall. {alt_text}",
        values, (source.source, "CommonPractice"),
        f"Practice: {source.note or source.source}. The threshold is the modelled wall at BMI 30 "
        "for this route (derived), so a measured wall decides it as well as a BMI does.")]
