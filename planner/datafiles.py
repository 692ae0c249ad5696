"""Read scanplan's own package data (trusted YAML shipped inside the package).

User-supplied files (protocols, probe inventories, local policy, saved plans) go
through :mod:`planner.yamlio` instead, which reports every problem with its line.
"""

from __future__ import annotations

from importlib import resources
from typing import Any

import yaml

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


def load_package_yaml(name: str) -> Any:
    """Load ``planner/data/<name>`` with the safe loader and return the parsed data."""
    text = (resources.files("planner") / "data" / name).read_text(encoding="utf-8")
    return yaml.load(text, Loader=_LOADER)
