"""The node-level half of :mod:`planner.yamlio`: event checks and the node builder.

:func:`check_events` scans PyYAML's event stream for syntax errors, depth and size;
:class:`NodeBuilder` turns a composed node graph into plain data with the position of
every key and list item, reporting duplicate keys, unsupported tags, scalars their tag's
constructor refuses (``!!bool maybe``, malformed or over-long numbers), bad merge keys
and alias bombs. Problems are formatted ``file:line:col: [key.path:] message``.
"""

from __future__ import annotations

from typing import Any

import yaml
from yaml.constructor import SafeConstructor
from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

__all__ = ["KeyPath", "NodeBuilder", "check_events", "format_key_path", "line_col_of_offset",
           "syntax_problem", "where"]

_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

_TAG = "tag:yaml.org,2002:"
_PLAIN_SCALAR_TAGS = frozenset(_TAG + t for t in ("null", "bool", "int", "float", "str"))
_TIMESTAMP_TAG = _TAG + "timestamp"
_MERGE_TAG = _TAG + "merge"
_MAP_TAG = _TAG + "map"
_SEQ_TAG = _TAG + "seq"

KeyPath = tuple[Any, ...]


def format_key_path(key_path: KeyPath) -> str:
    """Return ``key_path`` as dotted text, list indexes in brackets: ``views[2].target``."""
    out = ""
    for part in key_path:
        if isinstance(part, int) and not isinstance(part, bool):
            out += f"[{part}]"
        else:
            text = str(part)
            if not text.isprintable():
                text = text.encode("unicode_escape").decode("ascii")
            out += ("." if out else "") + text
    return out


def where(label: str, line: int | None, column: int | None) -> str:
    if line is None:
        return f"{label}:"
    return f"{label}:{line}:{column or 1}:"


def line_col_of_offset(text: str | bytes, offset: int) -> tuple[int, int]:
    newline: Any = b"\n" if isinstance(text, bytes) else "\n"
    before = text[:offset]
    line = before.count(newline) + 1
    column = offset - (before.rfind(newline) + 1) + 1
    return line, column


def syntax_problem(label: str, text: str, exc: yaml.YAMLError) -> str:
    mark = getattr(exc, "problem_mark", None)
    problem = getattr(exc, "problem", None)
    if mark is not None and problem:
        message = f"YAML syntax error: {problem}"
        context = getattr(exc, "context", None)
        context_mark = getattr(exc, "context_mark", None)
        if context and context_mark is not None:
            message += f" ({context} at line {context_mark.line + 1})"
        return f"{where(label, mark.line + 1, mark.column + 1)} {message}"
    if isinstance(exc, yaml.reader.ReaderError):
        line, column = line_col_of_offset(text, exc.position)
        return (f"{where(label, line, column)} character {exc.character!r} is not allowed "
                f"in YAML ({exc.reason})")
    return f"{label}: YAML error: {exc}"


def check_events(text: str, label: str, max_depth: int, max_nodes: int) -> list[str]:
    """Scan the event stream (no recursion) for syntax errors, depth and size."""
    depth = 0
    events = 0
    try:
        for event in yaml.parse(text, Loader=_LOADER):
            if isinstance(event, (yaml.MappingStartEvent, yaml.SequenceStartEvent)):
                depth += 1
                if depth > max_depth:
                    mark = event.start_mark
                    assert mark is not None          # the parser marks every event
                    return [f"{where(label, mark.line + 1, mark.column + 1)} nesting is deeper "
                            f"than the limit of {max_depth} levels"]
            elif isinstance(event, (yaml.MappingEndEvent, yaml.SequenceEndEvent)):
                depth -= 1
            events += 1
            if events > max_nodes:
                mark = event.start_mark
                assert mark is not None
                return [f"{where(label, mark.line + 1, mark.column + 1)} more than "
                        f"{max_nodes:,} YAML nodes; the file is too large to be a user file"]
    except yaml.YAMLError as exc:
        return [syntax_problem(label, text, exc)]
    return []


class NodeBuilder:
    """Turn a composed node graph into plain data, positions and problems."""

    def __init__(self, label: str, max_nodes: int) -> None:
        self.label = label
        self.max_nodes = max_nodes
        self.constructor = SafeConstructor()
        self.positions: dict[KeyPath, tuple[int, int]] = {}
        self.problems: list[str] = []
        self._sizes: dict[int, int] = {}

    def at(self, node: Node) -> str:
        return where(self.label, node.start_mark.line + 1, node.start_mark.column + 1)

    def expanded_size(self, root: Node) -> int | None:
        """Number of nodes after expanding every alias; ``None`` for a recursive alias."""
        on_stack: set[int] = set()

        def size(node: Node) -> int | None:
            key = id(node)
            if key in self._sizes:
                return self._sizes[key]
            if key in on_stack:
                self.problems.append(f"{self.at(node)} recursive alias (a node contains itself)")
                return None
            on_stack.add(key)
            total = 1
            if isinstance(node, MappingNode):
                children = [n for pair in node.value for n in pair]
            elif isinstance(node, SequenceNode):
                children = list(node.value)
            else:
                children = []
            for child in children:
                part = size(child)
                if part is None:
                    return None
                total += part
            on_stack.discard(key)
            self._sizes[key] = total
            return total

        return size(root)

    def scalar(self, node: ScalarNode, path: KeyPath = ()) -> Any:
        if node.tag == _TIMESTAMP_TAG:
            return node.value
        if node.tag in _PLAIN_SCALAR_TAGS:
            try:
                return self.constructor.yaml_constructors[node.tag](self.constructor, node)
            except (ValueError, KeyError, TypeError, OverflowError, IndexError):
                self.problems.append(self.bad_scalar(node, path))
                return None
        self.problems.append(f"{self.at(node)} unsupported YAML tag {node.tag!r}; use plain "
                             "text, numbers, true/false, lists and mappings")
        return None

    def bad_scalar(self, node: ScalarNode, path: KeyPath) -> str:
        """The problem of a scalar its tag's constructor refused (``!!bool maybe``, a
        malformed or over-long number)."""
        kind = node.tag[len(_TAG):] if node.tag.startswith(_TAG) else node.tag
        at = f"{self.at(node)} {format_key_path(path)}:" if path else self.at(node)
        shown = node.value if len(node.value) <= 40 else node.value[:37] + "..."
        if kind in ("int", "float") and len(node.value) > 40:
            return (f"{at} number too long or malformed "
                    f"({len(node.value)} characters)")
        words = {"bool": "true or false", "int": "a whole number", "float": "a number",
                 "null": "null"}.get(kind, kind)
        return (f"{at} {shown!r} is not {words} (it is tagged !!{kind}); "
                "remove the tag or fix the value")

    def build(self, node: Node, path: KeyPath) -> Any:
        if isinstance(node, ScalarNode):
            return self.scalar(node, path)
        if isinstance(node, SequenceNode):
            if node.tag != _SEQ_TAG:
                self.problems.append(f"{self.at(node)} unsupported YAML tag {node.tag!r} on a list")
            items = []
            for index, item in enumerate(node.value):
                self.positions[path + (index,)] = (item.start_mark.line + 1,
                                                   item.start_mark.column + 1)
                items.append(self.build(item, path + (index,)))
            return items
        if not isinstance(node, MappingNode):   # composed YAML has no other node kinds
            raise TypeError(f"unexpected YAML node {type(node).__name__}")
        if node.tag != _MAP_TAG:
            self.problems.append(f"{self.at(node)} unsupported YAML tag {node.tag!r} on a mapping")
        return self.mapping(node, path)

    def mapping(self, node: MappingNode, path: KeyPath,
                skip: frozenset[Any] = frozenset()) -> dict[Any, Any]:
        result: dict[Any, Any] = {}
        first_seen: dict[Any, int] = {}
        merges: list[MappingNode] = []
        for key_node, value_node in node.value:
            if key_node.tag == _MERGE_TAG:
                merges.extend(self.merge_sources(value_node))
                continue
            if not isinstance(key_node, ScalarNode):
                self.problems.append(f"{self.at(key_node)} a key must be plain text, "
                                     "not a list or mapping")
                continue
            key = self.scalar(key_node)
            mark = (key_node.start_mark.line + 1, key_node.start_mark.column + 1)
            if key in first_seen:
                shown = format_key_path(path + (key,))
                self.problems.append(f"{where(self.label, *mark)} {shown}: duplicate key "
                                     f"{key_node.value!r} (first given at line {first_seen[key]})")
                continue
            first_seen[key] = mark[0]
            if key in skip:
                continue
            self.positions[path + (key,)] = mark
            result[key] = self.build(value_node, path + (key,))
        for source in merges:
            result.update(self.mapping(source, path, skip=frozenset(result)))
        return result

    def merge_sources(self, value_node: Node) -> list[MappingNode]:
        if isinstance(value_node, MappingNode):
            return [value_node]
        if isinstance(value_node, SequenceNode) and all(
                isinstance(item, MappingNode) for item in value_node.value):
            return list(value_node.value)
        self.problems.append(f"{self.at(value_node)} a merge key (<<) needs a mapping "
                             "or a list of mappings")
        return []
