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
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from planner.datafiles import load_package_yaml
from planner.engine.assess import probe_fit
from planner.errors import DataError
from planner.findings import Finding
from planner.physics import doppler
from planner.physics.constants import ANGLE_LIMIT_VELOCITY_DEG, ASSUMED_SPEED_M_PER_S
from planner.provenance import Sourced, sourced_from_mapping

DOPPLER_BUDGET_DB = Sourced(
    40.0, "CommonPractice", "common_practice",
    "usable round-trip loss for blood echoes: the 60 dB diffuse-imaging budget less the 20-60 dB "
    "by which blood scatters below tissue (ClutterToBloodRatio), partly regained by the longer "
    "Doppler pulse and ensemble averaging; 2-2.5 MHz Doppler to about 16 cm of soft tissue fits it")
"""Round-trip loss the Doppler echo from blood may suffer and still be measured. [dB]"""

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

POLICIES = ("corrected", "zero", "indices")
_RANGES = {"normal_low_cm_s": (0, 500), "normal_high_cm_s": (0, 500), "low_flow_below_cm_s": (0, 500),
           "reverse_velocity_cm_s": (0, 500), "diameter_mm": (0.5, 40), "preferred_angle_deg": (0, 60),
           "median_psv_by_week": None}
_REQUIRED = {"name", "flow", "quantity", "waveform", "thresholds", "angle_policy",
             "unsteered_angle_deg", "bone_near_gate"} | set(_RANGES) - {"low_flow_below_cm_s",
                                                                       "median_psv_by_week"}


@dataclass(frozen=True)
class Vessel:
    """Expected flow and Doppler geometry of one vessel target (velocities in cm/s)."""

    id: str
    name: str
    flow: str
    quantity: str
    waveform: str
    normal_low_cm_s: Sourced
    normal_high_cm_s: Sourced
    thresholds: tuple[tuple[str, Sourced], ...]
    low_flow_below_cm_s: Sourced | None
    reverse_velocity_cm_s: Sourced
    diameter_mm: Sourced
    angle_policy: str
    preferred_angle_deg: Sourced
    unsteered_angle_deg: dict
    bone_near_gate: bool
    notes: str = ""
    median_psv_by_week: Sourced | None = None

    def unsteered_for(self, window) -> Sourced:
        """Beam-to-flow angle without steering through a window (by window id, then wall). [deg]"""
        angles = self.unsteered_angle_deg
        return angles.get(window.id) or angles.get(window.wall) or angles["default"]

    def checks(self) -> list[tuple[str, Sourced]]:
        """Velocities the plan must show unaliased: the normal upper limit, then thresholds."""
        return [("normal upper limit", self.normal_high_cm_s)] + list(self.thresholds)

    @property
    def design_velocity_cm_s(self) -> float:
        """Highest velocity to measure without aliasing. [cm/s]"""
        return max(float(s.value) for _, s in self.checks())

    def summary(self) -> dict:
        """JSON-ready description: expected range and thresholds, each with source and status."""
        def item(rec: Sourced | None) -> dict | None:
            return None if rec is None else {"value": rec.value, "source": rec.source,
                                              "status": rec.status}
        return {"id": self.id, "name": self.name, "flow": self.flow, "quantity": self.quantity,
                "waveform": self.waveform, "notes": self.notes, "angle_policy": self.angle_policy,
                "expected_cm_s": {"low": item(self.normal_low_cm_s), "high": item(self.normal_high_cm_s)},
                "thresholds": [{"label": lab} | item(rec) for lab, rec in self.thresholds],
                "low_flow_below_cm_s": item(self.low_flow_below_cm_s),
                "reverse_velocity_cm_s": item(self.reverse_velocity_cm_s),
                "diameter_mm": item(self.diameter_mm)}

    def records(self) -> list[Sourced]:
        """Every sourced value of the vessel."""
        out = [self.normal_low_cm_s, self.normal_high_cm_s, self.reverse_velocity_cm_s,
               self.diameter_mm, self.preferred_angle_deg, *self.unsteered_angle_deg.values(),
               *(s for _, s in self.thresholds)]
        return out + [s for s in (self.low_flow_below_cm_s, self.median_psv_by_week) if s]


def _record(where: str, raw, limits, problems: list[str]) -> Sourced | None:
    try:
        rec = sourced_from_mapping(raw, where)
    except ValueError as exc:
        problems.append(str(exc))
        return None
    ok = isinstance(rec.value, list) if limits is None else (
        isinstance(rec.value, (int, float)) and limits[0] <= rec.value <= limits[1])
    if not ok:
        problems.append(f"{where}: value must be "
                        + ("a list" if limits is None else f"a number from {limits[0]} to {limits[1]}")
                        + f", got {rec.value!r}")
    return rec


def _parse_vessel(vid: str, raw, problems: list[str]) -> Vessel | None:
    where = f"vessels.yaml: vessels.{vid}"
    keys = set(raw) if isinstance(raw, dict) else set()
    unknown, missing = keys - _REQUIRED - set(_RANGES) - {"notes"}, _REQUIRED - keys
    if not isinstance(raw, dict) or unknown or missing:
        problems.append(f"{where}: must be a mapping; unknown keys {sorted(unknown)}, "
                        f"missing keys {sorted(missing)}")
        return None
    if raw["angle_policy"] not in POLICIES or raw["flow"] not in ("artery", "vein"):
        problems.append(f"{where}: angle_policy must be one of {', '.join(POLICIES)} and flow "
                        f"artery or vein, got {raw['angle_policy']!r}, {raw['flow']!r}")
    angles = raw["unsteered_angle_deg"]
    if not isinstance(angles, dict) or "default" not in angles:
        problems.append(f"{where}.unsteered_angle_deg: must be a mapping with a default")
        angles = {}
    thresholds = []
    for i, item in enumerate(raw["thresholds"] or []):
        if not isinstance(item, dict) or set(item) != {"label", "velocity_cm_s"}:
            problems.append(f"{where}.thresholds[{i}]: needs exactly label and velocity_cm_s")
        else:
            thresholds.append((str(item["label"]), _record(f"{where}.thresholds[{i}]",
                                                           item["velocity_cm_s"], (0, 1000), problems)))
    fields = {k: _record(f"{where}.{k}", raw[k], lim, problems) if k in raw else None
              for k, lim in _RANGES.items()}
    return Vessel(vid, str(raw["name"]), raw["flow"], str(raw["quantity"]), str(raw["waveform"]),
                  thresholds=tuple(thresholds), angle_policy=raw["angle_policy"],
                  unsteered_angle_deg={w: _record(f"{where}.unsteered_angle_deg.{w}", a, (0, 90),
                                                  problems) for w, a in angles.items()},
                  bone_near_gate=bool(raw["bone_near_gate"]), notes=str(raw.get("notes") or ""),
                  **fields)


@lru_cache(maxsize=1)
def load_vessels() -> dict[str, Vessel]:
    """Vessel data keyed by target id; ``DataError`` lists every problem of the file."""
    data = load_package_yaml("vessels.yaml")
    problems: list[str] = []
    if not isinstance(data, dict) or data.get("schema_version") != 1:
        raise DataError("vessels.yaml: schema_version must be 1", ["vessels.yaml: schema_version"])
    vessels = {str(k): _parse_vessel(str(k), v, problems) for k, v in data["vessels"].items()}
    if problems:
        raise DataError(f"vessels.yaml has {len(problems)} problem(s)", problems)
    return vessels


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


def plan_angle(vessel: Vessel, window, probe_type: str | None) -> dict:
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
    return {"angle_deg": round(angle, 1), "unsteered_deg": unsteered, "steer_deg": round(steer, 1),
            "heel_toe_deg": round(heel, 1), "how": how}


def _error_percent(angle_deg: float) -> dict:
    out = doppler.velocity_error_fraction(angle_deg, [ANGLE_ERROR_DEG, -ANGLE_ERROR_DEG]) * 100
    return {k: None if math.isnan(v) else round(float(v), 1)
            for k, v in zip(("plus_5_deg", "minus_5_deg"), out)}


def _fits_window(probe, window) -> bool:
    return probe_fit(probe, window) in ("fits", "aligned")


def _lower_frequency(depth, f_rec, angle, vd, probe, inventory, window, loss) -> dict:
    """Lowest-cost frequency change: the highest lower frequency that removes aliasing."""
    options = [(probe, f) for f in doppler_frequencies_mhz(probe.low_mhz, probe.high_mhz) if f < f_rec]
    others = sorted((p for p in inventory.probes if p is not probe and p.low_mhz < probe.low_mhz
                     and _fits_window(p, window)), key=lambda p: -p.low_mhz)
    options += [(p, f) for p in others for f in doppler_frequencies_mhz(p.low_mhz, p.high_mhz)
                if f < f_rec]
    if not options:
        return {}
    good = [o for o in options if _vmax(depth, o[1], angle) >= vd]
    p, f = max(good, key=lambda o: (o[0] is probe, o[1])) if good else min(options, key=lambda o: o[1])
    text = f"lower the Doppler frequency to {f:g} MHz" + (
        "" if p is probe else f" with the {p.label} (the {probe.label} goes no lower)")
    return {"action": "lower_frequency", "text": text,
            "changes": {"frequency_mhz": [f_rec, f], "probe": p.id},
            "v_max_cm_s": round(_vmax(depth, f, angle), 1),
            "round_trip_loss_db": round(loss(f), 1),
            "cost": "coarser velocity resolution and a longer sample volume"}


def _remedies(vessel: Vessel, depth: float, f_rec: float, angle: float, probe, inventory, window,
              loss, alternatives) -> list[dict]:
    """Each remedy re-runs the Nyquist calculation with the change applied."""
    vd, prf = vessel.design_velocity_cm_s, float(doppler.prf_max_hz(depth))
    vm, reverse = _vmax(depth, f_rec, angle), float(vessel.reverse_velocity_cm_s.value)
    out = [_lower_frequency(depth, f_rec, angle, vd, probe, inventory, window, loss) if probe else {},
           {"action": "baseline_shift", "text": "shift the baseline to the edge of the display",
            "changes": {"one_direction_range_cm_s": [round(vm, 1), round(2 * vm - reverse, 1)]},
            "v_max_cm_s": round(2 * vm - reverse, 1),
            "cost": "flow the other way aliases" + (f" (room is kept for the {reverse:g} cm/s reverse "
                                                    "wave)" if reverse else "; know the direction first")}]
    if vessel.angle_policy != "zero" and angle < ANGLE_LIMIT_VELOCITY_DEG.value:
        a60 = ANGLE_LIMIT_VELOCITY_DEG.value
        out.append({"action": "larger_angle", "text": f"open the beam-to-flow angle to {a60:.0f} deg",
                    "changes": {"angle_deg": [angle, a60]}, "v_max_cm_s": round(_vmax(depth, f_rec, a60), 1),
                    "cost": f"a +5 deg angle error then gives {_error_percent(a60)['plus_5_deg']} %"})
    out.append(_shallower(vessel, depth, f_rec, angle, vd, probe, alternatives))
    top = int(HPRF_MAX_FACTOR.value)
    k = next((k for k in range(2, top + 1)
              if doppler.nyquist_velocity_cm_s(k * prf, f_rec, angle) >= vd), top)
    out.append({"action": "high_prf", "text": f"high-PRF Doppler at {k} x the range-limited PRF",
                "changes": {"prf_hz": [round(prf), round(k * prf)]},
                "v_max_cm_s": round(float(doppler.nyquist_velocity_cm_s(k * prf, f_rec, angle)), 1),
                "extra_gates_cm": [round(depth * j / k, 1) for j in range(1, k)],
                "cost": "range ambiguity: flow at the extra gate depths adds to the spectrum"})
    cw = [p for p in inventory.probes if p.type in CW_PROBE_TYPES and _fits_window(p, window)]
    if cw:
        out.append({"action": "continuous_wave", "text": f"continuous-wave Doppler with the {cw[0].label}",
                    "changes": {"probe": cw[0].id}, "v_max_cm_s": None,
                    "cost": "no depth resolution: every flow along the beam adds to the spectrum; "
                            "assumes the phased array offers CW"})
    out = [r for r in out if r]
    for r in out:
        r["removes_aliasing"] = r["v_max_cm_s"] is None or r["v_max_cm_s"] >= vd
    return out


def _shallower(vessel, depth, f_rec, angle, vd, probe, alternatives) -> dict:
    """The best shallower window (re-run at its depth and angle), else the depth needed."""
    options = []
    for alt in alternatives or ():
        d = float(alt.stack.depth_cm)
        a = plan_angle(vessel, alt.window, probe.type if probe else None)["angle_deg"]
        if d < depth - 0.05:
            options.append((_vmax(d, f_rec, a), d, a, alt.window))
    if options:
        v, d, a, win = max(options, key=lambda o: o[0])
        return {"action": "shallower_window", "text": f"use the {win.name} window",
                "changes": {"depth_cm": [round(depth, 1), round(d, 1)], "window": win.id,
                            "angle_deg": [angle, a]},
                "v_max_cm_s": round(v, 1), "cost": "another approach to the vessel"}
    cos_t = math.cos(math.radians(angle))
    need = math.floor(ASSUMED_SPEED_M_PER_S ** 2 / (8.0 * f_rec * 1e6 * cos_t * vd) * 1e5) / 10
    if need < 0.5:
        return {}
    return {"action": "shallower_window",
            "text": f"a window or firm compression that brings the vessel to {need:.1f} cm or less",
            "changes": {"depth_cm": [round(depth, 1), need]},
            "v_max_cm_s": round(_vmax(need, f_rec, angle), 1),
            "cost": "only if such a window exists for this patient"}


def plan_doppler(target, assessment, probe, inventory,
                 alternatives=None) -> tuple[dict | None, list[Finding]]:
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
    (dict or None, list of Finding)
        The JSON-ready Doppler plan and its findings; ``(None, [info])`` without vessel data.
    """
    vessel = load_vessels().get(target.id)
    if vessel is None:
        return None, [Finding("doppler.no_vessel_data", "info", "No Doppler data for this target",
                              f"{target.name} has no expected blood-flow velocities in the vessel "
                              "table, so no Doppler plan is made.", {"target": target.id},
                              ("CommonPractice",))]
    window, depth, loss = assessment.window, float(assessment.stack.depth_cm), assessment.loss_db
    if probe is None:
        probe = next((p for t in getattr(target, "probe_types", ()) for p in inventory.probes
                      if p.type == t and _fits_window(p, window)), None)
    freqs = doppler_frequencies_mhz(probe.low_mhz, probe.high_mhz) if probe else [2.0, 3.0, 5.0]
    budget = DOPPLER_BUDGET_DB.value
    aim = plan_angle(vessel, window, probe.type if probe else None)
    angle = aim.pop("angle_deg")
    fits = [f for f in freqs if loss(f) <= budget]
    normal, vd = float(vessel.normal_high_cm_s.value), vessel.design_velocity_cm_s
    f_rec = max((f for f in fits or [min(freqs)] if _vmax(depth, f, angle) >= normal),
                default=min(fits or freqs))
    vm = _vmax(depth, f_rec, angle)
    remedies = (_remedies(vessel, depth, f_rec, angle, probe, inventory, window, loss, alternatives)
                if vd > vm else [])
    plan = {
        "vessel": vessel.summary(), "depth_cm": round(depth, 2), "window": window.id,
        "prf_max_hz": round(float(doppler.prf_max_hz(depth))),
        "probe": None if probe is None else probe.id, "budget_db": budget,
        "frequencies": [{"frequency_mhz": f, "round_trip_loss_db": round(loss(f), 1),
                         "within_budget": loss(f) <= budget} for f in freqs],
        "nyquist": [{"frequency_mhz": f, "angle_deg": a, "v_max_cm_s": round(_vmax(depth, f, a), 1)}
                    for f in freqs for a in sorted(set(TABLE_ANGLES_DEG) | {angle})],
        "recommended": {"frequency_mhz": f_rec, "angle_deg": angle, "v_max_cm_s": round(vm, 1),
                        "round_trip_loss_db": round(loss(f_rec), 1)} | aim,
        "checks": [{"label": label, "velocity_cm_s": float(s.value), "source": s.source,
                    "status": s.status, "aliases": float(s.value) > vm} for label, s in vessel.checks()],
        "aliasing_expected": vd > vm,
        "margin": {"design_velocity_cm_s": vd, "v_max_cm_s": round(vm, 1),
                   "margin_cm_s": round(vm - vd, 1), "ratio": round(vd / vm, 2)},
        "remedies": remedies,
        "velocity_error_percent": _error_percent(angle),
        "safety": {"modes": list(DOPPLER_PLAN_MODES), "bone_near_gate": vessel.bone_near_gate,
                   "note": "early-pregnancy Doppler limits, dwell times and Doppler near bone are "
                           "given by the safety rules of the plan"},
        "assumptions": [
            "Scale at the range-limited PRF c/(2d) with the gate at the vessel depth; a scanner may "
            "cap the PRF lower, and a colour box reaching deeper than the vessel lowers it further.",
            f"Doppler budget {budget:g} dB round trip (common practice); steering and heel-toe "
            "limits are typical values (common practice).",
            "Continuous-wave Doppler assumed available on phased arrays only." if probe else
            "No probe fits this window: generic 2, 3 and 5 MHz Doppler frequencies are shown."],
    }
    findings = _findings(vessel, plan, fits, freqs, loss)
    plan["sources"] = sorted({s.source for s in vessel.records()} | {
        "DopplerTeaching", "NyquistTeaching", "ClutterToBloodRatio", DOPPLER_BUDGET_DB.source}
        | {k for f in findings for k in f.sources} | ({HPRF_MAX_FACTOR.source} if remedies else set()))
    return plan, findings


def _limit_text(remedy: dict) -> str:
    v = remedy["v_max_cm_s"]
    return "no range limit" if v is None else f"limit {v:.0f} cm/s"


def _findings(vessel: Vessel, plan: dict, fits: list, freqs: list, loss) -> list[Finding]:
    rec, d = plan["recommended"], plan["depth_cm"]
    f, a, vm = rec["frequency_mhz"], rec["angle_deg"], rec["v_max_cm_s"]
    values = {"depth_cm": d, "frequency_mhz": f, "angle_deg": a, "v_max_cm_s": vm,
              "prf_max_hz": plan["prf_max_hz"]}
    setting = (f"Doppler at {f:g} MHz, beam-to-flow angle {a:g} deg ({rec['how']}). At {d:.1f} cm "
               f"the PRF can reach {plan['prf_max_hz'] / 1000:.1f} kHz: velocities up to {vm:.0f} "
               "cm/s show without aliasing.")
    out = [Finding("doppler.settings", "advice", "Doppler settings", setting, values,
                   ("DopplerTeaching", "NyquistTeaching", "CommonPractice"),
                   "Nyquist limit v_max = c PRF / (4 f0 cos theta) with PRF = c / (2 d).")]
    aliased = [c for c in plan["checks"] if c["aliases"]]
    if aliased:
        fix = next((r for r in plan["remedies"] if r["removes_aliasing"]), None)
        clean = [c for c in plan["checks"] if not c["aliases"]]
        msg = (f"Aliasing expected at {d:.1f} cm ({f:g} MHz, {a:g} deg, Nyquist limit {vm:.0f} cm/s): "
               + "; ".join(f"{c['label']} {c['velocity_cm_s']:g} cm/s ({c['source']})" for c in aliased)
               + " would alias" + (f", while {clean[-1]['velocity_cm_s']:g} cm/s would not" if clean else "")
               + (f". Remedy: {fix['text']} ({_limit_text(fix)})." if fix else
                  ". No single remedy removes it: combine them or report the velocity as aliased."))
        out.append(Finding("doppler.aliasing", "caution" if clean else "warning",
                           "Aliasing at this depth", msg,
                           values | {"design_velocity_cm_s": plan["margin"]["design_velocity_cm_s"]},
                           tuple(dict.fromkeys([c["source"] for c in aliased] + ["NyquistTeaching"])),
                           "Velocities above the Nyquist limit wrap around the spectral display."))
    err = plan["velocity_error_percent"]
    if vessel.angle_policy == "corrected" and a > ANGLE_LIMIT_VELOCITY_DEG.value:
        out.append(Finding("doppler.angle", "caution", "Doppler angle above 60 deg",
                           f"The best reachable angle is {a:g} deg, so velocities are unreliable "
                           f"(a 5 deg angle error gives {err['plus_5_deg']} / {err['minus_5_deg']} %).",
                           values, (ANGLE_LIMIT_VELOCITY_DEG.source, "Park2016GelPad")))
    if vessel.angle_policy == "zero" and a > 0:
        under = round((math.cos(math.radians(a)) - 1) * 100, 1)
        out.append(Finding("doppler.angle", "caution", "Angle not zero",
                           f"This velocity is read along the beam without angle correction: at {a:g} "
                           f"deg it reads {-under:g} % low.", values | {"underestimate_percent": under},
                           (vessel.preferred_angle_deg.source,)))
    if not fits:
        lowest = min(freqs)
        out.append(Finding("doppler.signal", "warning", "Weak Doppler signal",
                           f"Even at {lowest:g} MHz the round-trip loss is {loss(lowest):.0f} dB, beyond "
                           f"the {DOPPLER_BUDGET_DB.value:g} dB Doppler budget: expect a weak or absent "
                           "signal; a shallower window or firm compression helps.",
                           values | {"round_trip_loss_db": round(loss(lowest), 1)},
                           (DOPPLER_BUDGET_DB.source, "ClutterToBloodRatio")))
    return out
