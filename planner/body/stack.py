"""Layer stacks: the path from the skin to the target through one window.

A stack is the window's body wall (from the wall model, scaled by the window's wall
factor and by any measured thickness) followed by the organ path of the target library,
changed by the patient's conditions. Thicknesses are true thicknesses; the scanner's
displayed depths come from :mod:`planner.physics.sound_speed`.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from planner.body.conditions import (ASCITES_DEPTH_CM,
                                     STEATOSIS_ATTENUATION_DB_PER_CM_MHZ,
                                     STEATOSIS_SPEED_M_PER_S)
from planner.body.gestation import GROWTH_ROLES, fetal_skull_tissue, grown_thickness_cm
from planner.body.patient import Patient
from planner.body.walls import PANNUS_BMI, WallModel, load_wall_models, pannus_fat_mm, \
    wall_layers_band_mm
from planner.physics.tissues import Tissue, get_tissue
from planner.records import record

FAT_ROLES = frozenset({"subcutaneous_fat", "preperitoneal_fat", "perirenal_fat", "fossa_fat"})
PREGNANCY_LATE_FAT_FACTOR = 0.9
"""Fat factor from 28 weeks when BMI >= 25 (Kennedy2012 longitudinal; derived)."""


@record
class Layer:
    """One layer of a stack."""

    tissue: Tissue
    thickness_cm: float
    role: str
    label: str


@record(slots=False)
class LayerStack:
    """The layers from the skin to the target through one window.

    Attributes
    ----------
    layers : tuple of Layer
    wall_cm : float
        Body-wall thickness (all wall layers). [cm]
    wall_band_cm : (float, float)
        16th and 84th centile of the wall (equal to wall_cm when measured). [cm]
    notes : tuple of str
        Assumptions made while building the stack.
    """

    window_id: str
    wall_id: str
    layers: tuple[Layer, ...]
    wall_cm: float
    wall_band_cm: tuple[float, float]
    notes: tuple[str, ...] = ()

    @property
    def depth_cm(self) -> float:
        """True skin-to-target depth. [cm]"""
        return float(sum(lay.thickness_cm for lay in self.layers))

    @property
    def fat_cm(self) -> float:
        """Total fat in the wall. [cm]"""
        return float(sum(lay.thickness_cm for lay in self.layers if lay.role in FAT_ROLES))

    @property
    def subcutaneous_fat_cm(self) -> float:
        """Subcutaneous fat only. [cm]"""
        return float(sum(lay.thickness_cm for lay in self.layers if lay.role == "subcutaneous_fat"))

    def arrays(self) -> dict[str, np.ndarray]:
        """Per-layer arrays: thickness_cm, speed_m_per_s, impedance_mrayl, alpha0, exponent."""
        return {
            "thickness_cm": np.array([lay.thickness_cm for lay in self.layers]),
            "speed_m_per_s": np.array([lay.tissue.speed_m_per_s for lay in self.layers]),
            "impedance_mrayl": np.array([lay.tissue.impedance_mrayl for lay in self.layers]),
            "attenuation_db_per_cm_mhz": np.array(
                [lay.tissue.attenuation_db_per_cm_mhz for lay in self.layers]),
            "attenuation_exponent": np.array([lay.tissue.attenuation_exponent for lay in self.layers]),
        }


def steatotic_liver(grade: int) -> Tissue:
    """The liver tissue row changed for a steatosis grade (1-3)."""
    base = get_tissue("liver")
    alpha = STEATOSIS_ATTENUATION_DB_PER_CM_MHZ[grade]
    speed = STEATOSIS_SPEED_M_PER_S[grade]
    prov = dict(base.provenance, attenuation_db_per_cm_mhz=alpha, speed_m_per_s=speed)
    names = {1: "mild", 2: "moderate", 3: "severe"}
    return replace(base, id=f"liver_steatosis_{grade}", name=f"Liver, {names[grade]} steatosis",
                   speed_m_per_s=float(speed.value),
                   attenuation_db_per_cm_mhz=float(alpha.value), provenance=prov)


def wall_thickness_mm(model: WallModel, bmi, sex: str | None, wall_factor: float, *,
                      gestation_weeks: float | None = None, pannus_allowed: bool = True
                      ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Wall layer thicknesses for N patients at one window: median, 16th and 84th centile. [mm]

    The one wall model of the engine: :func:`build_stack` (one patient) and the vectorised
    sweep call it alike. The pannus (a model with ``pannus``, BMI >= :data:`PANNUS_BMI`,
    ``pannus_allowed`` false when the wall or fat was measured) is assumed lifted: the fold
    fat replaces the subcutaneous layer and the band widens to the fat through the pannus.
    From 28 weeks of pregnancy at BMI >= 25 the lower-abdominal fat is scaled by
    :data:`PREGNANCY_LATE_FAT_FACTOR`.

    Parameters
    ----------
    bmi : array, shape (N,)
        Body-mass index of each patient. [kg/m^2]

    Returns
    -------
    median, low, high : arrays, shape (N, n_layers)
        Layer thicknesses, scaled by ``wall_factor``. [mm]
    pannus : array of bool, shape (N,)
        Where the pannus was assumed lifted.
    """
    b = np.atleast_1d(np.asarray(bmi, dtype=float))
    median, low, high = (v * wall_factor for v in wall_layers_band_mm(model, b, sex))
    roles = [lay.role for lay in model.layers]
    lifted_mask = np.zeros(b.shape, dtype=bool)
    if model.pannus and pannus_allowed and "subcutaneous_fat" in roles:
        i = roles.index("subcutaneous_fat")
        lifted, through = (np.asarray(v, dtype=float) * wall_factor for v in pannus_fat_mm(model, b, sex))
        lifted_mask = b >= PANNUS_BMI
        median[:, i] = np.where(lifted_mask, lifted, median[:, i])
        low[:, i] = np.where(lifted_mask, np.minimum(low[:, i], lifted), low[:, i])
        high[:, i] = np.where(lifted_mask, np.maximum(high[:, i], through), high[:, i])
    if model.late_pregnancy_fat and (gestation_weeks or 0) >= 28:
        factor = np.where(b >= 25, PREGNANCY_LATE_FAT_FACTOR, 1.0)[:, None]
        fat_cols = np.array([r in FAT_ROLES for r in roles])
        for arr in (median, low, high):
            arr[:, fat_cols] *= factor
    return median, low, high, lifted_mask


def wall_model_layers(model: WallModel, patient: Patient, wall_factor: float,
                      window_label: str) -> tuple[list[Layer], tuple[float, float], list[str]]:
    """Wall layers for a patient at a window, with the 16th-84th centile band. [cm]"""
    notes: list[str] = []
    median, low, high, lifted = wall_thickness_mm(
        model, patient.bmi, patient.sex, wall_factor, gestation_weeks=patient.gestation_weeks,
        pannus_allowed=patient.wall_mm is None and patient.fat_mm is None)
    median, low, high = median[0], low[0], high[0]
    if lifted[0]:
        i = [lay.role for lay in model.layers].index("subcutaneous_fat")
        notes.append(f"{window_label}: pannus assumed lifted (fold fat {median[i]:.0f} mm; "
                     f"through the pannus about {high[i]:.0f} mm)")
    layers = [Layer(get_tissue(lay.tissue), float(t) / 10.0, lay.role,
                    lay.role.replace("_", " "))
              for lay, t in zip(model.layers, median)]
    return layers, (float(low.sum()) / 10.0, float(high.sum()) / 10.0), notes


def measured_wall_ratio(model: WallModel, patient: Patient, wall_factor: float, bmi=None) -> np.ndarray:
    """Ratio measured / modelled for the wall (or its subcutaneous fat), 1 when not measured.

    Parameters
    ----------
    bmi : array, shape (N,), optional
        Patients' BMI (default: the patient's). [kg/m^2]

    Returns
    -------
    array, shape (N,)
    """
    b = np.atleast_1d(np.asarray(patient.bmi if bmi is None else bmi, dtype=float))
    if patient.wall_mm is None and patient.fat_mm is None:
        return np.ones(b.shape)
    median, _, _, _ = wall_thickness_mm(model, b, patient.sex, wall_factor,
                                        gestation_weeks=patient.gestation_weeks, pannus_allowed=False)
    layers_cm = median / 10.0
    if patient.wall_mm is not None:
        return patient.wall_mm / (10.0 * layers_cm.sum(axis=1))
    roles = [lay.role for lay in model.layers]
    if "subcutaneous_fat" not in roles:
        return np.ones(b.shape)
    fat = 10.0 * layers_cm[:, roles.index("subcutaneous_fat")]
    return np.where(fat > 0, patient.fat_mm / np.where(fat > 0, fat, 1.0), 1.0)


@record(slots=False)
class StackBatch:
    """The stacks of one window for N patients who differ in BMI and measured depth.

    Attributes
    ----------
    layers : tuple of Layer
        Layer identities (tissue, role, label) with the first patient's thicknesses.
    thickness_cm : array, shape (N, n_layers)
        Each patient's layer thicknesses. [cm]
    wall_cm, wall_low_cm, wall_high_cm : arrays, shape (N,)
        Body wall and its 16th-84th centile band. [cm]
    valid : array of bool, shape (N,)
        False where a measured depth is not deeper than this window's wall.
    notes : tuple of str
        Assumptions made for the first patient.
    """

    window_id: str
    wall_id: str
    layers: tuple[Layer, ...]
    thickness_cm: np.ndarray
    wall_cm: np.ndarray
    wall_low_cm: np.ndarray
    wall_high_cm: np.ndarray
    valid: np.ndarray
    above_path_cm: np.ndarray
    notes: tuple[str, ...] = ()

    def stack(self, i: int = 0) -> LayerStack:
        """The stack of patient ``i`` as layers."""
        layers = tuple(Layer(lay.tissue, t, lay.role, lay.label)
                       for lay, t in zip(self.layers, self.thickness_cm[i].tolist()))
        return LayerStack(window_id=self.window_id, wall_id=self.wall_id, layers=layers,
                          wall_cm=float(self.wall_cm[i]),
                          wall_band_cm=(float(self.wall_low_cm[i]), float(self.wall_high_cm[i])),
                          notes=self.notes)

    def arrays(self) -> dict[str, np.ndarray]:
        """Per-layer arrays: thickness_cm (N, n) and the tissue values (n,)."""
        return {
            "thickness_cm": self.thickness_cm,
            "speed_m_per_s": np.array([lay.tissue.speed_m_per_s for lay in self.layers]),
            "impedance_mrayl": np.array([lay.tissue.impedance_mrayl for lay in self.layers]),
            "attenuation_db_per_cm_mhz": np.array(
                [lay.tissue.attenuation_db_per_cm_mhz for lay in self.layers]),
            "attenuation_exponent": np.array([lay.tissue.attenuation_exponent for lay in self.layers]),
        }


def _organ_path(patient: Patient, window, model: WallModel, notes: list[str]) -> list[Layer]:
    """The layers below the wall: free fluid when present, then the window's organ path."""
    layers: list[Layer] = []
    grade = patient.conditions.get("ascites")
    if grade and model.ascites_beneath:
        depth = float(ASCITES_DEPTH_CM[grade].value)
        layers.append(Layer(get_tissue("ascites"), depth, "ascites", "free fluid (ascites)"))
    liver_grade = patient.conditions.get("steatosis")
    weeks = patient.gestation_weeks
    for step in window.path:
        tissue = get_tissue(step.tissue)
        role = getattr(step, "role", None) or "path"
        structure = getattr(step, "label", "")
        thickness = step.thickness_cm
        if weeks is not None and role in GROWTH_ROLES:
            thickness = grown_thickness_cm(role, thickness, float(weeks))
            if role == "fetal_skull":
                tissue = fetal_skull_tissue(float(weeks))
                structure = ""
        label = f"{structure} ({tissue.name.lower()} values)" if structure else tissue.name
        if liver_grade and tissue.id == "liver":
            tissue = steatotic_liver(liver_grade)
            label = tissue.name
        if role == "bladder" and "empty_bladder" in patient.conditions:
            tissue, label = get_tissue("soft_tissue"), "bowel loops (bladder empty)"
            notes.append(f"{window.name}: empty bladder, bowel takes the place of the bladder window")
        layers.append(Layer(tissue, thickness, role, label))
    return layers


DEPTH_MARGIN_CM: float = 0.05
"""A measured depth must lie this far below the wall to leave an organ path (common practice). [cm]"""


def build_stack_batch(patient: Patient, window, *, bmi=None, depth_cm=None,
                      wall_ratio=None) -> StackBatch:
    """Build the stacks of one target window for N patients (the engine's one stack builder).

    Parameters
    ----------
    patient : Patient
        Sex, conditions, gestation and measured wall or fat shared by all N.
    window : planner.library.targets.Window
    bmi : array, shape (N,), optional
        BMI of each patient (default: the patient's). [kg/m^2]
    depth_cm : array, shape (N,), optional
        Measured skin-to-target depth, NaN where not measured (default: the patient's);
        the organ path is scaled to honour it. [cm]
    wall_ratio : array, shape (N,), optional
        Measured / modelled wall (see :func:`measured_wall_ratio`, taken at the plan's
        reference window so that every window is scaled alike); default: this window's.
    """
    model = load_wall_models()[window.wall]
    b = np.atleast_1d(np.asarray(patient.bmi if bmi is None else bmi, dtype=float))
    measured_any = patient.wall_mm is not None or patient.fat_mm is not None
    median, low, high, lifted = wall_thickness_mm(
        model, b, patient.sex, window.wall_factor, gestation_weeks=patient.gestation_weeks,
        pannus_allowed=not measured_any)
    notes: list[str] = []
    if lifted[0]:
        i = [lay.role for lay in model.layers].index("subcutaneous_fat")
        notes.append(f"{window.name}: pannus assumed lifted (fold fat {median[0, i]:.0f} mm; "
                     f"through the pannus about {high[0, i]:.0f} mm)")
    ratio = (measured_wall_ratio(model, patient, window.wall_factor, b) if wall_ratio is None
             else np.broadcast_to(np.asarray(wall_ratio, dtype=float), b.shape))
    layers_cm = median / 10.0
    if measured_any:                 # a measured wall scales every wall layer; measured fat, the fat
        cols = np.array([patient.wall_mm is not None or lay.role == "subcutaneous_fat"
                         for lay in model.layers])
        layers_cm = np.where(cols[None, :], layers_cm * ratio[:, None], layers_cm)
        fat_col = np.array([lay.role == "subcutaneous_fat" for lay in model.layers])
        if patient.wall_mm is not None and patient.fat_mm is not None and fat_col.any():
            # both measured: the wall keeps its measured total and the fat its measured share
            # of it; the other wall layers share the rest in the model's proportions
            total = layers_cm.sum(axis=1)
            fat = total * min(patient.fat_mm / patient.wall_mm, 1.0)
            rest = np.where(fat_col[None, :], 0.0, layers_cm)
            rest_sum = rest.sum(axis=1)
            scale_rest = np.where(rest_sum > 0, (total - fat) / np.where(rest_sum > 0, rest_sum, 1.0), 0.0)
            layers_cm = np.where(fat_col[None, :], fat[:, None], rest * scale_rest[:, None])
    wall_cm = layers_cm.sum(axis=1)
    low_cm, high_cm = low.sum(axis=1) / 10.0, high.sum(axis=1) / 10.0
    if patient.wall_mm is not None:
        low_cm, high_cm = wall_cm, wall_cm
    wall_layers = [Layer(get_tissue(lay.tissue), float(t), lay.role, lay.role.replace("_", " "))
                   for lay, t in zip(model.layers, layers_cm[0])]
    organ = _organ_path(patient, window, model, notes)
    n_extra = len(organ) - len(window.path)
    fixed = np.array([lay.thickness_cm for lay in organ[:n_extra]])
    path = np.array([lay.thickness_cm for lay in organ[n_extra:]])
    unscaled = np.concatenate([layers_cm, np.broadcast_to(fixed, (b.size, fixed.size)),
                               np.broadcast_to(path, (b.size, path.size))], axis=1)
    path_cm = float(sum(lay.thickness_cm for lay in organ[n_extra:]))
    above = np.cumsum(unscaled, axis=1)[:, -1] - path_cm   # summed in layer order, as depth_cm
    want = np.atleast_1d(np.asarray(patient.depth_cm if depth_cm is None else depth_cm, dtype=float)) \
        if (depth_cm is not None or patient.depth_cm is not None) else np.full(b.shape, np.nan)
    want = np.broadcast_to(want, b.shape)
    measured_depth = ~np.isnan(want)
    valid = ~measured_depth | ((want > above + DEPTH_MARGIN_CM) & (path_cm > 0))
    scale = np.where(measured_depth & valid, (want - above) / max(path_cm, 1e-12), 1.0)
    thickness = np.concatenate([layers_cm, np.broadcast_to(fixed, (b.size, fixed.size)),
                                path[None, :] * scale[:, None]], axis=1)
    layers = tuple(wall_layers + organ)
    return StackBatch(window_id=window.id, wall_id=window.wall, layers=layers, thickness_cm=thickness,
                      wall_cm=wall_cm, wall_low_cm=low_cm, wall_high_cm=high_cm,
                      valid=valid, above_path_cm=above, notes=tuple(notes))


def build_stack(patient: Patient, window, *, wall_ratio: float | None = None) -> LayerStack:
    """Build the layer stack of one target window for one patient.

    One row of :func:`build_stack_batch`: the modelled (or measured) wall, then free fluid,
    then the organ path, scaled so that a measured skin-to-target depth is honoured.
    """
    return build_stack_batch(patient, window, wall_ratio=wall_ratio).stack(0)
