"""Safe reading and atomic writing of user-supplied YAML files.

Protocols, probe inventories, local policies and saved plans come from users and
may be broken, huge or hostile. :func:`load_user_yaml` reads them with PyYAML's
safe loader and refuses, with every problem located at ``file:line:column``:

- a file that cannot be read, is larger than ``max_bytes``, is binary or is not
  UTF-8 text;
- YAML syntax errors (position from the parser's ``problem_mark``);
- alias bombs (aliases whose expansion exceeds ``max_nodes`` nodes) and
  recursive aliases;
- nesting deeper than ``max_depth``;
- duplicate keys in a mapping (PyYAML silently keeps the last one);
- tags other than the YAML core types, and a top level that is not a mapping.

The result, :class:`LoadedYaml`, holds plain Python data (``dict``, ``list``,
``str``, ``int``, ``float``, ``bool``, ``None``; timestamps stay text) and the
position of every key and list item, so that later validation can report
``file:line:col: key.path: message`` through :class:`ProblemCollector`.

PyYAML follows YAML 1.1: ``no``/``off`` read as ``False``, ``yes``/``on`` as
``True``, ``010`` as 8, ``1:30`` as 90 and ``1e3`` as the *text* ``'1e3'``.
The models of :mod:`planner.files` therefore check types strictly.

:func:`atomic_write_text` writes through a temporary file in the target folder,
``fsync`` and ``os.replace``, so a crash never leaves a half-written file.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import field
from pathlib import Path
from typing import Any

import yaml
from yaml.nodes import MappingNode, SequenceNode

from planner.errors import DataError, InputError
from planner.records import record
from planner.yaml_nodes import (KeyPath, NodeBuilder, check_events, format_key_path,
                                line_col_of_offset, syntax_problem, where)

__all__ = [
    "LoadedYaml", "load_user_yaml", "parse_user_yaml", "ProblemCollector", "atomic_write_text",
    "dump_yaml", "format_key_path",
]

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
_DUMPER = getattr(yaml, "CSafeDumper", yaml.SafeDumper)

@record(slots=False)
class LoadedYaml:
    """A user YAML file, parsed to plain data, with the position of every key.

    Attributes
    ----------
    data : dict
        The top-level mapping as plain Python objects.
    path : pathlib.Path
        The file that was read.
    positions : Mapping[tuple, tuple[int, int]]
        1-based ``(line, column)`` of each key (for mapping entries) or item
        (for list entries), keyed by key path; ``()`` is the document start.
    """

    data: dict[Any, Any]
    path: Path
    positions: Mapping[KeyPath, tuple[int, int]] = field(default_factory=dict, repr=False)

    def line_of(self, key_path: KeyPath) -> tuple[int, int] | None:
        """Return 1-based ``(line, column)`` of a key or list item, or ``None`` if absent.

        ``key_path`` is a tuple of mapping keys and list indexes, e.g.
        ``("views", 2, "target")``.
        """
        return self.positions.get(tuple(key_path))

    def nearest_line_of(self, key_path: KeyPath) -> tuple[int, int] | None:
        """Return the position of ``key_path`` or of its closest existing ancestor."""
        path = tuple(key_path)
        while True:
            found = self.positions.get(path)
            if found is not None or not path:
                return found
            path = path[:-1]


def _refuse(label: str, kind: str, problems: list[str]) -> DataError:
    count = len(problems)
    noun = "problem" if count == 1 else "problems"
    return DataError(f"{label} is not a usable {kind} file ({count} {noun}): {problems[0]}",
                     problems, title=f"Invalid {kind} file")


def _read_text(path: Path, label: str, kind: str, max_bytes: int) -> str:
    """Read ``path`` as UTF-8 text within ``max_bytes``; raise DataError otherwise."""
    try:
        if path.is_dir():
            raise _refuse(label, kind, [f"{label}: is a folder, not a {kind} file"])
        with open(path, "rb") as handle:
            raw = handle.read(max_bytes + 1)
    except DataError:
        raise
    except FileNotFoundError:
        raise _refuse(label, kind, [f"{label}: cannot read {kind} file: no such file"]) from None
    except OSError as exc:
        reason = exc.strerror or str(exc)
        raise _refuse(label, kind, [f"{label}: cannot read {kind} file: {reason}"]) from None
    if len(raw) > max_bytes:
        raise _refuse(label, kind, [
            f"{label}: file is larger than the limit of {max_bytes:,} bytes for a {kind} file"])
    nul = raw.find(b"\x00")
    if nul >= 0:
        line, column = line_col_of_offset(raw, nul)
        raise _refuse(label, kind, [
            f"{where(label, line, column)} binary data (a NUL byte); a {kind} file must be "
            "UTF-8 YAML text"])
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line, column = line_col_of_offset(raw, exc.start)
        raise _refuse(label, kind, [
            f"{where(label, line, column)} not UTF-8 text (byte 0x{raw[exc.start]:02x}); "
            "save the file as UTF-8"]) from None


def load_user_yaml(path: str | os.PathLike[str], *, kind: str, max_bytes: int = 2_000_000,
                   max_depth: int = 40, max_nodes: int = 200_000) -> LoadedYaml:
    """Load a user-supplied YAML file safely, keeping the position of every key.

    Parameters
    ----------
    path : str or os.PathLike
        The file to read.
    kind : str
        What the file is ("protocol", "probe inventory", "local policy" ...);
        used in messages.
    max_bytes : int
        Largest accepted file size. [bytes]
    max_depth : int
        Deepest accepted nesting of lists and mappings.
    max_nodes : int
        Most YAML nodes accepted, counting every alias expansion.

    Returns
    -------
    LoadedYaml
        Plain data plus key positions.

    Raises
    ------
    DataError
        When the file cannot be used; ``problems`` lists every problem found as
        ``file:line:col: message`` (``file: message`` when no position applies).
    ValueError
        When a limit is not a positive integer.
    """
    for name, limit in (("max_bytes", max_bytes), ("max_depth", max_depth),
                        ("max_nodes", max_nodes)):
        if isinstance(limit, bool) or not isinstance(limit, int) or limit < 1:
            raise ValueError(f"{name} must be a positive integer, got {limit!r}")
    if max_depth > 500:
        raise ValueError(f"max_depth must be at most 500, got {max_depth}")
    file_path = Path(path)
    label = str(path)
    text = _read_text(file_path, label, kind, max_bytes)
    return parse_user_yaml(text, label=label, kind=kind, max_depth=max_depth,
                           max_nodes=max_nodes, path=file_path)


def parse_user_yaml(text: str, *, label: str, kind: str, max_depth: int = 40,
                    max_nodes: int = 200_000, path: Path | None = None) -> LoadedYaml:
    """Parse YAML ``text`` as :func:`load_user_yaml` does (same limits and problems), naming
    it ``label`` in messages; ``path`` is recorded in the result (default ``label``)."""
    file_path = path if path is not None else Path(label)

    problems = check_events(text, label, max_depth, max_nodes)
    if problems:
        raise _refuse(label, kind, problems)
    try:
        root = yaml.compose(text, Loader=_LOADER)
    except yaml.YAMLError as exc:
        raise _refuse(label, kind, [syntax_problem(label, text, exc)]) from None
    if root is None:
        raise _refuse(label, kind, [f"{label}: the file is empty; a {kind} file is a YAML "
                                    "mapping (key: value lines)"])
    builder = NodeBuilder(label, max_nodes)
    total = builder.expanded_size(root)
    if total is not None and total > max_nodes:
        builder.problems.append(
            f"{builder.at(root)} aliases expand to {total:,} nodes, more than the limit of "
            f"{max_nodes:,} (an alias bomb?)")
    if builder.problems:
        raise _refuse(label, kind, builder.problems)
    if not isinstance(root, MappingNode):
        shown = "a list" if isinstance(root, SequenceNode) else "a single value"
        raise _refuse(label, kind, [f"{builder.at(root)} the top level is {shown}; a {kind} "
                                    "file must be a mapping (key: value lines)"])
    builder.positions[()] = (root.start_mark.line + 1, root.start_mark.column + 1)
    data = builder.build(root, ())
    if builder.problems:
        raise _refuse(label, kind, list(dict.fromkeys(builder.problems)))
    return LoadedYaml(data=data, path=file_path, positions=builder.positions)


class ProblemCollector:
    """Collect every problem of one file, each located at ``file:line:col: key.path``.

    Parameters
    ----------
    path : str or os.PathLike
        The file being validated (as it should appear in messages).
    loaded : LoadedYaml, optional
        Where key positions come from; without it problems carry no line.
    """

    def __init__(self, path: str | os.PathLike[str], loaded: LoadedYaml | None = None) -> None:
        self.path = str(path)
        self.loaded = loaded
        self.problems: list[str] = []

    def add(self, key_path: KeyPath, message: str, line: int | None = None) -> None:
        """Record a problem at ``key_path`` (position looked up when ``line`` is None).

        A key that is missing from the file is located at its nearest existing
        ancestor (the mapping it should be in).
        """
        key_path = tuple(key_path)
        column: int | None = None
        if line is None and self.loaded is not None:
            found = self.loaded.nearest_line_of(key_path)
            if found is not None:
                line, column = found
        shown = format_key_path(key_path)
        prefix = where(self.path, line, column)
        self.problems.append(f"{prefix} {shown}: {message}" if shown else f"{prefix} {message}")

    def extend(self, problems: list[str]) -> None:
        """Add already formatted problems (e.g. from a :class:`DataError`)."""
        self.problems.extend(problems)

    def __bool__(self) -> bool:
        return bool(self.problems)

    def raise_if_any(self, title: str = "Invalid file") -> None:
        """Raise :class:`DataError` listing every problem, if there are any."""
        if not self.problems:
            return
        count = len(self.problems)
        noun = "problem" if count == 1 else "problems"
        raise DataError(f"{self.path} has {count} {noun}; first: {self.problems[0]}",
                        self.problems, title=title)


# Writing lives in planner.atomicfile (user paths, stale temporary files); kept here so
# that every file operation on user files is reachable from this one module.
from planner.atomicfile import atomic_write_text  # noqa: E402


class _PlainDumper(_DUMPER):  # type: ignore[misc, valid-type]
    """Safe dumper that also writes tuples (as lists)."""


_PlainDumper.add_representer(tuple, lambda dumper, data: dumper.represent_list(list(data)))


def dump_yaml(data: Any) -> str:
    """Return ``data`` as YAML text (safe types only, keys in the given order, Unicode kept)."""
    return yaml.dump(data, Dumper=_PlainDumper, sort_keys=False, allow_unicode=True,
                     default_flow_style=False)
