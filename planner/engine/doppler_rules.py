"""Doppler rules: settings, aliasing, angle and signal findings of a Doppler plan.

Each rule takes a :class:`DopplerContext` and returns findings; they are registered in
:data:`DOPPLER_RULES` (area ``doppler``), which :func:`planner.engine.doppler_plan.plan_doppler`
runs. Every number comes from the Doppler plan, itself computed by :mod:`planner.physics.doppler`.
"""

from __future__ import annotations

from typing import Any, Callable

from planner.engine.doppler_model import DopplerPlan, Remedy
from planner.engine.vessels import Vessel
from planner.findings import Finding, RuleRegistry
from planner.physics import doppler
from planner.physics.constants import ANGLE_LIMIT_VELOCITY_DEG
from planner.provenance import Sourced
from planner.records import record

DOPPLER_BUDGET_DB = Sourced(
    40.0, "CommonPractice", "common_practice",
    "usable round-trip loss for blood echoes: the 60 dB diffuse-imaging budget less the 20-60 dB "
    "by which blood scatters below tissue (ClutterToBloodRatio), partly regained by the longer "
    "Doppler pulse and ensemble averaging; 2-2.5 MHz Doppler to about 16 cm of soft tissue fits it")
"""Round-trip loss the Doppler echo from blood may suffer and still be measured. [dB]"""



@record
class DopplerContext:
    """Inputs of the Doppler rules: the vessel and its plan (None without vessel data), the
    frequencies within the Doppler budget, every candidate frequency and the path loss. [MHz, dB]"""

    target: Any
    vessel: Vessel | None
    plan: DopplerPlan | None
    fits: tuple[float, ...]
    freqs: tuple[float, ...]
    loss: Callable[[float], float]


DOPPLER_RULES: RuleRegistry[DopplerContext] = RuleRegistry("doppler")
"""The Doppler rules, in run order."""


def _planned(ctx: DopplerContext) -> bool:
    return ctx.plan is not None


def _values(plan: DopplerPlan) -> dict[str, Any]:
    rec = plan.recommended
    return {"depth_cm": plan.depth_cm, "frequency_mhz": rec.frequency_mhz, "angle_deg": rec.angle_deg,
            "v_max_cm_s": rec.v_max_cm_s, "prf_max_hz": plan.prf_max_hz}


@DOPPLER_RULES.register("doppler.no_vessel_data", "doppler", "vessel targets without velocity data",
                        applies=lambda ctx: ctx.vessel is None)
def no_vessel_data(ctx: DopplerContext) -> list[Finding]:
    """Say that no Doppler plan is made without expected velocities."""
    target = ctx.target
    return [Finding("doppler.no_vessel_data", "info", "No Doppler data for this target",
                    f"{target.name} has no expected blood-flow velocities in the vessel "
                    "table, so no Doppler plan is made.", {"target": target.id}, ("CommonPractice",))]


@DOPPLER_RULES.register("doppler.settings", "doppler", "every Doppler plan", applies=_planned)
def settings(ctx: DopplerContext) -> list[Finding]:
    """The recommended Doppler frequency and angle with the Nyquist limit at the vessel depth."""
    assert ctx.plan is not None
    plan, rec = ctx.plan, ctx.plan.recommended
    d, f, a, vm = plan.depth_cm, rec.frequency_mhz, rec.angle_deg, rec.v_max_cm_s
    setting = (f"Doppler at {f:g} MHz, beam-to-flow angle {a:g} deg ({rec.how}). At {d:.1f} cm "
               f"the PRF can reach {plan.prf_max_hz / 1000:.1f} kHz: velocities up to {vm:.0f} "
               "cm/s show without aliasing.")
    return [Finding("doppler.settings", "advice", "Doppler settings", setting, _values(plan),
                    ("DopplerTeaching", "NyquistTeaching", "CommonPractice"),
                    "Nyquist limit v_max = c PRF / (4 f0 cos theta) with PRF = c / (2 d).")]


def _limit_text(remedy: Remedy) -> str:
    v = remedy.v_max_cm_s
    return "no range limit" if v is None else f"limit {v:.0f} cm/s"


@DOPPLER_RULES.register("doppler.aliasing", "doppler",
                        "Doppler plans where a velocity to measure exceeds the Nyquist limit",
                        applies=lambda ctx: ctx.plan is not None and ctx.plan.aliasing_expected)
def aliasing(ctx: DopplerContext) -> list[Finding]:
    """Which velocities alias at this depth and the first remedy that removes it."""
    assert ctx.plan is not None
    plan, rec = ctx.plan, ctx.plan.recommended
    d, f, a, vm = plan.depth_cm, rec.frequency_mhz, rec.angle_deg, rec.v_max_cm_s
    aliased = [c for c in plan.checks if c.aliases]
    if not aliased:
        return []
    fix = next((r for r in plan.remedies if r.removes_aliasing), None)
    clean = [c for c in plan.checks if not c.aliases]
    msg = (f"Aliasing expected at {d:.1f} cm ({f:g} MHz, {a:g} deg, Nyquist limit {vm:.0f} cm/s): "
           + "; ".join(f"{c.label} {c.velocity_cm_s:g} cm/s ({c.source})" for c in aliased)
           + " would alias" + (f", while {clean[-1].velocity_cm_s:g} cm/s would not" if clean else "")
           + (f". Remedy: {fix.text} ({_limit_text(fix)})." if fix else
              ". No single remedy removes it: combine them or report the velocity as aliased."))
    return [Finding("doppler.aliasing", "caution" if clean else "warning", "Aliasing at this depth", msg,
                    _values(plan) | {"design_velocity_cm_s": plan.margin.design_velocity_cm_s},
                    tuple(dict.fromkeys([c.source for c in aliased] + ["NyquistTeaching"])),
                    "Velocities above the Nyquist limit wrap around the spectral display.")]


@DOPPLER_RULES.register("doppler.angle", "doppler",
                        "angle-corrected velocities above 60 deg; zero-angle velocities off axis",
                        applies=_planned)
def angle(ctx: DopplerContext) -> list[Finding]:
    """Angle cautions: above 60 deg for corrected velocities, off zero for along-beam ones."""
    assert ctx.plan is not None and ctx.vessel is not None
    plan, vessel, out = ctx.plan, ctx.vessel, []
    a, err = plan.recommended.angle_deg, plan.velocity_error_percent
    if vessel.angle_policy == "corrected" and a > ANGLE_LIMIT_VELOCITY_DEG.value:
        out.append(Finding("doppler.angle", "caution", "Doppler angle above 60 deg",
                           f"The best reachable angle is {a:g} deg, so velocities are unreliable "
                           f"(a 5 deg angle error gives {err.plus_5_deg} / {err.minus_5_deg} %).",
                           _values(plan), (ANGLE_LIMIT_VELOCITY_DEG.source, "Park2016GelPad")))
    if vessel.angle_policy == "zero" and a > 0:
        f = plan.recommended.frequency_mhz
        ratio = float(doppler.doppler_shift_hz(f, 100.0, a) / doppler.doppler_shift_hz(f, 100.0, 0.0))
        under = round((ratio - 1) * 100, 1)
        out.append(Finding("doppler.angle", "caution", "Angle not zero",
                           f"This velocity is read along the beam without angle correction: at {a:g} "
                           f"deg it reads {-under:g} % low.", _values(plan) | {"underestimate_percent": under},
                           (vessel.preferred_angle_deg.source,)))
    return out


@DOPPLER_RULES.register("doppler.signal", "doppler",
                        "Doppler plans where no frequency fits the Doppler budget",
                        applies=lambda ctx: ctx.plan is not None and not ctx.fits)
def signal(ctx: DopplerContext) -> list[Finding]:
    """A weak Doppler signal when even the lowest frequency loses more than the budget."""
    assert ctx.plan is not None
    lowest = min(ctx.freqs)
    loss = ctx.loss(lowest)
    return [Finding("doppler.signal", "warning", "Weak Doppler signal",
                    f"Even at {lowest:g} MHz the round-trip loss is {loss:.0f} dB, beyond "
                    f"the {DOPPLER_BUDGET_DB.value:g} dB Doppler budget: expect a weak or absent "
                    "signal; a shallower window or firm compression helps.",
                    _values(ctx.plan) | {"round_trip_loss_db": round(loss, 1)},
                    (DOPPLER_BUDGET_DB.source, "ClutterToBloodRatio"))]
