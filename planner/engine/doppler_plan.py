"""Doppler planning for vessel targets: frequency, angle, Nyquist limit, aliasing and remedies.

The expected velocities come from ``planner/data/vessels.yaml`` (each sourced); every number
of the plan comes from :mod:`planner.physics.doppler` at the vessel depth of the chosen window.
The scale is assumed at the range-limited pulse repetition frequency ``PRF_max = c / (2 d)``;
a remedy is only called effective after the calculation is re-run with the remedy applied.

References
----------
DopplerTeaching (Doppler equation; angle <= 60 deg); NyquistTeaching (f_D,max = PRF/2, PRF_max =
c/(2d)); Kremkau2015 (high-PRF range ambiguity; continuous-wave Doppler has no range limit);
ClutterToBloodRatio (blood echoes 20-60 dB below tissue); Park2016GelPad (carotid angles).
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Any, Callable

import numpy as np

from planner.engine.assess import WindowAssessment, probe_fit
from planner.engine.doppler_model import (AliasMargin, DopplerFrequency, DopplerPlan, DopplerSafety,
                                          DopplerSetting, NyquistCell, Remedy, VelocityCheck,
                                          VelocityError)
from planner.engine.vessels import POLICIES, Vessel, _parse_vessel, load_vessels
from planner.findings import Finding
from planner.library.probes import Probe, ProbeInventory
from planner.physics import doppler
from planner.physics.constants import ANGLE_LIMIT_VELOCITY_DEG
from planner.engine.doppler_rules import DOPPLER_BUDGET_DB, DOPPLER_RULES, DopplerContext
from planner.provenance import Sourced
from planner.records import record

__all__ = ["CW_PROBE_TYPES", "DOPPLER_BUDGET_DB", "DOPPLER_PLAN_MODES", "POLICIES", "Vessel",
           "_parse_vessel", "doppler_frequencies_mhz", "load_vessels", "plan_angle", "plan_doppler"]

Loss = Callable[[float], float]

STEERING_MAX_DEG: dict[str, Sourced] = {
    kind: Sourced(value, "CommonPractice", "common_practice", note) for kind, value, note in (
        ("linear", 20.0, "electronic steering of the colour box and Doppler line"),
        ("linear_hf", 20.0, "electronic steering of the colour box and Doppler line"),
        ("phased", 20.0, "off-axis lines of the sector"),
        ("curvilinear", 10.0, "off-axis lines near the edge of the sector"),
        ("microconvex", 10.0, "off-axis lines near the edge of the sector"),
        ("endocavitary", 10.0, "off-axis lines near the edge of the sector"))}
"""Beam-to-flow angle a probe type can gain by steering or by using off-axis lines. [deg]"""

HEEL_TOE_MAX_DEG = Sourced(10.0, "CommonPractice", "common_practice",
                           "rocking the probe along its long axis while keeping skin contact")
"""Beam-to-flow angle gained by heel-toe rocking of the probe. [deg]"""

HPRF_MAX_FACTOR = Sourced(3, "Kremkau2015", "from_memory",
                          "high-PRF modes place two or three sample volumes along the beam")
"""Largest multiple of the range-limited PRF a high-PRF mode is assumed to reach. [-]"""

CW_PROBE_TYPES: tuple[str, ...] = ("phased",)
"""Probe types assumed to offer continuous-wave Doppler (assumption: phased arrays usually do)."""

ANGLE_ERROR_DEG: float = 5.0
"""Angle uncertainty for the velocity-error figures. [deg]"""

TABLE_ANGLES_DEG: tuple[float, ...] = (0.0, 30.0, 45.0, 60.0)
"""Beam-to-flow angles of the Nyquist table. [deg]"""

DOPPLER_PLAN_MODES: tuple[str, ...] = ("b_mode", "colour_doppler", "pulsed_doppler")
"""Modes a Doppler plan uses: pass them to ExamContext so the safety rules apply."""


def doppler_frequencies_mhz(low_mhz: float, high_mhz: float) -> list[float]:
    """Candidate Doppler transmit frequencies: the lower half of a probe band. [MHz]

    From the band's low edge to its geometric centre, in 0.5 MHz steps (1 MHz when the centre
    is above 5 MHz), plus the centre itself (common practice: Doppler transmits lower than the
    imaging band).
    """
    centre = math.sqrt(low_mhz * high_mhz)
    step = 0.5 if centre <= 5.0 else 1.0
    grid = [round(float(f), 2) for f in np.arange(low_mhz, centre + 1e-9, step)]
    if centre - grid[-1] > 0.25:
        grid.append(round(centre, 1))
    return grid


def _vmax(depth_cm: float, f_mhz: float, angle_deg: float) -> float:
    return float(doppler.max_velocity_at_depth_cm_s(depth_cm, f_mhz, angle_deg))


@record
class AngleAim:
    """The beam-to-flow angle to aim for and how to reach it. [deg]"""

    angle_deg: float
    unsteered_deg: float
    steer_deg: float
    heel_toe_deg: float
    how: str


def plan_angle(vessel: Vessel, window: Any, probe_type: str | None) -> AngleAim:
    """The beam-to-flow angle to aim for and how to reach it (steering, heel-toe)."""
    unsteered = float(vessel.unsteered_for(window).value)
    preferred = float(vessel.preferred_angle_deg.value)
    steer_max = float(STEERING_MAX_DEG.get(probe_type or "", STEERING_MAX_DEG["curvilinear"]).value)
    reachable = max(0.0, unsteered - steer_max - HEEL_TOE_MAX_DEG.value)
    angle = unsteered if unsteered <= preferred else max(preferred, reachable)
    need = unsteered - angle
    steer = min(need, steer_max)
    heel = need - steer
    if need <= 0:
        how = f"no steering needed: the vessel runs about {unsteered:.0f} deg to the beam"
    else:
        how = (f"steer the colour box and Doppler line {steer:.0f} deg toward the flow"
               if probe_type in ("linear", "linear_hf") else
               f"use the lines at the side of the sector that meet the vessel about {steer:.0f} deg "
               "more steeply")
        how += f" and heel-toe the probe about {heel:.0f} deg" if heel > 0.5 else ""
    if vessel.angle_policy == "corrected" and angle > ANGLE_LIMIT_VELOCITY_DEG.value:
        how += (f"; {ANGLE_LIMIT_VELOCITY_DEG.value:.0f} deg is out of reach here: another window, "
                "a slanted gel pad (about 10 deg less, Park2016GelPad) or angle-independent indices")
    return AngleAim(round(angle, 1), unsteered, round(steer, 1), round(heel, 1), how)


def error_percent(angle_deg: float) -> VelocityError:
    """Velocity error for a +/-5 deg angle error at ``angle_deg``. [%]"""
    out = doppler.velocity_error_fraction(angle_deg, [ANGLE_ERROR_DEG, -ANGLE_ERROR_DEG]) * 100
    plus, minus = (None if math.isnan(v) else round(float(v), 1) for v in out)
    return VelocityError(plus, minus)


def _fits_window(probe: Probe, window: Any) -> bool:
    return probe_fit(probe, window) in ("fits", "aligned")


def _lower_frequency(depth: float, f_rec: float, angle: float, vd: float, probe: Probe,
                     inventory: ProbeInventory, window: Any, loss: Loss) -> Remedy | None:
    """Lowest-cost frequency change: the highest lower frequency that removes aliasing."""
    options = [(probe, f) for f in doppler_frequencies_mhz(probe.low_mhz, probe.high_mhz) if f < f_rec]
    others = sorted((p for p in inventory.probes if p is not probe and p.low_mhz < probe.low_mhz
                     and _fits_window(p, window)), key=lambda p: -p.low_mhz)
    options += [(p, f) for p in others for f in doppler_frequencies_mhz(p.low_mhz, p.high_mhz)
                if f < f_rec]
    if not options:
        return None
    good = [o for o in options if _vmax(depth, o[1], angle) >= vd]
    p, f = max(good, key=lambda o: (o[0] is probe, o[1])) if good else min(options, key=lambda o: o[1])
    text = f"lower the Doppler frequency to {f:g} MHz" + (
        "" if p is probe else f" with the {p.label} (the {probe.label} goes no lower)")
    v = round(_vmax(depth, f, angle), 1)
    return Remedy("lower_frequency", text, {"frequency_mhz": (f_rec, f), "probe": p.id}, v,
                  "coarser velocity resolution and a longer sample volume", v >= vd,
                  round_trip_loss_db=round(loss(f), 1))


def _remedies(vessel: Vessel, depth: float, f_rec: float, angle: float, probe: Probe | None,
              inventory: ProbeInventory, window: Any, loss: Loss,
              alternatives: Any) -> tuple[Remedy, ...]:
    """Each remedy re-runs the Nyquist calculation with the change applied."""
    vd, prf = vessel.design_velocity_cm_s, float(doppler.prf_max_hz(depth))
    vm, reverse = _vmax(depth, f_rec, angle), float(vessel.reverse_velocity_cm_s.value)
    out = [_lower_frequency(depth, f_rec, angle, vd, probe, inventory, window, loss) if probe else None]
    shifted = round(2 * vm - reverse, 1)
    out.append(Remedy("baseline_shift", "shift the baseline to the edge of the display",
                      {"one_direction_range_cm_s": (round(vm, 1), shifted)}, shifted,
                      "flow the other way aliases" + (f" (room is kept for the {reverse:g} cm/s "
                                                      "reverse wave)" if reverse else
                                                      "; know the direction first"), shifted >= vd))
    if vessel.angle_policy != "zero" and angle < ANGLE_LIMIT_VELOCITY_DEG.value:
        a60 = ANGLE_LIMIT_VELOCITY_DEG.value
        v = round(_vmax(depth, f_rec, a60), 1)
        out.append(Remedy("larger_angle", f"open the beam-to-flow angle to {a60:.0f} deg",
                          {"angle_deg": (angle, a60)}, v,
                          f"a +5 deg angle error then gives {error_percent(a60).plus_5_deg} %", v >= vd))
    out.append(_shallower(vessel, depth, f_rec, angle, vd, probe, alternatives))
    top = int(HPRF_MAX_FACTOR.value)
    k = next((k for k in range(2, top + 1)
              if doppler.nyquist_velocity_cm_s(k * prf, f_rec, angle) >= vd), top)
    v = round(float(doppler.nyquist_velocity_cm_s(k * prf, f_rec, angle)), 1)
    out.append(Remedy("high_prf", f"high-PRF Doppler at {k} x the range-limited PRF",
                      {"prf_hz": (round(prf), round(k * prf))}, v,
                      "range ambiguity: flow at the extra gate depths adds to the spectrum", v >= vd,
                      extra_gates_cm=tuple(round(depth * j / k, 1) for j in range(1, k))))
    cw = [p for p in inventory.probes if p.type in CW_PROBE_TYPES and _fits_window(p, window)]
    if cw:
        out.append(Remedy("continuous_wave", f"continuous-wave Doppler with the {cw[0].label}",
                          {"probe": cw[0].id}, None,
                          "no depth resolution: every flow along the beam adds to the spectrum; "
                          "assumes the phased array offers CW", True))
    return tuple(r for r in out if r is not None)


def _shallower(vessel: Vessel, depth: float, f_rec: float, angle: float, vd: float,
               probe: Probe | None, alternatives: Any) -> Remedy | None:
    """The best shallower window (re-run at its depth and angle), else the depth needed."""
    options = []
    for alt in alternatives or ():
        d = float(alt.stack.depth_cm)
        a = plan_angle(vessel, alt.window, probe.type if probe else None).angle_deg
        if d < depth - 0.05:
            options.append((_vmax(d, f_rec, a), d, a, alt.window))
    if options:
        v, d, a, win = max(options, key=lambda o: o[0])
        return Remedy("shallower_window", f"use the {win.name} window",
                      {"depth_cm": (round(depth, 1), round(d, 1)), "window": win.id,
                       "angle_deg": (angle, a)}, round(v, 1), "another approach to the vessel",
                      round(v, 1) >= vd)
    # The Nyquist limit falls as 1/depth (PRF_max = c / 2d): the deepest gate that shows vd.
    need = math.floor(10.0 * _vmax(1.0, f_rec, angle) / vd) / 10
    if need < 0.5:
        return None
    v = round(_vmax(need, f_rec, angle), 1)
    return Remedy("shallower_window",
                  f"a window or firm compression that brings the vessel to {need:.1f} cm or less",
                  {"depth_cm": (round(depth, 1), need)}, v,
                  "only if such a window exists for this patient", v >= vd)


def _nyquist_table(depth_cm: float, freqs: list[float], angles: list[float]) -> tuple[NyquistCell, ...]:
    """Nyquist limit at the vessel depth for every frequency and angle, in one physics call."""
    grid = doppler.max_velocity_at_depth_cm_s(depth_cm, np.array(freqs)[:, None],
                                              np.array(angles)[None, :])
    return tuple(NyquistCell(f, a, round(float(grid[i, j]), 1))
                 for i, f in enumerate(freqs) for j, a in enumerate(angles))


def plan_doppler(target: Any, assessment: WindowAssessment, probe: Probe | None,
                 inventory: ProbeInventory,
                 alternatives: Any = None) -> tuple[DopplerPlan | None, list[Finding]]:
    """Plan Doppler for a vessel target at the chosen window.

    Parameters
    ----------
    target : Target
        The target; only ids of ``planner/data/vessels.yaml`` get a plan.
    assessment : WindowAssessment
        The chosen window; ``stack.depth_cm`` is the vessel depth [cm] and ``loss_db(f)`` the
        round-trip loss of its path [dB].
    probe : Probe or None
        The chosen probe; ``None`` uses the first inventory probe of the target's probe types.
    inventory : ProbeInventory
        Lower-frequency probes and continuous-wave Doppler come from it.
    alternatives : list of WindowAssessment, optional
        The target's other windows, tried as shallower windows.

    Returns
    -------
    (DopplerPlan or None, list of Finding)
        The typed Doppler plan and the findings of the Doppler rules
        (:data:`planner.engine.doppler_rules.DOPPLER_RULES`).
    """

    vessel = load_vessels().get(target.id)
    if vessel is None:
        return None, DOPPLER_RULES.run(DopplerContext(target, None, None, (), (), lambda f: 0.0))
    window, depth, loss = assessment.window, float(assessment.stack.depth_cm), assessment.loss_db
    if probe is None:
        probe = next((p for t in getattr(target, "probe_types", ()) for p in inventory.probes
                      if p.type == t and _fits_window(p, window)), None)
    freqs = doppler_frequencies_mhz(probe.low_mhz, probe.high_mhz) if probe else [2.0, 3.0, 5.0]
    budget = DOPPLER_BUDGET_DB.value
    aim = plan_angle(vessel, window, probe.type if probe else None)
    angle = aim.angle_deg
    fits = [f for f in freqs if loss(f) <= budget]
    normal, vd = float(vessel.normal_high_cm_s.value), vessel.design_velocity_cm_s
    f_rec = max((f for f in fits or [min(freqs)] if _vmax(depth, f, angle) >= normal),
                default=min(fits or freqs))
    vm = _vmax(depth, f_rec, angle)
    remedies = (_remedies(vessel, depth, f_rec, angle, probe, inventory, window, loss, alternatives)
                if vd > vm else ())
    plan = DopplerPlan(
        vessel=vessel.summary(), depth_cm=round(depth, 2), window=window.id,
        prf_max_hz=round(float(doppler.prf_max_hz(depth))),
        probe=None if probe is None else probe.id, budget_db=budget,
        frequencies=tuple(DopplerFrequency(f, round(loss(f), 1), loss(f) <= budget) for f in freqs),
        nyquist=_nyquist_table(depth, freqs, sorted(set(TABLE_ANGLES_DEG) | {angle})),
        recommended=DopplerSetting(f_rec, angle, round(vm, 1), round(loss(f_rec), 1),
                                   aim.unsteered_deg, aim.steer_deg, aim.heel_toe_deg, aim.how),
        checks=tuple(VelocityCheck(label, float(s.value), s.source, s.status, float(s.value) > vm)
                     for label, s in vessel.checks()),
        aliasing_expected=vd > vm,
        margin=AliasMargin(vd, round(vm, 1), round(vm - vd, 1), round(vd / vm, 2)),
        remedies=remedies,
        velocity_error_percent=error_percent(angle),
        safety=DopplerSafety(DOPPLER_PLAN_MODES, vessel.bone_near_gate,
                             "early-pregnancy Doppler limits, dwell times and Doppler near bone are "
                             "given by the safety rules of the plan"),
        assumptions=(
            "Scale at the range-limited PRF c/(2d) with the gate at the vessel depth; a scanner may "
            "cap the PRF lower, and a colour box reaching deeper than the vessel lowers it further.",
            f"Doppler budget {budget:g} dB round trip (common practice); steering and heel-toe "
            "limits are typical values (common practice).",
            "Continuous-wave Doppler assumed available on phased arrays only." if probe else
            "No probe fits this window: generic 2, 3 and 5 MHz Doppler frequencies are shown."),
    )
    findings = DOPPLER_RULES.run(DopplerContext(target, vessel, plan, tuple(fits), tuple(freqs), loss))
    sources = sorted({s.source for s in vessel.records()} | {
        "DopplerTeaching", "NyquistTeaching", "ClutterToBloodRatio", DOPPLER_BUDGET_DB.source}
        | {k for f in findings for k in f.sources} | ({HPRF_MAX_FACTOR.source} if remedies else set()))
    return replace(plan, sources=tuple(sources)), findings
