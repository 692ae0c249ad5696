"""Turn pydantic validation errors into located problems (``file:line:col: key.path: msg``).

Pydantic reports each error with a location tuple (``loc``) of field names and list
indexes, the same shape as :mod:`planner.yamlio` key paths, so every problem is placed on
the line of the key it concerns (or of the mapping a missing key belongs in). The wording
is the project's own and the same for every file kind; in particular numbers written as
text (``bmi: "38"``, YAML 1.1's ``1e3``) and YAML's yes/no words get one hint everywhere.
This module imports no pydantic: it reads the error dictionaries only.
"""

from __future__ import annotations

import difflib
import re
import typing
from collections.abc import Iterable, Mapping
from typing import Any

__all__ = ["NUMBER_TEXT_HINT", "BOOL_WORD_HINT", "describe", "expected_number", "add_errors",
           "message_for", "check_provenance"]

NUMBER_TEXT_HINT = (" (read as text: YAML 1.1 reads quoted numbers and exponents such as "
                    "1e3 as text; write a plain number without quotes, such as 1000 or 1.0e+3)")
"""Appended whenever a number is expected and the file gives text that looks like one."""

BOOL_WORD_HINT = " (YAML reads yes/no/on/off/true/false as true/false)"
"""Appended whenever text or a number is expected and YAML produced a boolean."""

_NUMBER_TEXT = re.compile(r"^\s*[-+]?(\d[\d_]*\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$")
_PATTERN_NAMES = {
    r"^[a-z0-9]+(-[a-z0-9]+)*$":
        "a kebab-case id (lower-case letters and digits joined by single hyphens)",
    r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$": "a date written YYYY-MM-DD",
    r"^[A-Za-z][A-Za-z0-9_]*$": "a bibliography key (a letter, then letters, digits or _)",
}
_FLOAT_LIMIT = 1.7976931348623157e308


def describe(raw: Any) -> str:
    """Describe a raw YAML value for a message: ``text '1e3'``, ``the number 4``, ``a list``."""
    if raw is None:
        return "nothing (null)"
    if isinstance(raw, bool):
        return "true" if raw else "false"
    if isinstance(raw, int) and abs(raw) > 10 ** 15:
        return f"a {len(str(abs(raw)))}-digit number"
    if isinstance(raw, (int, float)):
        return f"the number {raw!r}"
    if isinstance(raw, str):
        shown = raw if len(raw) <= 40 else raw[:37] + "..."
        return f"text {shown!r}"
    if isinstance(raw, list):
        return "a list"
    if isinstance(raw, dict):
        return "a mapping"
    return type(raw).__name__


def expected_number(raw: Any, what: str = "a number") -> str:
    """``expected <what>, got ...`` with the numeric-text or yes/no hint when it applies."""
    if isinstance(raw, int) and not isinstance(raw, bool) and abs(raw) > _FLOAT_LIMIT:
        return f"{describe(raw)} is too large to be a number here"
    message = f"expected {what}, got {describe(raw)}"
    if isinstance(raw, str) and _NUMBER_TEXT.match(raw):
        message += NUMBER_TEXT_HINT
    elif isinstance(raw, bool):
        message += BOOL_WORD_HINT
    return message


def _choices(ctx: dict[str, Any] | None) -> list[str]:
    expected = str((ctx or {}).get("expected", ""))
    quoted = re.findall(r"'([^']*)'", expected)
    return quoted or [part.strip() for part in re.split(r",| or ", expected) if part.strip()]


def _num(value: Any) -> str:
    return f"{value:g}" if isinstance(value, float) else str(value)


def _unknown_key(key: Any, valid: list[str]) -> str:
    if isinstance(key, bool) or key is None:
        return (f"unknown key {key!r} (YAML reads the words yes/no/on/off/true/false and ~ as "
                "true/false/null; put the key in quotes if it is a name)")
    close = difflib.get_close_matches(str(key), valid, n=1)
    if close:
        return f"unknown key {str(key)!r}; did you mean {close[0]!r}?"
    if valid:
        return f"unknown key {str(key)!r}; valid keys: {', '.join(valid)}"
    return f"unknown key {str(key)!r}"


def message_for(error: Mapping[str, Any], valid_keys: list[str] | None = None) -> str:
    """The project's message for one pydantic error dictionary."""
    kind, raw, ctx = error["type"], error.get("input"), error.get("ctx") or {}
    if kind == "missing":
        return "missing (required)"
    if kind == "extra_forbidden":
        loc = error.get("loc") or ("?",)
        return _unknown_key(loc[-1], valid_keys or [])
    if kind in ("float_type", "float_parsing", "finite_number") and not isinstance(raw, float):
        return expected_number(raw, "a number")
    if kind == "finite_number":
        return f"must be a finite number, got {raw}"
    if kind in ("int_type", "int_parsing", "int_from_float"):
        return expected_number(raw, "a whole number")
    if kind in ("bool_type", "bool_parsing"):
        return f"expected true or false, got {describe(raw)}"
    if kind in ("string_type", "str_type"):
        hint = BOOL_WORD_HINT[:-1] + "; put the word in quotes)" if isinstance(raw, bool) else (
            " (put it in quotes to make it text)" if isinstance(raw, (int, float)) else "")
        return f"expected text, got {describe(raw)}{hint}"
    if kind == "literal_error":
        valid = _choices(ctx)
        hint = BOOL_WORD_HINT[:-1] + "; put the word in quotes)" if isinstance(raw, bool) else ""
        if len(valid) == 1:
            return f"must be {valid[0]}, got {describe(raw)}{hint}"
        close = difflib.get_close_matches(str(raw), valid, n=1) if isinstance(raw, str) else []
        if close:
            hint = f"; did you mean {close[0]!r}?"
        shown = repr(raw) if isinstance(raw, str) else describe(raw)
        return f"{shown} is not one of {', '.join(valid)}{hint}"
    if kind in ("list_type", "tuple_type"):
        return f"expected a list (lines starting with '- '), got {describe(raw)}"
    if kind in ("model_type", "dict_type", "model_attributes_type", "dataclass_type"):
        return f"expected a mapping (key: value lines), got {describe(raw)}"
    if kind == "string_pattern_mismatch":
        wanted = _PATTERN_NAMES.get(str(ctx.get("pattern")), f"text matching {ctx.get('pattern')}")
        return f"{raw!r} is not {wanted}"
    if kind == "string_too_short":
        return "must not be empty"
    if kind == "too_short":
        low = int(ctx.get("min_length", 1))
        return f"needs at least {low} item{'s' if low > 1 else ''}"
    if kind == "too_long":
        return f"has more than {ctx.get('max_length')} items"
    if kind in ("greater_than", "greater_than_equal", "less_than", "less_than_equal"):
        words = {"greater_than": ("greater than", "gt"), "greater_than_equal": ("at least", "ge"),
                 "less_than": ("less than", "lt"), "less_than_equal": ("at most", "le")}[kind]
        return f"must be {words[0]} {_num(ctx.get(words[1]))}, got {_num(raw)}"
    if kind == "value_error":
        return str(error.get("msg", "")).removeprefix("Value error, ")
    if kind == "assertion_error":
        return str(error.get("msg", "")).removeprefix("Assertion failed, ")
    return str(error.get("msg", kind))


def key_path(loc: Iterable[Any]) -> tuple[Any, ...]:
    """A pydantic ``loc`` as a yamlio key path (pydantic's ``[key]`` markers dropped)."""
    return tuple(part for part in loc if part != "[key]")


def _field_names(model: Any, path: tuple[Any, ...]) -> list[str]:
    """Field names of the (nested) model at ``path`` of ``model``; [] when unknown."""
    current: Any = model
    for part in path:
        current = _unwrap(current)
        fields = getattr(current, "model_fields", None)
        if fields is not None and isinstance(part, str) and part in fields:
            current = fields[part].annotation
            continue
        args = [a for a in typing.get_args(current) if a is not type(None)]
        if isinstance(part, int) and args:
            current = args[0]
        elif isinstance(part, str) and len(args) == 2:
            current = args[1]
        else:
            return []
    current = _unwrap(current)
    fields = getattr(current, "model_fields", None)
    return list(fields) if fields is not None else []


def _unwrap(hint: Any) -> Any:
    while True:
        origin = typing.get_origin(hint)
        if origin is typing.Annotated:
            hint = typing.get_args(hint)[0]
            continue
        args = [a for a in typing.get_args(hint) if a is not type(None)]
        if origin in (typing.Union,) or str(origin) == "<class 'types.UnionType'>":
            if len(args) == 1:
                hint = args[0]
                continue
        return hint


def add_errors(errors: Iterable[Mapping[str, Any]], add: Any, model: Any = None,
               prefix: tuple[Any, ...] = ()) -> None:
    """Report every pydantic error through ``add(key_path, message)`` (a collector's add)."""
    seen: set[tuple[Any, str]] = set()
    for error in errors:
        path = key_path(error.get("loc", ()))
        valid = _field_names(model, path[:-1]) if error["type"] == "extra_forbidden" else None
        message = message_for(error, valid)
        if (path, message) in seen:
            continue
        seen.add((path, message))
        add(prefix + path, message)


def check_provenance(node: Any, add: Any, path: tuple[Any, ...] = ()) -> None:
    """Every mapping with a ``status`` (a sourced record) has a known status and a ``source``
    that is a bibliography key; problems go to ``add(key_path, message)``."""
    from planner.provenance import STATUSES
    from planner.references import REFERENCES
    if isinstance(node, dict):
        if "status" in node:
            status, source = node["status"], node.get("source")
            if isinstance(status, str) and status not in STATUSES:
                add(path + ("status",), f"unknown status {status!r}; valid: "
                                        f"{', '.join(STATUSES)}")
            if isinstance(source, str) and source not in REFERENCES:
                add(path + ("source",), f"unknown source key {source!r} (not in the "
                                        "bibliography planner/data/references)")
        for key, value in node.items():
            check_provenance(value, add, path + (key,))
    elif isinstance(node, list):
        for index, item in enumerate(node):
            check_provenance(item, add, path + (index,))
