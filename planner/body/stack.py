"""Layer stacks: the path from the skin to the target through one window.

A stack is the window's body wall (from the wall model, scaled by the window's wall
factor and by any measured thickness) followed by the organ path of the target library,
changed by the patient's conditions. Thicknesses are true thicknesses; the scanner's
displayed depths come from :mod:`planner.physics.sound_speed`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from planner.body.conditions import (ASCITES_DEPTH_CM,
                                     STEATOSIS_ATTENUATION_DB_PER_CM_MHZ,
                                     STEATOSIS_SPEED_M_PER_S)
from planner.body.patient import Patient
from planner.body.walls import PANNUS_BMI, WallModel, load_wall_models, pannus_fat_mm, \
    wall_layers_mm
from planner.physics.tissues import Tissue, get_tissue

FAT_ROLES = frozenset({"subcutaneous_fat", "preperitoneal_fat", "perirenal_fat", "fossa_fat"})
PREGNANCY_LATE_FAT_FACTOR = 0.9
"""Fat factor from 28 weeks when BMI >= 25 (Kennedy2012 longitudinal; derived)."""


@dataclass(frozen=True, slots=True)
class Layer:
    """One layer of a stack."""

    tissue: Tissue
    thickness_cm: float
    role: str
    label: str


@dataclass(frozen=True)
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


def wall_model_layers(model: WallModel, patient: Patient, wall_factor: float,
                      window_label: str) -> tuple[list[Layer], tuple[float, float], list[str]]:
    """Wall layers for a patient at a window, with the 16th-84th centile band. [cm]"""
    notes: list[str] = []
    median = wall_layers_mm(model, patient.bmi, patient.sex) * wall_factor
    low = wall_layers_mm(model, patient.bmi, patient.sex, z=-1.0) * wall_factor
    high = wall_layers_mm(model, patient.bmi, patient.sex, z=+1.0) * wall_factor
    roles = [lay.role for lay in model.layers]
    if model.pannus and patient.bmi >= PANNUS_BMI and patient.wall_mm is None \
            and patient.fat_mm is None and "subcutaneous_fat" in roles:
        i = roles.index("subcutaneous_fat")
        lifted, through = (float(v) for v in pannus_fat_mm(model, patient.bmi, patient.sex))
        lifted, through = lifted * wall_factor, through * wall_factor
        median[i], low[i], high[i] = lifted, min(low[i], lifted), max(high[i], through)
        notes.append(f"{window_label}: pannus assumed lifted (fold fat {lifted:.0f} mm; "
                     f"through the pannus about {through:.0f} mm)")
    if model.late_pregnancy_fat and (patient.gestation_weeks or 0) >= 28 and patient.bmi >= 25:
        for arr in (median, low, high):
            arr[[r in FAT_ROLES for r in roles]] *= PREGNANCY_LATE_FAT_FACTOR
    layers = [Layer(get_tissue(lay.tissue), float(t) / 10.0, lay.role,
                    lay.role.replace("_", " "))
              for lay, t in zip(model.layers, median)]
    return layers, (float(low.sum()) / 10.0, float(high.sum()) / 10.0), notes


def measured_wall_ratio(model: WallModel, patient: Patient, wall_factor: float) -> float:
    """Ratio measured / modelled for the wall (or its subcutaneous fat), 1 when not measured."""
    if patient.wall_mm is None and patient.fat_mm is None:
        return 1.0
    layers, _, _ = wall_model_layers(model, patient, wall_factor, "")
    if patient.wall_mm is not None:
        return patient.wall_mm / (10.0 * sum(lay.thickness_cm for lay in layers))
    fat = 10.0 * sum(lay.thickness_cm for lay in layers if lay.role == "subcutaneous_fat")
    return patient.fat_mm / fat if fat > 0 else 1.0


def build_stack(patient: Patient, window, *, wall_ratio: float = 1.0,
                path_scale: float = 1.0, measured: bool = False) -> LayerStack:
    """Build the layer stack of one target window for one patient.

    Parameters
    ----------
    patient : Patient
    window : planner.library.targets.Window
        The window (its wall id, wall factor and organ path).
    wall_ratio : float
        Measured / modelled wall thickness; scales the wall layers (all of them for a
        measured wall, the fat layers for a measured fat thickness).
    path_scale : float
        Scales the organ path so a measured skin-to-target depth is honoured.
    measured : bool
        True when the wall was measured (the uncertainty band collapses).
    """
    model = load_wall_models()[window.wall]
    layers, band, notes = wall_model_layers(model, patient, window.wall_factor, window.name)
    if wall_ratio != 1.0:
        fat_only = patient.wall_mm is None and patient.fat_mm is not None
        layers = [replace(lay, thickness_cm=lay.thickness_cm * wall_ratio)
                  if (not fat_only or lay.role == "subcutaneous_fat") else lay for lay in layers]
    wall_cm = sum(lay.thickness_cm for lay in layers)
    if measured:
        band = (wall_cm, wall_cm)
    grade = patient.conditions.get("ascites")
    if grade and model.ascites_beneath:
        depth = float(ASCITES_DEPTH_CM[grade].value)
        layers.append(Layer(get_tissue("ascites"), depth, "ascites", "free fluid (ascites)"))
    liver_grade = patient.conditions.get("steatosis")
    for step in window.path:
        tissue = get_tissue(step.tissue)
        role = getattr(step, "role", None) or "path"
        label = tissue.name
        if liver_grade and tissue.id == "liver":
            tissue = steatotic_liver(liver_grade)
            label = tissue.name
        if role == "bladder" and "empty_bladder" in patient.conditions:
            tissue, label = get_tissue("soft_tissue"), "bowel loops (bladder empty)"
            notes.append(f"{window.name}: empty bladder, bowel takes the place of the bladder window")
        layers.append(Layer(tissue, step.thickness_cm * path_scale, role, label))
    return LayerStack(window_id=window.id, wall_id=window.wall, layers=tuple(layers),
                      wall_cm=float(wall_cm), wall_band_cm=band, notes=tuple(notes))
