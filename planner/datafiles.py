"""Read scanplan's own package data (trusted YAML shipped inside the package).

Package data is validated against its model (:mod:`planner.files.package`) by the test
suite, so at run time it is read fast and without validation. User-supplied files
(protocols, probe inventories, local policy, saved plans) go through :mod:`planner.yamlio`
and :mod:`planner.files` instead, which report every problem with its line.

*Fast path.* Each YAML file has a compiled JSON twin in ``planner/data/compiled/`` that
records a checksum (CRC-32 and length) of the YAML text it was made from. Parsing JSON is about 30x faster
than constructing the same data from YAML, which is most of a command-line plan's start-up.
A twin is used only while its checksum matches the YAML beside it, so an edited YAML file is
never shadowed by stale data: it is read from YAML (slower) until ``python -m
planner.datafiles`` rewrites the twins, and a test fails while any twin is stale.
"""

from __future__ import annotations

import json
import zlib
from functools import lru_cache
from pathlib import Path
from typing import Any

__all__ = ["PACKAGE_FILES", "compile_package_data", "compiled_status", "load_package_yaml",
           "package_data", "package_yaml_names", "vocabulary"]

PACKAGE_FILES: tuple[str, ...] = ("tissues.yaml", "targets.yaml", "walls.yaml", "probes.yaml",
                                  "vessels.yaml", "safety.yaml", "vocabulary.yaml",
                                  "gestation.yaml")
"""The package data files, each with a model in :mod:`planner.files.package`."""


def _data_dir() -> Path:
    """``planner/data``. The package is always installed as files (never zipped), so a
    plain path serves; ``importlib.resources`` would import zipfile and tempfile (about
    7 ms) on every plan's start-up."""
    return Path(__file__).resolve().parent / "data"


def package_yaml_names() -> tuple[str, ...]:
    """Every YAML file of the package data, as paths relative to ``planner/data``
    (the :data:`PACKAGE_FILES` and the bibliography files ``references/*.yaml``)."""
    refs = sorted(entry.name for entry in (_data_dir() / "references").iterdir()
                  if entry.name.endswith(".yaml"))
    return PACKAGE_FILES + tuple(f"references/{name}" for name in refs)


def _twin(name: str) -> Path:
    return _data_dir() / "compiled" / (name.replace("/", "__").removesuffix(".yaml") + ".json")


def _yaml_load(text: str) -> Any:
    """Parse trusted package YAML with the C safe loader (PyYAML imported only when needed:
    with current twins a plan never parses YAML)."""
    import yaml
    return yaml.load(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader))


def _digest(text: str) -> str:
    """Checksum of a YAML text: CRC-32 and byte length. It only has to notice an edited file
    (not resist a forged one: the package data is trusted); ``zlib`` imports in about
    0.3 ms where ``hashlib`` loads OpenSSL (about 4 ms) at every start-up."""
    raw = text.encode("utf-8")
    return f"{zlib.crc32(raw):08x}-{len(raw)}"


def _read_twin(name: str, digest: str) -> Any:
    """The compiled data of ``name`` when its twin exists and matches ``digest``; else a
    sentinel (``_MISSING``)."""
    try:
        twin = json.loads(_twin(name).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return _MISSING
    if not isinstance(twin, dict) or twin.get("source_checksum") != digest:
        return _MISSING
    return twin.get("data")


_MISSING = object()


def load_package_yaml(name: str) -> Any:
    """Load ``planner/data/<name>`` and return freshly parsed data (the caller owns it).

    Uses the compiled JSON twin when it matches the YAML text, the C safe loader otherwise.
    """
    text = (_data_dir() / name).read_text(encoding="utf-8")
    data = _read_twin(name, _digest(text))
    if data is _MISSING:
        return _yaml_load(text)
    return data


@lru_cache(maxsize=None)
def package_data(name: str) -> Any:
    """``planner/data/<name>`` parsed once and shared; callers must not modify it."""
    return load_package_yaml(name)


def compiled_status() -> dict[str, str]:
    """``{name: "current" | "stale" | "missing"}`` for every package YAML file's twin."""
    out: dict[str, str] = {}
    for name in package_yaml_names():
        if not _twin(name).is_file():
            out[name] = "missing"
            continue
        text = (_data_dir() / name).read_text(encoding="utf-8")
        data = _read_twin(name, _digest(text))
        out[name] = "current" if data is not _MISSING and data == _yaml_load(text) else "stale"
    return out


def compile_package_data() -> list[str]:
    """Rewrite every compiled twin from its YAML (atomically); return the names written.

    Raises ``ValueError`` when a file's data does not survive a JSON round trip (a
    non-string key or a date, say), since its twin would then differ from the YAML.
    """
    from planner.atomicfile import atomic_write_text

    folder = _data_dir() / "compiled"
    folder.mkdir(exist_ok=True)
    written = []
    for name in package_yaml_names():
        text = (_data_dir() / name).read_text(encoding="utf-8")
        data = _yaml_load(text)
        encoded = json.dumps({"source": name, "source_checksum": _digest(text), "data": data},
                             ensure_ascii=False, separators=(",", ":"), sort_keys=False)
        if json.loads(encoded)["data"] != data:
            raise ValueError(f"{name}: its data does not survive a JSON round trip")
        atomic_write_text(folder / _twin(name).name, encoded + "\n", overwrite=True)
        written.append(name)
    return written


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


if __name__ == "__main__":  # python -m planner.datafiles: rewrite the compiled twins
    for written_name in compile_package_data():
        print(f"compiled {written_name}")
