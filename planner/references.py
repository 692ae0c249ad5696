"""The single bibliography of scanplan.

Every ``source`` key used anywhere in scanplan's data or code is a key of
:data:`REFERENCES`. The entries live in ``planner/data/references/*.yaml`` (one file
per area, so that areas can be edited independently); this module merges them and
refuses duplicate keys. A test checks that every key used in the data and in the
code is defined here.
"""

from __future__ import annotations

from functools import lru_cache

from planner.datafiles import load_package_yaml, package_yaml_names


@lru_cache(maxsize=1)
def load_references() -> dict[str, str]:
    """Return the merged bibliography ``{key: full citation}``.

    Raises
    ------
    ValueError
        When two files define the same key, or an entry is not a non-empty string.
    """
    merged: dict[str, str] = {}
    for name in package_yaml_names():
        if not name.startswith("references/"):
            continue
        shown = name.removeprefix("references/")
        data = load_package_yaml(name) or {}
        for key, citation in data.items():
            if key in merged:
                raise ValueError(f"reference key {key!r} defined twice (again in {shown})")
            if not isinstance(citation, str) or not citation.strip():
                raise ValueError(f"reference {key!r} in {shown} must be a citation string")
            merged[str(key)] = citation.strip()
    return merged


REFERENCES: dict[str, str] = load_references()


def citation(key: str) -> str:
    """Return the full citation of ``key``; ``ValueError`` names the key if unknown."""
    try:
        return REFERENCES[key]
    except KeyError:
        raise ValueError(f"unknown reference key {key!r}") from None
