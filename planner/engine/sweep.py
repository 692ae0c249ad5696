"""Planning over many patients at once: the engine's vectorised path, row by row.

:func:`sweep_plans` gives, for one request and N BMI values, the headline a single plan
would give for each (window, probe, band, start frequency, harmonic imaging), computed on
arrays through the same stack building, reach, probe choice, feasibility and window ranking
as :func:`planner.engine.make_plan` (:mod:`planner.engine.batch`). A department uses it to
see at which habitus a probe or a window stops working; ``scanplan sweep`` prints it.
:func:`sweep` gives the raw arrays of one window.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from planner.body.gestation import resolve_gestation
from planner.body.patient import Patient
from planner.body.stack import build_stack_batch, measured_wall_ratio
from planner.body.walls import load_wall_models
from planner.engine.batch import WindowBatch, assess_batch, assess_batches
from planner.engine.decisions import CLUTTER_FAT_MM, harmonic_routine
from planner.engine.request import (PlanRequest, exam_type_of, patient_for_exam, side_of, window_rank_keys,
                                    windows_for_side)
from planner.errors import InputError
from planner.library.probes import ProbeInventory, default_inventory, load_inventory
from planner.library.targets import load_library
from planner.records import record

REFERENCE_FREQUENCY_MHZ: float = 3.5
"""Frequency at which windows are compared when none is feasible (common practice). [MHz]"""


def _window(target, window_id):
    if window_id is None:
        return target.windows[0]
    for window in target.windows:
        if window.id == window_id:
            return window
    raise InputError(f"unknown window {window_id!r} for target {target.id}; valid windows: "
                     f"{', '.join(w.id for w in target.windows)}")


def sweep(target_id: str, bmi, *, window_id: str | None = None, sex: str | None = None,
          depth_cm=None, conditions: dict[str, int] | None = None, gestation_weeks: float | None = None,
          probe_id: str | None = None, inventory: ProbeInventory | None = None) -> dict[str, np.ndarray]:
    """Reach, detail and depth error for N scenarios of one target window.

    Parameters
    ----------
    target_id : str
    bmi : array, shape (N,)
        Body-mass index of each scenario. [kg/m^2]
    depth_cm : array, shape (N,), optional
        Measured skin-to-target depths (NaN where not measured). [cm]
    conditions : dict, optional
        Condition id -> grade, applied to every scenario.
    probe_id : str, optional
        Probe for the detail floor and band; default: the probe the engine chooses per scenario.

    Returns
    -------
    dict of arrays, shape (N,)
        ``depth_cm``, ``displayed_depth_cm``, ``depth_error_mm``, ``wall_mm``,
        ``ceiling_mhz``, ``harmonic_ceiling_mhz``, ``floor_mhz``, ``high_mhz``, ``feasible``.
    """
    target = load_library().get(target_id)
    window = _window(target, window_id)
    inventory = inventory or default_inventory()
    b = np.atleast_1d(np.asarray(bmi, dtype=float))
    gestation = resolve_gestation(target.id, gestation_weeks, target.name)
    patient = patient_for_exam(Patient(sex=sex, conditions=dict(conditions or {}),
                                       gestation_weeks=gestation_weeks if gestation is None
                                       else gestation.weeks), target.exam_type)
    depth = None if depth_cm is None else np.broadcast_to(np.asarray(depth_cm, dtype=float), b.shape)
    stacks = build_stack_batch(patient, window, bmi=b, depth_cm=depth)
    batch = assess_batch(stacks, target, inventory)
    pa = batch.probes
    rows = np.arange(b.size)
    if probe_id:
        col = np.full(b.size, [p.id for p in pa.probes].index(inventory.get(probe_id).id))
    else:
        col = np.maximum(pa.best, 0)
    return {"depth_cm": batch.depth_cm, "displayed_depth_cm": batch.displayed_depth_cm,
            "depth_error_mm": 10.0 * (batch.displayed_depth_cm - batch.depth_cm),
            "wall_mm": stacks.wall_cm * 10.0, "ceiling_mhz": batch.ceiling_mhz,
            "harmonic_ceiling_mhz": batch.harmonic_ceiling_mhz, "floor_mhz": pa.floor_mhz[rows, col],
            "high_mhz": pa.high_mhz[rows, col], "feasible": pa.feasible[rows, col] & stacks.valid}


@record
class SweepRow:
    """The headline of one plan in a sweep (as ``make_plan`` would give it)."""

    bmi: float
    window: str
    probe: str | None
    start_mhz: float | None
    high_mhz: float | None
    low_mhz: float | None
    harmonic: bool
    feasible: bool

    def to_dict(self) -> dict:
        return {"bmi": self.bmi, "window": self.window, "probe": self.probe,
                "start_mhz": self.start_mhz, "high_mhz": self.high_mhz, "low_mhz": self.low_mhz,
                "harmonic": self.harmonic, "feasible": self.feasible}


def harmonic_advised(batch: WindowBatch, rows: np.ndarray, col: np.ndarray, target,
                     window) -> np.ndarray:
    """Where harmonic imaging is advised, as :func:`planner.engine.decisions.harmonic_decision`
    decides it: not contraindicated, a harmonic-capable probe, routine for the exam
    (:data:`~planner.engine.decisions.ROUTINE_HARMONIC_EXAMS`, not endocavitary) or clutter
    likely from :data:`~planner.engine.decisions.CLUTTER_FAT_MM` of subcutaneous fat at the
    window (Chandak2018), and a transmit frequency in the probe's band whose harmonic reaches
    (min(harmonic reach, probe top / 2) not below the probe's lowest frequency).
    """
    probes = batch.probes.probes
    p_low = np.array([p.low_mhz for p in probes])[col]
    p_high = np.array([p.high_mhz for p in probes])[col]
    capable = np.array([p.harmonic for p in probes], dtype=bool)[col]
    subcut = np.array([lay.role == "subcutaneous_fat" for lay in batch.stacks.layers], dtype=bool)
    fat_mm = np.cumsum(np.where(subcut[None, :], batch.arrays["thickness_cm"], 0.0), axis=1)[:, -1] * 10.0
    top = np.minimum(batch.harmonic_ceiling_mhz[rows], p_high / 2.0)
    clutter = (fat_mm[rows] >= CLUTTER_FAT_MM) | harmonic_routine(target, window)
    return (not target.harmonic_contraindicated) & capable & clutter & (top >= p_low)


def start_of_rows(batch: WindowBatch, rows: np.ndarray, col: np.ndarray, target,
                  depth_known: bool = False) -> np.ndarray:
    """The plan's start frequency (:func:`planner.engine.start.start_rows`) for the rows of a
    window batch on their chosen probes: the reach of 80 % of the sampled patients of each row
    (:mod:`planner.engine.spread`, every row's draws in one vectorised solve). [MHz]"""
    from planner.engine import spread
    from planner.engine.artefacts import ABERRATING_WALL_MM
    from planner.engine.reach import ABERRATING_ROLES
    from planner.engine.start import start_rows
    probes = batch.probes.probes
    budget = (batch.probe_budget_db if batch.probe_budget_db is not None
              else np.full(batch.depth_cm.shape, batch.budget_db)) - batch.interface_loss_db
    wall_cols = np.array([lay.role in ABERRATING_ROLES for lay in batch.stacks.layers], dtype=bool)
    t = np.asarray(batch.arrays["thickness_cm"], dtype=float)[rows]
    st = batch.stacks
    inputs = spread.SpreadInputs(
        t, np.asarray(batch.arrays["attenuation_db_per_cm_mhz"], dtype=float),
        np.asarray(batch.arrays["attenuation_exponent"], dtype=float),
        spread.wall_prefix(t[0], float(st.wall_cm[rows][0])), wall_cols,
        spread.wall_sigma_log(st.wall_low_cm[rows], st.wall_high_cm[rows], depth_known),
        budget[rows], np.array([spread.budget_sd_db(probes[c]) for c in col]),
        batch.bandwidth_fraction[rows], batch.low_edge_mhz[rows])
    margin = spread.robust_reach_mhz(spread.sampled_ceilings_mhz(inputs))
    wall_mm = 10.0 * np.where(wall_cols[None, :], batch.arrays["thickness_cm"], 0.0).sum(axis=1)[rows]
    start, _, _ = start_rows(margin, batch.sigma_ns[rows], wall_mm, [probes[c].type for c in col],
                             np.array([probes[c].high_mhz for c in col]),
                             batch.probes.low_mhz[rows, col], batch.probes.high_mhz[rows, col],
                             target.exam_type, ABERRATING_WALL_MM)
    return start


def sweep_plans(request: PlanRequest, bmi) -> list[SweepRow]:
    """One plan headline per BMI for a request (the request's BMI is replaced by each value).

    Windows are ranked per patient as :func:`planner.engine.plan.rank_assessments` does:
    feasible windows first, then by round-trip loss at the highest feasible band top (or
    :data:`REFERENCE_FREQUENCY_MHZ`); a window deeper than a measured depth is skipped.
    """
    target = load_library().get(request.target_id)
    windows = ([_window(target, request.window_id)] if request.window_id
               else windows_for_side(target, side_of(request, target)))
    inventory = load_inventory(request.probes_path)
    if request.qa_path or inventory.qa_log:
        from planner.engine.qa_budget import calibrated_inventory
        inventory = calibrated_inventory(inventory, request.qa_path)[0]
    if request.prior is not None:
        raise InputError("the prior-exam calibration (--prior-frequency-mhz, --prior-fade-cm) is "
                         "for one patient's plan, not a BMI sweep")
    b = np.atleast_1d(np.asarray(bmi, dtype=float))
    patient = replace(patient_for_exam(request.patient, exam_type_of(request, target)),
                      bmi=float(b[0]), bmi_given=True)
    reference = windows[0]
    ratio = measured_wall_ratio(load_wall_models()[reference.wall], patient, reference.wall_factor, b)
    batches = assess_batches([build_stack_batch(patient, w, bmi=b, wall_ratio=ratio) for w in windows],
                             target, inventory)
    bad = ~batches[0].stacks.valid
    if bad.any():
        raise InputError(f"measured depth {patient.depth_cm:g} cm is not deeper than the body wall at "
                         f"{reference.name} for BMI {b[bad][0]:g}")
    rows = np.arange(b.size)
    valid = np.stack([wb.stacks.valid for wb in batches])                       # (W, N)
    feasible = np.stack([wb.feasible for wb in batches]) & valid
    best_high = np.stack([wb.probes.high_mhz[rows, np.maximum(wb.probes.best, 0)] for wb in batches])
    ref = np.where(feasible.any(axis=0), np.where(feasible, best_high, -np.inf).max(axis=0),
                   REFERENCE_FREQUENCY_MHZ)
    loss = np.stack([wb.loss_db(ref) for wb in batches])
    keys = window_rank_keys(feasible, np.where(valid, loss, np.inf), [w.practice_order for w in windows],
                            [w.adjunct for w in windows])
    alive = np.ones_like(valid)
    for key in (np.where(valid, k, np.inf) for k in keys):
        k = np.where(alive, key, np.inf)
        alive &= k == k.min(axis=0, keepdims=True)
    chosen = np.argmax(alive, axis=0)
    out: list[SweepRow] = []
    cols = np.array([int(batches[chosen[i]].probes.best[i]) for i in rows])
    starts = np.full(b.size, np.nan)
    for w, wb in enumerate(batches):          # one vectorised start solve per window
        sel = rows[(chosen == w) & (cols >= 0)]
        sel = sel[wb.probes.feasible[sel, cols[sel]]] if sel.size else sel
        if sel.size:
            starts[sel] = start_of_rows(wb, sel, cols[sel], target,
                                        depth_known=request.patient.depth_cm is not None)
    for i in rows:
        wb = batches[chosen[i]]
        col = int(cols[i])
        if col < 0:
            out.append(SweepRow(float(b[i]), windows[chosen[i]].id, None, None, None, None, False, False))
            continue
        probe = wb.probes.probes[col]
        ok = bool(wb.probes.feasible[i, col])
        if ok:
            low, high = float(wb.probes.low_mhz[i, col]), float(wb.probes.high_mhz[i, col])
        else:
            low = probe.low_mhz
            high = max(low, min(probe.high_mhz, float(wb.probe_ceiling_mhz[i])))
        harmonic = bool(harmonic_advised(wb, np.array([i]), np.array([col]), target,
                                         windows[chosen[i]])[0])
        start = round(float(starts[i]), 1) if ok else None
        out.append(SweepRow(float(b[i]), windows[chosen[i]].id, probe.id, start, round(high, 1),
                            round(low, 1), harmonic, ok))
    return out
