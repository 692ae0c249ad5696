"""Vectorised planning over many scenarios at once (BMI x measured depth x ...).

For population studies, protocol sheets and benchmarks: the same physics as
:func:`planner.engine.make_plan` for one target window, evaluated on arrays. A test checks
that a scalar sweep agrees with ``make_plan``.
"""

from __future__ import annotations

import numpy as np

from planner.body.patient import Patient
from planner.body.stack import FAT_ROLES, PREGNANCY_LATE_FAT_FACTOR, build_stack
from planner.body.walls import load_wall_models, pannus_fat_mm, wall_layers_mm
from planner.engine.assess import signal_budget_db
from planner.library.probes import ProbeInventory, default_inventory
from planner.library.targets import load_library
from planner.physics import attenuation, beam, sound_speed
from planner.physics.constants import HARMONIC_CONVERSION_LOSS_DB


def _window(target, window_id):
    if window_id is None:
        return target.windows[0]
    for window in target.windows:
        if window.id == window_id:
            return window
    raise ValueError(f"unknown window {window_id!r}; valid: {', '.join(w.id for w in target.windows)}")


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
        Probe for the detail floor and band; default: the target's first usual probe type.

    Returns
    -------
    dict of arrays, shape (N,)
        ``depth_cm``, ``displayed_depth_cm``, ``depth_error_mm``, ``wall_mm``,
        ``ceiling_mhz``, ``harmonic_ceiling_mhz``, ``floor_mhz``, ``high_mhz``, ``feasible``.
    """
    target = load_library().get(target_id)
    window = _window(target, window_id)
    inventory = inventory or default_inventory()
    probe = inventory.get(probe_id) if probe_id else next(
        (p for t in target.probe_types for p in inventory.probes if p.type == t), inventory.probes[0])
    b = np.atleast_1d(np.asarray(bmi, dtype=float))
    model = load_wall_models()[window.wall]
    wall = wall_layers_mm(model, b, sex) * window.wall_factor / 10.0          # (N, n_wall) cm
    roles = [lay.role for lay in model.layers]
    if model.pannus and "subcutaneous_fat" in roles:
        lifted, _ = pannus_fat_mm(model, b, sex)
        wall[:, roles.index("subcutaneous_fat")] = lifted * window.wall_factor / 10.0
    if model.late_pregnancy_fat and (gestation_weeks or 0) >= 28:
        fat_cols = [r in FAT_ROLES for r in roles]
        wall[:, fat_cols] *= np.where(b >= 25, PREGNANCY_LATE_FAT_FACTOR, 1.0)[:, None]
    reference = build_stack(Patient(conditions=dict(conditions or {})), window)
    tail = reference.layers[len(model.layers):]
    path = np.array([lay.thickness_cm for lay in tail])
    if depth_cm is not None:
        want = np.atleast_1d(np.asarray(depth_cm, dtype=float))
        scale = (want - wall.sum(axis=1)) / max(path.sum(), 1e-9)
        scale = np.where(np.isnan(want), 1.0, np.maximum(scale, 0.0))
    else:
        scale = np.ones_like(b)
    layers = [lay for lay in reference.layers[:len(model.layers)]] + list(tail)
    thick = np.concatenate([wall, path[None, :] * scale[:, None]], axis=1)
    a0 = np.array([lay.tissue.attenuation_db_per_cm_mhz for lay in layers])
    y = np.array([lay.tissue.attenuation_exponent for lay in layers])
    c = np.array([lay.tissue.speed_m_per_s for lay in layers])
    iface = float(attenuation.interface_round_trip_loss_db(
        np.array([lay.tissue.impedance_mrayl for lay in layers])))
    budget = signal_budget_db(target)
    ceiling = attenuation.max_frequency_for_budget_mhz(budget, thick, a0, y, fixed_loss_db=iface)
    harmonic = attenuation.max_frequency_for_budget_mhz(
        budget, thick, a0, y, fixed_loss_db=iface + HARMONIC_CONVERSION_LOSS_DB.value, harmonic=True)
    depth = thick.sum(axis=1)
    shown = sound_speed.displayed_depth_cm(thick, c)
    f_num = np.maximum(probe.receive_f_number, depth * 10.0 / probe.aperture_mm)
    floor = np.maximum(beam.min_frequency_axial_mhz(target.detail_mm, probe.pulse_cycles),
                       beam.min_frequency_lateral_mhz(target.detail_mm, f_num))
    high = np.minimum(probe.high_mhz, ceiling)
    feasible = (high >= probe.low_mhz) & (np.maximum(floor, probe.low_mhz) <= high)
    return {"depth_cm": depth, "displayed_depth_cm": shown, "depth_error_mm": 10.0 * (shown - depth),
            "wall_mm": wall.sum(axis=1) * 10.0, "ceiling_mhz": ceiling,
            "harmonic_ceiling_mhz": harmonic, "floor_mhz": floor, "high_mhz": high,
            "feasible": feasible}
