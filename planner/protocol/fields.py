"""Read a frozen-dataclass model from plain YAML data, reporting every problem.

The models of :mod:`planner.protocol.schema` describe each field by its type hint
and its :func:`planner.protocol.schema.spec` metadata. :func:`parse_model` checks
raw data against them and builds the dataclasses; :func:`model_fields` is shared
with the JSON Schema generator. Types are checked explicitly because YAML 1.1
reads ``no`` as ``False`` and ``1e3`` as text.
"""

from __future__ import annotations

import dataclasses
import datetime
import difflib
import math
import re
import types
import typing
from dataclasses import dataclass
from functools import cache
from typing import Any

from planner.protocol.schema import DATE_PATTERN, ID_PATTERN, REFERENCE_KEY_PATTERN
from planner.provenance import STATUSES, Sourced
from planner.yamlio import ProblemCollector

_NUMBER_TEXT = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$")
_YAML_BOOL_WORDS = "yes/no/on/off/true/false"
_PATTERN_NAMES = {
    ID_PATTERN: "a kebab-case id (lower-case letters and digits joined by single hyphens)",
    DATE_PATTERN: "a date written YYYY-MM-DD",
    REFERENCE_KEY_PATTERN: "a bibliography key (a letter, then letters, digits or _)",
}


@dataclass(frozen=True)
class Kind:
    """The shape a field accepts: text, integer, number, boolean, list, object ..."""

    name: str
    nullable: bool = False
    item: Kind | None = None
    model: type | None = None


@dataclass(frozen=True)
class ModelField:
    """One field of a model: YAML key, accepted kind, constraints, required or not."""

    name: str
    kind: Kind
    meta: dict[str, Any]
    required: bool


def kind_of(hint: Any) -> Kind:
    """Translate a type hint of the schema into a :class:`Kind`."""
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        args = [a for a in typing.get_args(hint) if a is not type(None)]
        if len(args) != 1:
            raise TypeError(f"unsupported union {hint!r}")
        return dataclasses.replace(kind_of(args[0]), nullable=True)
    if origin is tuple:
        return Kind("list", item=kind_of(typing.get_args(hint)[0]))
    if origin is dict:
        return Kind("text_mapping")
    simple = {str: "text", int: "integer", float: "number", bool: "boolean", Sourced: "sourced"}
    if hint in simple:
        return Kind(simple[hint])
    if dataclasses.is_dataclass(hint):
        return Kind("object", model=hint)
    raise TypeError(f"unsupported field type {hint!r}")


@cache
def model_fields(model: type) -> tuple[ModelField, ...]:
    """Return the fields of a schema dataclass, in declaration order."""
    hints = typing.get_type_hints(model)
    out = []
    for fld in dataclasses.fields(model):
        required = (fld.default is dataclasses.MISSING
                    and fld.default_factory is dataclasses.MISSING)
        out.append(ModelField(fld.name, kind_of(hints[fld.name]), dict(fld.metadata), required))
    return tuple(out)


def describe(raw: Any) -> str:
    """Describe a raw YAML value for a message: ``text '1e3'``, ``a list`` ..."""
    if raw is None:
        return "nothing (null)"
    if isinstance(raw, bool):
        return "true" if raw else "false"
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


def _expected_number(raw: Any, what: str) -> str:
    message = f"expected {what}, got {describe(raw)}"
    if isinstance(raw, str) and _NUMBER_TEXT.match(raw.strip()):
        message += (" (YAML 1.1 reads this as text: write a plain decimal such as 1000 or "
                    "0.5, or an exponent with a dot and a sign such as 1.0e+3)")
    elif isinstance(raw, bool):
        message += f" (YAML reads {_YAML_BOOL_WORDS} as true/false)"
    return message


class _Parser:
    def __init__(self, problems: ProblemCollector) -> None:
        self.problems = problems

    def add(self, path: tuple, message: str) -> None:
        self.problems.add(path, message)

    def model(self, model: type, raw: Any, path: tuple) -> Any:
        fields_ = model_fields(model)
        names = [f.name for f in fields_]
        if not isinstance(raw, dict):
            self.add(path, f"expected a mapping with keys {', '.join(names)}; got {describe(raw)}")
            return None
        ok = True
        for key in raw:
            if key not in names:
                ok = False
                self.add(path + (key,), self._unknown_key(key, names))
        values: dict[str, Any] = {}
        missing = [fld.name for fld in fields_ if fld.required and fld.name not in raw]
        if len(missing) == 1:
            self.add(path + (missing[0],), "missing (required)")
        elif missing:
            self.add(path, f"missing required keys: {', '.join(missing)}")
        ok = ok and not missing
        for fld in fields_:
            if fld.name not in raw:
                continue
            good, value = self.value(fld.kind, fld.meta, raw[fld.name], path + (fld.name,))
            ok = ok and good
            values[fld.name] = value
        return model(**values) if ok else None

    @staticmethod
    def _unknown_key(key: Any, names: list[str]) -> str:
        if isinstance(key, bool) or key is None:
            return (f"unknown key {key!r} (YAML reads the words {_YAML_BOOL_WORDS} and ~ as "
                    "true/false/null; put the key in quotes if it is a name)")
        close = difflib.get_close_matches(str(key), names, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else f"; valid keys: {', '.join(names)}"
        return f"unknown key {str(key)!r}{hint}"

    def value(self, kind: Kind, meta: dict[str, Any], raw: Any, path: tuple) -> tuple[bool, Any]:
        if raw is None:
            if kind.nullable:
                return True, None
            self.add(path, f"a value is required here, got {describe(raw)}")
            return False, None
        handler = getattr(self, "_" + kind.name)
        return handler(kind, meta, raw, path)

    def _text(self, kind: Kind, meta: dict[str, Any], raw: Any, path: tuple) -> tuple[bool, Any]:
        if not isinstance(raw, str):
            hint = ""
            if isinstance(raw, bool):
                hint = f" (YAML reads {_YAML_BOOL_WORDS} as true/false; put the word in quotes)"
            elif isinstance(raw, (int, float)):
                hint = " (put it in quotes to make it text)"
            self.add(path, f"expected text, got {describe(raw)}{hint}")
            return False, None
        text = raw.strip()
        if not text:
            self.add(path, "must not be empty")
            return False, None
        choices = meta.get("choices")
        if choices and text not in choices:
            close = difflib.get_close_matches(text, choices, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            self.add(path, f"{text!r} is not one of {', '.join(choices)}{hint}")
            return False, None
        pattern = meta.get("pattern")
        if pattern and not re.match(pattern, text):
            wanted = _PATTERN_NAMES.get(pattern, f"text matching {pattern}")
            self.add(path, f"{text!r} is not {wanted}")
            return False, None
        if meta.get("date"):
            try:
                datetime.date.fromisoformat(text)
            except ValueError:
                self.add(path, f"{text!r} is not a valid date (YYYY-MM-DD)")
                return False, None
        return True, text

    def _bounds(self, value: float, meta: dict[str, Any], path: tuple) -> bool:
        low, high = meta.get("minimum"), meta.get("maximum")
        unit = f" {meta['unit']}" if meta.get("unit") else ""
        if low is not None and (value < low or (meta.get("exclusive_minimum") and value == low)):
            relation = "greater than" if meta.get("exclusive_minimum") else "at least"
            self.add(path, f"must be {relation} {low}{unit}, got {value}{unit}")
            return False
        if high is not None and value > high:
            self.add(path, f"must be at most {high}{unit}, got {value}{unit}")
            return False
        return True

    def _integer(self, kind: Kind, meta: dict[str, Any], raw: Any,
                 path: tuple) -> tuple[bool, Any]:
        if isinstance(raw, bool) or not isinstance(raw, int):
            self.add(path, _expected_number(raw, "a whole number"))
            return False, None
        return self._bounds(raw, meta, path), raw

    def _number(self, kind: Kind, meta: dict[str, Any], raw: Any,
                path: tuple) -> tuple[bool, Any]:
        if isinstance(raw, bool) or not isinstance(raw, (int, float)):
            self.add(path, _expected_number(raw, "a number"))
            return False, None
        if not math.isfinite(raw):
            self.add(path, f"must be a finite number, got {raw}")
            return False, None
        return self._bounds(float(raw), meta, path), float(raw)

    def _boolean(self, kind: Kind, meta: dict[str, Any], raw: Any,
                 path: tuple) -> tuple[bool, Any]:
        if not isinstance(raw, bool):
            self.add(path, f"expected true or false, got {describe(raw)}")
            return False, None
        return True, raw

    def _list(self, kind: Kind, meta: dict[str, Any], raw: Any, path: tuple) -> tuple[bool, Any]:
        if not isinstance(raw, list):
            self.add(path, f"expected a list (lines starting with '- '), got {describe(raw)}")
            return False, None
        min_items = meta.get("min_items") or 0
        if len(raw) < min_items:
            self.add(path, f"needs at least {min_items} item{'s' if min_items > 1 else ''}")
            return False, None
        ok, items = True, []
        item_meta = dict(meta, min_items=0)
        for index, item in enumerate(raw):
            good, value = self.value(kind.item, item_meta, item, path + (index,))
            ok = ok and good
            items.append(value)
        return ok, tuple(items)

    def _object(self, kind: Kind, meta: dict[str, Any], raw: Any,
                path: tuple) -> tuple[bool, Any]:
        built = self.model(kind.model, raw, path)
        return built is not None, built

    def _text_mapping(self, kind: Kind, meta: dict[str, Any], raw: Any,
                      path: tuple) -> tuple[bool, Any]:
        if not isinstance(raw, dict):
            self.add(path, f"expected a mapping of key: text, got {describe(raw)}")
            return False, None
        ok = True
        for key, value in raw.items():
            if not isinstance(key, str) or not isinstance(value, str) or not value.strip():
                self.add(path + (key,), f"expected a text key with a non-empty text value, got "
                                        f"{describe(key)}: {describe(value)}")
                ok = False
        return ok, {k: v.strip() for k, v in raw.items()} if ok else None

    def _sourced(self, kind: Kind, meta: dict[str, Any], raw: Any,
                 path: tuple) -> tuple[bool, Any]:
        if not isinstance(raw, dict):
            hint = ""
            if isinstance(raw, (int, float)) and not isinstance(raw, bool):
                hint = f" (write {{value: {raw}, source: Key, status: verified}})"
            self.add(path, f"expected a sourced value with value, source and status, got "
                           f"{describe(raw)}{hint}")
            return False, None
        ok = True
        for key in raw:
            if key not in ("value", "source", "status", "note"):
                ok = False
                self.add(path + (key,), self._unknown_key(key, ["value", "source", "status",
                                                                 "note"]))
        for key in ("value", "source", "status"):
            if key not in raw:
                ok = False
                self.add(path + (key,), "missing (required)")
        number = source = status = None
        note = ""
        if "value" in raw:
            good, number = self._number(kind, meta, raw["value"], path + ("value",))
            ok = ok and good
        if "source" in raw:
            good, source = self._text(kind, {"pattern": REFERENCE_KEY_PATTERN},
                                      raw["source"], path + ("source",))
            ok = ok and good
        if "status" in raw:
            good, status = self._text(kind, {"choices": STATUSES}, raw["status"],
                                      path + ("status",))
            ok = ok and good
        if raw.get("note") is not None:
            good, note = self._text(kind, {}, raw["note"], path + ("note",))
            ok = ok and good
        if not ok:
            return False, None
        return True, Sourced(number, source, status, note or "")


def parse_model(model: type, raw: Any, problems: ProblemCollector, path: tuple = ()) -> Any:
    """Check ``raw`` against ``model`` and build it; ``None`` when any problem was found.

    Every problem is added to ``problems`` with its key path.
    """
    return _Parser(problems).model(model, raw, path)
