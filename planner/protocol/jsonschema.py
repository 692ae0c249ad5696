"""JSON Schema (draft 2020-12) of the protocol file, generated from the model.

Editors with a YAML language server validate a protocol as it is typed when the
file starts with ``# yaml-language-server: $schema=<path to the schema>``. The
schema is built from the dataclasses and field metadata of
:mod:`planner.protocol.schema`, the same definitions the loader checks, so it
cannot drift from them. Checks that need the outside world (target, window and
probe ids, bibliography keys, time budget) stay with ``scanplan protocol check``.
"""

from __future__ import annotations

from typing import Any

from planner.protocol.fields import Kind, model_fields
from planner.protocol.schema import REFERENCE_KEY_PATTERN, SCHEMA_VERSION, Protocol, Threshold
from planner.provenance import STATUSES

__all__ = ["protocol_json_schema", "SCHEMA_ID"]

SCHEMA_ID = "https://scanplan.invalid/schemas/protocol-v1.json"
"""Identifier of the schema (a name, not a download address)."""

_BOUND_KEYS = ("above", "at_or_above", "below", "at_or_below")


def _constraints(meta: dict[str, Any], kind_name: str) -> dict[str, Any]:
    out: dict[str, Any] = {}
    if kind_name == "text":
        if meta.get("choices"):
            out["enum"] = list(meta["choices"])
        if meta.get("pattern"):
            out["pattern"] = meta["pattern"]
        if meta.get("date"):
            out["format"] = "date"
        if "enum" not in out:
            out["minLength"] = 1
    if kind_name in ("number", "integer"):
        if meta.get("minimum") is not None:
            key = "exclusiveMinimum" if meta.get("exclusive_minimum") else "minimum"
            out[key] = meta["minimum"]
        if meta.get("maximum") is not None:
            out["maximum"] = meta["maximum"]
    return out


def _describe(meta: dict[str, Any]) -> str:
    text = meta.get("description", "")
    if meta.get("unit"):
        text += f" [{meta['unit']}]"
    return text


def _schema_for(kind: Kind, meta: dict[str, Any], defs: dict[str, Any]) -> dict[str, Any]:
    if kind.name == "text":
        schema: dict[str, Any] = {"type": "string", **_constraints(meta, "text")}
    elif kind.name == "integer":
        schema = {"type": "integer", **_constraints(meta, "integer")}
    elif kind.name == "number":
        schema = {"type": "number", **_constraints(meta, "number")}
    elif kind.name == "boolean":
        schema = {"type": "boolean"}
    elif kind.name == "list":
        schema = {"type": "array", "items": _schema_for(kind.item, dict(meta, min_items=0), defs)}
        if meta.get("min_items"):
            schema["minItems"] = meta["min_items"]
    elif kind.name == "text_mapping":
        schema = {"type": "object",
                  "propertyNames": {"pattern": REFERENCE_KEY_PATTERN},
                  "additionalProperties": {"type": "string", "minLength": 1}}
    elif kind.name == "sourced":
        schema = {
            "type": "object",
            "properties": {
                "value": {"type": "number", **_constraints(meta, "number")},
                "source": {"type": "string", "pattern": REFERENCE_KEY_PATTERN,
                           "description": "Bibliography key."},
                "status": {"enum": list(STATUSES)},
                "note": {"type": "string"},
            },
            "required": ["value", "source", "status"],
            "additionalProperties": False,
        }
    elif kind.name == "object":
        name = kind.model.__name__
        if name not in defs:
            defs[name] = {}  # reserve the name before recursing
            defs[name] = _object_schema(kind.model, defs)
        schema = {"$ref": f"#/$defs/{name}"}
    else:  # pragma: no cover - kind_of rejects other types
        raise TypeError(f"unsupported kind {kind.name!r}")
    if kind.nullable:
        schema = {"anyOf": [schema, {"type": "null"}]}
    return schema


def _object_schema(model: type, defs: dict[str, Any]) -> dict[str, Any]:
    properties: dict[str, Any] = {}
    required: list[str] = []
    for fld in model_fields(model):
        prop = _schema_for(fld.kind, fld.meta, defs)
        description = _describe(fld.meta)
        if "$ref" in prop:
            prop = {"allOf": [prop]}
        if description:
            prop["description"] = description
        properties[fld.name] = prop
        if fld.required:
            required.append(fld.name)
    schema: dict[str, Any] = {"type": "object", "description": (model.__doc__ or "").strip()
                              .splitlines()[0], "properties": properties,
                              "additionalProperties": False}
    if required:
        schema["required"] = required
    if model is Threshold:
        schema["anyOf"] = [{"required": [key]} for key in _BOUND_KEYS]
        schema["not"] = {"anyOf": [{"required": ["above", "at_or_above"]},
                                   {"required": ["below", "at_or_below"]}]}
    return schema


def protocol_json_schema() -> dict[str, Any]:
    """Return the JSON Schema (draft 2020-12) of a protocol file as a dict."""
    defs: dict[str, Any] = {}
    top = _object_schema(Protocol, defs)
    top["properties"]["schema_version"] = {"const": SCHEMA_VERSION,
                                           "description": "Protocol file format version."}
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": SCHEMA_ID,
        "title": "scanplan department protocol (schema_version 1)",
        **top,
        "$defs": dict(sorted(defs.items())),
    }
