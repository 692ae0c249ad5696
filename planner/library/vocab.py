"""The words of the target library: regions, exam types, reflectors, orientations, risk levels,
layer roles and the wall models windows may name (``planner/data/vocabulary.yaml`` and
``planner/data/walls.yaml``)."""

from __future__ import annotations

from planner.datafiles import package_data, vocabulary

__all__ = ["BONE_WALLS", "CURVATURES", "ENDOCAVITARY_WALLS", "EXAM_TYPES", "INTERCOSTAL_WALLS",
           "LAYER_ROLES", "ORIENTATIONS", "REFLECTORS", "REGIONS", "RISK_LEVELS",
           "SURFACE_REFLECTORS", "WALL_MODEL_IDS"]

_VOCABULARY = vocabulary()
_WALLS: dict = package_data("walls.yaml")["walls"]

WALL_MODEL_IDS: tuple[str, ...] = tuple(_WALLS)
"""Body-wall models a window may name (``planner/data/walls.yaml``, used by :mod:`planner.body`)."""

REGIONS: tuple[str, ...] = _VOCABULARY["regions"]
"""Body regions used to group targets."""

EXAM_TYPES: tuple[str, ...] = tuple(_VOCABULARY["exam_types"])
"""Exam types (``planner/data/vocabulary.yaml``); they select the thermal-index and scan-time
tables."""

REFLECTORS: tuple[str, ...] = _VOCABULARY["reflectors"]
"""Dominant echo type of what the exam must judge."""

SURFACE_REFLECTORS: tuple[str, ...] = _VOCABULARY["surface_reflectors"]
"""Echo type of one surface of interest."""

ORIENTATIONS: tuple[str, ...] = _VOCABULARY["orientations"]
"""Orientation of a surface relative to the skin."""

CURVATURES: tuple[str, ...] = _VOCABULARY["curvatures"]
"""Shape of a surface as the beam meets it."""

RISK_LEVELS: tuple[str, ...] = _VOCABULARY["risk_levels"]
"""Levels of calcification risk and of gas risk."""

LAYER_ROLES: dict[str, str] = _VOCABULARY["layer_roles"]
"""Optional roles of a path layer and the tissue each role requires.

``bladder``: the full-bladder window (replaced when the bladder is empty);
``stomach``: the water-filled stomach used as a window.
"""

INTERCOSTAL_WALLS: tuple[str, ...] = tuple(w for w, raw in _WALLS.items() if raw.get("intercostal"))
"""Wall models of intercostal windows (``intercostal: true`` in ``walls.yaml``); their windows
must give ``rib_gap_mm``."""

ENDOCAVITARY_WALLS: tuple[str, ...] = tuple(w for w, raw in _WALLS.items()
                                            if raw.get("endocavitary"))
"""Wall models of endocavitary routes (``endocavitary: true`` in ``walls.yaml``)."""

BONE_WALLS: tuple[str, ...] = tuple(w for w, raw in _WALLS.items() if raw.get("includes_bone"))
"""Wall models with bone in the wall itself (``includes_bone: true``); their windows set
``bone_in_path``."""
