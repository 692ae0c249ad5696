"""Shared pieces of the file models: the strict base model, text and number types.

Every model is pydantic v2 in strict mode with unknown keys forbidden: ``bmi: "38"`` is
text, not a number; ``no`` is a boolean, not text; a list must be a list. Numbers are
finite (``.inf``/``.nan`` and integers too large for a float are refused). Importing this
module imports pydantic (about 60 ms), so it is imported only when a file is validated.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal, TypeVar

from pydantic import BaseModel, ConfigDict, Field, StringConstraints, ValidationError

from planner.files.problems import add_errors
from planner.provenance import STATUSES

__all__ = ["FileModel", "Finite", "Text", "OptText", "Positive", "NonNegative", "Status",
           "SourceKey", "SourcedNumber", "validate_data", "ID_PATTERN", "REFERENCE_KEY_PATTERN"]

ID_PATTERN = r"^[a-z0-9]+(-[a-z0-9]+)*$"
REFERENCE_KEY_PATTERN = r"^[A-Za-z][A-Za-z0-9_]*$"

Finite = Annotated[float, Field(allow_inf_nan=False)]
"""Any finite number (an integer is accepted as a number)."""
Positive = Annotated[float, Field(gt=0, allow_inf_nan=False)]
NonNegative = Annotated[float, Field(ge=0, allow_inf_nan=False)]
Text = Annotated[str, StringConstraints(strip_whitespace=True, min_length=1)]
"""Non-empty text (surrounding blanks removed)."""
OptText = Annotated[str, StringConstraints(strip_whitespace=True)]
"""Text that may be empty."""
SourceKey = Annotated[str, StringConstraints(strip_whitespace=True, pattern=REFERENCE_KEY_PATTERN)]
Status = Literal["verified", "from_memory", "common_practice", "derived"]
assert tuple(Status.__args__) == STATUSES  # type: ignore[attr-defined]


class FileModel(BaseModel):
    """Base of every file model: strict types, unknown keys refused, frozen."""

    model_config = ConfigDict(strict=True, extra="forbid", frozen=True)


class SourcedNumber(FileModel):
    """A number with its provenance: ``{value, source, status, note?}``."""

    value: Finite
    source: SourceKey
    status: Status
    note: OptText = ""


M = TypeVar("M", bound=BaseModel)


def validate_data(model: type[M], data: Any, add: Any, prefix: tuple[Any, ...] = ()) -> M | None:
    """Validate ``data`` against ``model``; report every problem through ``add(path, msg)``.

    Returns the model instance, or ``None`` when any problem was found.
    """
    try:
        return model.model_validate(data)
    except ValidationError as exc:
        add_errors(exc.errors(include_url=False), add, model, prefix)
        return None


def json_schema_of(model: type[BaseModel], *, title: str, schema_id: str) -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of ``model``, with a title and an id."""
    schema = model.model_json_schema(mode="validation")
    _strip_titles(schema)
    _key_patterns(schema)
    return {"$schema": "https://json-schema.org/draft/2020-12/schema", "$id": schema_id,
            "title": title, **schema}


def _strip_titles(schema: Any) -> None:
    """Drop pydantic's generated ``title`` entries (the descriptions say more)."""
    if not isinstance(schema, dict):
        return
    schema.pop("title", None)
    for key in ("properties", "$defs"):
        for value in (schema.get(key) or {}).values():
            _strip_titles(value)
    for key in ("anyOf", "allOf", "oneOf", "prefixItems"):
        for value in schema.get(key) or ():
            _strip_titles(value)
    for key in ("items", "additionalProperties", "not", "propertyNames"):
        _strip_titles(schema.get(key))


def _key_patterns(node: Any) -> None:
    """Write a mapping with a key pattern as ``propertyNames`` + ``additionalProperties``,
    so that keys not matching the pattern are refused, as the model refuses them."""
    if isinstance(node, dict):
        patterns = node.get("patternProperties")
        if isinstance(patterns, dict) and len(patterns) == 1:
            (pattern, value), = patterns.items()
            del node["patternProperties"]
            node["propertyNames"] = {"pattern": pattern}
            node["additionalProperties"] = value
        for value in node.values():
            _key_patterns(value)
    elif isinstance(node, list):
        for value in node:
            _key_patterns(value)
