"""Department file kinds for ``scanplan protocol check``: recognise a file's kind, check it
against its own model.

:data:`FILE_KINDS` is the table, in recognition order: each row names the kind, says how to
recognise it from the file's top-level keys, and names the loader that checks it completely
(every problem as ``file:line:col: key.path: message``). Adding a kind is one row. A file
no row recognises is checked as a protocol (the command's first purpose), so that its
problems are still reported in full; ``--kind`` forces one kind.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Mapping
from importlib import import_module
from typing import Any

from planner.errors import DataError, InputError
from planner.records import record

__all__ = ["DEFAULT_KIND", "FILE_KINDS", "FileKind", "check_department_files", "kind_of"]


@record(slots=False)
class FileKind:
    """One department file kind: how to recognise it and which loader checks it.

    ``loader`` is ``"module:function"``; the function takes the path (protocols also the
    target library) and raises :class:`planner.errors.DataError` listing every problem.
    """

    name: str
    label: str
    recognise: Callable[[Mapping[str, Any]], bool]
    loader: str


def _has(*keys: str) -> Callable[[Mapping[str, Any]], bool]:
    return lambda data: any(k in data for k in keys)


FILE_KINDS: tuple[FileKind, ...] = (
    FileKind("protocol", "protocol", _has("views"), "planner.protocol.loader:load_protocol"),
    FileKind("plan", "plan file", _has("target", "computed", "decisions"),
             "planner.planfile:load_plan_inputs"),
    FileKind("probes", "probe inventory", _has("probes"), "planner.library.probes:load_inventory"),
    FileKind("policy", "local policy", _has("scan_time_limits", "exam_limits",
                                            "doppler_restrictions", "preferred_settings",
                                            "approved_by"),
             "planner.safety.policy:load_local_policy"),
    FileKind("trusted-keys", "trusted keys", _has("keys"), "planner.signing:load_trusted_keys"),
    FileKind("qa", "probe QA log", _has("measurements"), "planner.library.qa_log:load_qa_log"),
)
"""The department file kinds, in recognition order (first match wins)."""

DEFAULT_KIND = "protocol"
"""The kind a file no row recognises is checked as."""

KIND_NAMES: tuple[str, ...] = tuple(k.name for k in FILE_KINDS)


def _kind(name: str) -> FileKind:
    for kind in FILE_KINDS:
        if kind.name == name:
            return kind
    raise InputError(f"unknown file kind {name!r}; valid kinds: {', '.join(KIND_NAMES)}")


def kind_of(data: Any) -> FileKind:
    """The kind of a file from its parsed content (:data:`DEFAULT_KIND` when none fits)."""
    if isinstance(data, Mapping):
        for kind in FILE_KINDS:
            if kind.recognise(data):
                return kind
    return _kind(DEFAULT_KIND)


def _check(kind: FileKind, path: str, library: Any) -> list[str]:
    module, _, name = kind.loader.partition(":")
    load = getattr(import_module(module), name)
    try:
        if kind.name == "protocol":
            load(path, library=library)
        else:
            load(path)
    except DataError as exc:
        return list(exc.problems) or [exc.message]
    except InputError as exc:
        return [f"{path}: {exc.message}"]
    return []


def check_department_files(paths: list[str | os.PathLike[str]], *, kind: str | None = None,
                           library: Any = None) -> dict[str, tuple[str, list[str]]]:
    """Check each file against its kind's model: ``{path: (kind, problems)}``.

    Parameters
    ----------
    kind : str, optional
        Force this kind for every file (one of :data:`KIND_NAMES`; InputError otherwise);
        None recognises each file's kind from its top-level keys.
    """
    from planner.yamlio import load_user_yaml
    forced = _kind(kind) if kind is not None else None
    if library is None:
        from planner.library.targets import load_library
        library = load_library()
    results: dict[str, tuple[str, list[str]]] = {}
    for path in paths:
        shown = str(path)
        chosen = forced
        if chosen is None:
            try:
                chosen = kind_of(load_user_yaml(path, kind="department").data)
            except DataError:       # unreadable or not YAML: its loader says so in full
                chosen = _kind(DEFAULT_KIND)
        results[shown] = (chosen.name, _check(chosen, shown, library))
    return results
