"""JSON Schema (draft 2020-12) of the protocol file, generated from the model.

Editors with a YAML language server validate a protocol as it is typed when the
file starts with ``# yaml-language-server: $schema=<path to the schema>``. The
schema is pydantic's, of the model that :mod:`planner.files.dataclass_model` generates
from the dataclasses of :mod:`planner.protocol.schema` -- the model the loader validates
with -- so it cannot drift from them. Checks that need the outside world (target, window
and probe ids, bibliography keys, time budget) stay with ``scanplan protocol check``.
Also available as ``planner.files.schema_for("protocol")``.
"""

from __future__ import annotations

from typing import Any

from planner.protocol.schema import SCHEMA_VERSION, Protocol

__all__ = ["protocol_json_schema", "SCHEMA_ID"]

SCHEMA_ID = "https://scanplan.invalid/schemas/protocol-v1.json"
"""Identifier of the schema (a name, not a download address)."""

_BOUND_KEYS = ("above", "at_or_above", "below", "at_or_below")


def _inline(node: Any, defs: dict[str, Any], prefix: str) -> Any:
    """Replace ``$ref``s to the sourced-value definitions by their content."""
    if isinstance(node, dict):
        ref = node.get("$ref", "")
        name = ref.rsplit("/", 1)[-1]
        if name.startswith(prefix) and name in defs:
            rest = {k: v for k, v in node.items() if k != "$ref"}
            return {**_inline(defs[name], defs, prefix), **rest}
        return {k: _inline(v, defs, prefix) for k, v in node.items()}
    if isinstance(node, list):
        return [_inline(v, defs, prefix) for v in node]
    return node


def protocol_json_schema() -> dict[str, Any]:
    """Return the JSON Schema (draft 2020-12) of a protocol file as a dict."""
    from planner.files.base import json_schema_of
    from planner.files.dataclass_model import SOURCED_PREFIX, model_for

    schema = json_schema_of(model_for(Protocol), schema_id=SCHEMA_ID,
                            title="scanplan department protocol (schema_version 1)")
    defs = schema.pop("$defs")
    schema = _inline(schema, defs, SOURCED_PREFIX)
    defs = {name: _inline(value, defs, SOURCED_PREFIX) for name, value in sorted(defs.items())
            if not name.startswith(SOURCED_PREFIX)}
    schema["properties"]["schema_version"] = {"const": SCHEMA_VERSION,
                                              "description": "Protocol file format version."}
    threshold = defs["Threshold"]
    threshold["anyOf"] = [{"required": [key]} for key in _BOUND_KEYS]
    threshold["not"] = {"anyOf": [{"required": ["above", "at_or_above"]},
                                  {"required": ["below", "at_or_below"]}]}
    schema["$defs"] = defs
    return schema
