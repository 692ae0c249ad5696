"""A plan file as a whole document: inputs, the headline as computed
(:mod:`planner.headline`), the student's decisions and a supervisor's signature.

:func:`load_plan_document` reads a plan file with its stored sections;
:func:`write_document` writes one back atomically (used by ``scanplan draft sign``).
"""

from __future__ import annotations

import os
from typing import Any

from planner.records import record

__all__ = ["PlanDocument", "load_plan_document", "write_document"]

@record(slots=False)
class PlanDocument:
    """A loaded plan file.

    Attributes
    ----------
    inputs : planner.planfile.PlanInputs
    computed : dict or None
        The stored headline (None: a file saved before headlines were stored).
    signature : dict or None
        The stored signature section.
    data : dict
        The file's content as plain data (what a signature covers).
    path : str
    """

    inputs: Any
    computed: dict[str, Any] | None
    signature: dict[str, Any] | None
    data: dict[str, Any]
    path: str


def load_plan_document(path: str | os.PathLike[str]) -> PlanDocument:
    """Read a plan file with its stored sections (DataError listing every problem)."""
    from planner.planfile import KIND, inputs_from_data
    from planner.yamlio import ProblemCollector, load_user_yaml
    loaded = load_user_yaml(path, kind=KIND, max_bytes=200_000)
    collector = ProblemCollector(path, loaded)
    inputs = inputs_from_data(loaded.data, collector)
    collector.raise_if_any(title="Invalid plan file")
    data = loaded.data
    computed = data.get("computed") if isinstance(data.get("computed"), dict) else None
    signature = data.get("signature") if isinstance(data.get("signature"), dict) else None
    return PlanDocument(inputs, computed, signature, data, str(path))


def write_document(path: str | os.PathLike[str], data: dict[str, Any]) -> None:
    """Write a plan file's full content back, atomically (replacing the file)."""
    from planner.headline import FILE_HEADER
    from planner.yamlio import atomic_write_text, dump_yaml
    atomic_write_text(path, FILE_HEADER + dump_yaml(data), overwrite=True)
