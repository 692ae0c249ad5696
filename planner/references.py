"""The single bibliography of scanplan.

Every ``source`` key used anywhere in scanplan's data or code is a key of
:data:`REFERENCES`. The entries live in ``planner/data/references/*.yaml`` (one file
per area, so that areas can be edited independently); this module merges them and
refuses duplicate keys. A test checks that every key used in the data and in the
code is defined here.
"""

from __future__ import annotations

from functools import lru_cache
from importlib import resources

import yaml

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


@lru_cache(maxsize=1)
def load_references() -> dict[str, str]:
    """Return the merged bibliography ``{key: full citation}``.

    Raises
    ------
    ValueError
        When two files define the same key, or an entry is not a non-empty string.
    """
    merged: dict[str, str] = {}
    folder = resources.files("planner") / "data" / "references"
    for entry in sorted(folder.iterdir(), key=lambda p: p.name):
        if not entry.name.endswith(".yaml"):
            continue
        data = yaml.load(entry.read_text(encoding="utf-8"), Loader=_LOADER) or {}
        for key, citation in data.items():
            if key in merged:
                raise ValueError(f"reference key {key!r} defined twice (again in {entry.name})")
            if not isinstance(citation, str) or not citation.strip():
                raise ValueError(f"reference {key!r} in {entry.name} must be a citation string")
            merged[str(key)] = citation.strip()
    return merged


REFERENCES: dict[str, str] = load_references()


def citation(key: str) -> str:
    """Return the full citation of ``key``; ``ValueError`` names the key if unknown."""
    try:
        return REFERENCES[key]
    except KeyError:
        raise ValueError(f"unknown reference key {key!r}") from None
