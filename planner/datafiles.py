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

__all__ = ["PACKAGE_FILES", "load_package_yaml", "vocabulary"]

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

PACKAGE_FILES: tuple[str, ...] = ("tissues.yaml", "targets.yaml", "walls.yaml", "probes.yaml",
                                  "vessels.yaml", "safety.yaml", "vocabulary.yaml")
"""The package data files, each with a model in :mod:`planner.files.package`."""


def load_package_yaml(name: str) -> Any:
    """Load ``planner/data/<name>`` with the safe loader and return the parsed data."""
    text = (resources.files("planner") / "data" / name).read_text(encoding="utf-8")
    return yaml.load(text, Loader=_LOADER)


@lru_cache(maxsize=1)
def vocabulary() -> dict[str, Any]:
    """The shared ids of ``planner/data/vocabulary.yaml``: ``exam_types`` and ``modes``
    (id -> label) and ``probe_types`` (a list)."""
    data = load_package_yaml("vocabulary.yaml")
    return {"exam_types": dict(data["exam_types"]), "modes": dict(data["modes"]),
            "probe_types": tuple(data["probe_types"])}
