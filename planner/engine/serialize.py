"""The one JSON edge of a plan: ``plan --json`` data and its JSON Schema.

:func:`plan_to_json_data` walks the frozen records of :mod:`planner.engine.model` (and the
findings and Doppler records inside them); :func:`plan_output_schema` derives the JSON Schema
(draft 2020-12) from the same dataclass fields and type hints, so the two cannot drift apart.
Field metadata: ``json=False`` keeps a typed decision out of the JSON; ``omit_none=True``
leaves the key out when the value is None; ``json_key`` names the key when the attribute
cannot (``class``).
"""

from __future__ import annotations

import dataclasses
import types
import typing
from functools import lru_cache
from typing import Any, Union

from planner.engine.model import SCHEMA_VERSION, Plan

__all__ = ["plan_output_schema", "plan_to_json_data", "to_json_data"]


@lru_cache(maxsize=None)
def _json_fields(cls: type) -> tuple[tuple[str, str, bool], ...]:
    """(attribute, JSON key, omit_none) of every field of ``cls`` written to JSON."""
    return tuple((f.name, f.metadata.get("json_key", f.name), bool(f.metadata.get("omit_none")))
                 for f in dataclasses.fields(cls) if f.metadata.get("json", True))


def to_json_data(value: Any) -> Any:
    """JSON-ready data of a record, a sequence or a mapping of them (tuples become lists)."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        out = {}
        for name, key, omit_none in _json_fields(type(value)):
            item = getattr(value, name)
            if item is None and omit_none:
                continue
            out[key] = to_json_data(item)
        return out
    if isinstance(value, (list, tuple)):
        return [to_json_data(v) for v in value]
    if isinstance(value, dict):
        return {k: to_json_data(v) for k, v in value.items()}
    return value


def plan_to_json_data(plan: Plan, stamp: Any = None) -> dict[str, Any]:
    """The data of ``scanplan plan --json`` for ``plan``: ``schema_version``, and
    ``generated_by`` and ``generated_at`` from ``stamp`` (a :class:`planner.stamp.Stamp`;
    None: made now)."""
    from planner.stamp import current_stamp
    out: dict[str, Any] = to_json_data(plan)
    out["schema_version"] = SCHEMA_VERSION
    out.update((stamp if stamp is not None else current_stamp()).as_data())
    return out


def _schema_of(hint: Any, defs: dict[str, Any]) -> dict[str, Any]:
    origin = typing.get_origin(hint)
    if hint is Any:
        return {}
    if hint is type(None):
        return {"type": "null"}
    if hint is bool:
        return {"type": "boolean"}
    if hint is int:
        return {"type": "integer"}
    if hint is float:
        return {"type": "number"}
    if hint is str:
        return {"type": "string"}
    if origin in (Union, types.UnionType):
        return {"anyOf": [_schema_of(h, defs) for h in typing.get_args(hint)]}
    if origin is tuple:
        args = typing.get_args(hint)
        if len(args) == 2 and args[1] is Ellipsis:
            return {"type": "array", "items": _schema_of(args[0], defs)}
        return {"type": "array", "prefixItems": [_schema_of(a, defs) for a in args],
                "minItems": len(args), "maxItems": len(args)}
    if origin in (list, typing.get_origin(typing.Sequence[int])):
        return {"type": "array", "items": _schema_of(typing.get_args(hint)[0], defs)}
    if origin is dict:
        return {"type": "object", "additionalProperties": _schema_of(typing.get_args(hint)[1], defs)}
    if dataclasses.is_dataclass(hint) and isinstance(hint, type):
        name = hint.__name__
        if name not in defs:
            defs[name] = {}
            defs[name] = _record_schema(hint, defs)
        return {"$ref": f"#/$defs/{name}"}
    raise TypeError(f"no JSON Schema for type hint {hint!r}")


def _record_schema(cls: type, defs: dict[str, Any]) -> dict[str, Any]:
    hints = typing.get_type_hints(cls)
    props, required = {}, []
    for f in dataclasses.fields(cls):
        if not f.metadata.get("json", True):
            continue
        key = f.metadata.get("json_key", f.name)
        props[key] = _schema_of(hints[f.name], defs)
        if not f.metadata.get("omit_none"):
            required.append(key)
    out: dict[str, Any] = {"type": "object", "properties": props, "required": required,
                           "additionalProperties": False}
    doc = (cls.__doc__ or "").strip().splitlines()
    if doc:
        out["description"] = doc[0]
    return out


def plan_output_schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of ``scanplan plan --json``, derived from the typed plan."""
    defs: dict[str, Any] = {}
    root = _record_schema(Plan, defs)
    root["properties"]["schema_version"] = {"const": SCHEMA_VERSION}
    root["required"].append("schema_version")
    root["properties"]["generated_by"] = {
        "type": "string", "pattern": "^scanplan [^ ]+$",
        "description": "The tool and its version that made this output, e.g. 'scanplan 0.1.0'."}
    root["properties"]["generated_at"] = {
        "type": "string", "pattern": "^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}Z$",
        "description": "When it was made: UTC, ISO 8601 to the second."}
    root["required"] += ["generated_by", "generated_at"]
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "$id": "https://scanplan.invalid/schema/plan-output.json",
            "title": "scanplan plan --json output", **root, "$defs": defs}
