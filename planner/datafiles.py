"""Read scanplan's own package data (trusted YAML shipped inside the package).

Package data is validated against its model (:mod:`planner.files.package`) by the test
suite, so at run time it is read with the fast C safe loader and no validation.
User-supplied files (protocols, probe inventories, local policy, saved plans) go
through :mod:`planner.yamlio` and :mod:`planner.files` instead, which report every
problem with its line.
"""

from __future__ import annotations

from functools import lru_cache
from importlib import resources
from typing import Any

import yaml

__all__ = ["PACKAGE_FILES", "load_package_yaml", "package_data", "vocabulary"]

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

PACKAGE_FILES: tuple[str, ...] = ("tissues.yaml", "targets.yaml", "walls.yaml", "probes.yaml",
                                  "vessels.yaml", "safety.yaml", "vocabulary.yaml")
"""The package data files, each with a model in :mod:`planner.files.package`."""


def load_package_yaml(name: str) -> Any:
    """Load ``planner/data/<name>`` with the safe loader and return the parsed data."""
    text = (resources.files("planner") / "data" / name).read_text(encoding="utf-8")
    return yaml.load(text, Loader=_LOADER)


@lru_cache(maxsize=None)
def package_data(name: str) -> Any:
    """``planner/data/<name>`` parsed once and shared; callers must not modify it."""
    return load_package_yaml(name)


@lru_cache(maxsize=1)
def vocabulary() -> dict[str, Any]:
    """The shared ids of ``planner/data/vocabulary.yaml``: ``exam_types`` and ``modes``
    (id -> label), ``layer_roles`` (role -> tissue) and tuples of ids for ``probe_types``,
    ``regions``, ``reflectors``, ``surface_reflectors``, ``orientations``, ``curvatures``
    and ``risk_levels``."""
    data = package_data("vocabulary.yaml")
    out: dict[str, Any] = {key: dict(data[key]) for key in ("exam_types", "modes",
                                                            "layer_roles")}
    out.update({key: tuple(value) for key, value in data.items() if isinstance(value, list)})
    return out
