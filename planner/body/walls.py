"""Body-wall layer models per acoustic-window family (vectorised over BMI).

Each layer's median thickness is ``max(floor, a + b (BMI - 25))`` with BMI clipped to
17-60 and a log-normal spread of coefficient of variation CV (CV + 0.1 above BMI 40):
``t_z = m exp(z sigma)``, ``sigma = sqrt(ln(1 + CV^2))``; z = -1 / 0 / +1 give the 16th /
50th / 84th centiles. Layer data and sources: ``planner/data/walls.yaml``.

References
----------
Gibney2010, Chandak2018, Milad2002, AfifiNomogram, Eley2019, Youness2007, Ezri2003,
FemoralDepth2009, Tonnesen1975, SCDThresholds (per layer; see the data file).
"""

from __future__ import annotations

from dataclasses import field
from functools import lru_cache
from typing import Any

import numpy as np

from planner.datafiles import package_data
from planner.provenance import Sourced
from planner.records import record

BMI_MODEL_RANGE: tuple[float, float] = (17.0, 60.0)
"""BMI range the wall model is fitted over; inputs outside it are clipped and flagged. [kg/m^2]"""


@record
class WallLayerModel:
    """One layer of a wall model; a/b are (female, male) pairs. [mm, mm per kg/m^2]"""

    role: str
    tissue: str
    a_mm: tuple[float, float]
    b_mm_per_bmi: tuple[float, float]
    floor_mm: float
    cv: float
    provenance: Sourced


@record
class WallModel:
    """A body-wall model: ordered layers from the skin inwards."""

    id: str
    name: str
    layers: tuple[WallLayerModel, ...]
    bmi_dependent: bool = True
    pannus: bool = False
    notes: tuple[str, ...] = field(default=())
    intercostal: bool = False
    ascites_beneath: bool = False
    late_pregnancy_fat: bool = False
    endocavitary: bool = False
    includes_bone: bool = False


def _pair(value) -> tuple[float, float]:
    if isinstance(value, dict):
        return float(value["female"]), float(value["male"])
    return float(value), float(value)


WALL_FACTS: tuple[str, ...] = ("intercostal", "ascites_beneath", "late_pregnancy_fat",
                               "endocavitary", "includes_bone")
"""Boolean facts a wall family may state in ``walls.yaml`` (see its header)."""


@lru_cache(maxsize=1)
def load_wall_models() -> dict[str, WallModel]:
    """Return every wall model ``{id: WallModel}`` (cached)."""
    data = package_data("walls.yaml")["walls"]
    models = {}
    for wall_id, raw in data.items():
        layers = tuple(
            WallLayerModel(role=lay["role"], tissue=lay["tissue"], a_mm=_pair(lay["a_mm"]),
                           b_mm_per_bmi=_pair(lay["b_mm_per_bmi"]),
                           floor_mm=float(lay["floor_mm"]), cv=float(lay["cv"]),
                           provenance=Sourced(lay["a_mm"], lay["source"], lay["status"],
                                              lay.get("note", "")))
            for lay in raw["layers"])
        facts: dict[str, Any] = {fact: bool(raw.get(fact, False)) for fact in WALL_FACTS}
        models[wall_id] = WallModel(id=wall_id, name=raw["name"], layers=layers,
                                    bmi_dependent=raw.get("bmi_dependent", True),
                                    pannus=raw.get("pannus", False), **facts)
    return models


def _sex_weights(sex: str | None) -> tuple[float, float]:
    return {"female": (1.0, 0.0), "male": (0.0, 1.0)}.get(sex or "", (0.5, 0.5))


def wall_layers_mm(model: WallModel, bmi, sex: str | None = None, z: float = 0.0) -> np.ndarray:
    """Layer thicknesses of a wall model. [mm]

    Parameters
    ----------
    model : WallModel
    bmi : float or array, shape (N,)
        Body-mass index; clipped to :data:`BMI_MODEL_RANGE`. [kg/m^2]
    sex : {'female', 'male', None}
        None gives the mean of the female and male values.
    z : float
        Standard-normal centile of the log-normal spread (0 = median, +1 = 84th centile).

    Returns
    -------
    array, shape (..., n_layers)
    """
    b = np.clip(np.asarray(bmi, dtype=float), *BMI_MODEL_RANGE)
    delta = (b - 25.0) if model.bmi_dependent else np.zeros_like(b)
    wf, wm = _sex_weights(sex)
    out = []
    for layer in model.layers:
        a = wf * layer.a_mm[0] + wm * layer.a_mm[1]
        slope = wf * layer.b_mm_per_bmi[0] + wm * layer.b_mm_per_bmi[1]
        median = np.maximum(layer.floor_mm, a + slope * delta)
        if z:
            cv = layer.cv + np.where(b > 40.0, 0.1, 0.0)
            median = median * np.exp(z * np.sqrt(np.log1p(cv ** 2)))
        out.append(median)
    return np.stack(out, axis=-1)


def wall_layers_band_mm(model: WallModel, bmi, sex: str | None = None
                        ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Median, 16th and 84th centile layer thicknesses in one pass: :func:`wall_layers_mm` at
    z = 0, -1 and +1. [mm], each of shape (..., n_layers)"""
    b = np.clip(np.asarray(bmi, dtype=float), *BMI_MODEL_RANGE)
    delta = (b - 25.0) if model.bmi_dependent else np.zeros_like(b)
    wf, wm = _sex_weights(sex)
    extra_cv = np.where(b > 40.0, 0.1, 0.0)
    med, low, high = [], [], []
    for layer in model.layers:
        a = wf * layer.a_mm[0] + wm * layer.a_mm[1]
        slope = wf * layer.b_mm_per_bmi[0] + wm * layer.b_mm_per_bmi[1]
        median = np.maximum(layer.floor_mm, a + slope * delta)
        spread = np.sqrt(np.log1p((layer.cv + extra_cv) ** 2))
        med.append(median)
        low.append(median * np.exp(-1.0 * spread))
        high.append(median * np.exp(1.0 * spread))
    return np.stack(med, axis=-1), np.stack(low, axis=-1), np.stack(high, axis=-1)


PANNUS_BMI: float = 40.0
"""BMI from which a hanging pannus is assumed over suprapubic windows (Seif2023Pannus; from memory). [kg/m^2]"""

PANNUS_LIFTED_SLOPE_MM_PER_BMI: float = 0.8
"""Growth of the fat in the fold under a lifted pannus per BMI unit above 40 (from memory;
HabitusPracticeModel). [mm per kg/m^2]"""


def pannus_fat_mm(model: WallModel, bmi, sex: str | None = None):
    """Subcutaneous fat in the fold under a lifted pannus, and through the pannus itself. [mm]

    Under the lifted fold the fat continues from the window's model value at BMI 40 and grows
    0.8 mm per BMI unit (so the estimate has no step at 40); through the pannus it is about
    ``60 + 3 (BMI - 40)`` mm (both from memory, HabitusPracticeModel; Seif2023Pannus describes the
    hanging pannus). Below BMI 40 both equal the model value. Vectorised over ``bmi``.
    """
    b = np.clip(np.asarray(bmi, dtype=float), *BMI_MODEL_RANGE)
    i = [lay.role for lay in model.layers].index("subcutaneous_fat")
    regular = wall_layers_mm(model, b, sex)[..., i]
    at_40 = wall_layers_mm(model, PANNUS_BMI, sex)[..., i]
    excess = np.maximum(b - PANNUS_BMI, 0.0)
    lifted = np.where(b >= PANNUS_BMI, at_40 + PANNUS_LIFTED_SLOPE_MM_PER_BMI * excess, regular)
    through = np.where(b >= PANNUS_BMI, np.maximum(60.0 + 3.0 * excess, regular), regular)
    return lifted, through
