"""Pydantic models generated from the frozen dataclasses of a file format.

The department protocol format is defined once, as frozen dataclasses whose fields carry
their description and constraints in ``metadata`` (:func:`planner.protocol.schema.spec`).
:func:`model_for` turns such a dataclass into a strict pydantic model (types, choices,
patterns, dates, bounds, list lengths, sourced values ``{value, source, status, note}``),
which validates the YAML data and gives the JSON Schema; :func:`build` turns a validated
model back into the dataclasses the rest of the program uses. So the dataclasses, the
loader and the published schema cannot disagree.
"""

from __future__ import annotations

import dataclasses
import datetime
import types
import typing
from functools import cache
from typing import Annotated, Any, Literal

from pydantic import AfterValidator, BaseModel, Field, StringConstraints, create_model

from planner.files.base import FileModel, OptText, SourceKey, Status
from planner.provenance import Sourced

__all__ = ["model_for", "build", "SOURCED_PREFIX"]

SOURCED_PREFIX = "Sourced_"
"""Name prefix of the generated sourced-value models (one per constrained field)."""


def _check_date(text: str) -> str:
    try:
        datetime.date.fromisoformat(text)
    except ValueError:
        raise ValueError(f"{text!r} is not a valid date (YYYY-MM-DD)") from None
    return text


def _number_field(meta: dict[str, Any], integer: bool = False) -> Any:
    bounds: dict[str, Any] = {}
    if meta.get("minimum") is not None:
        bounds["gt" if meta.get("exclusive_minimum") else "ge"] = meta["minimum"]
    if meta.get("maximum") is not None:
        bounds["le"] = meta["maximum"]
    if integer:
        return Annotated[int, Field(**bounds)]
    return Annotated[float, Field(allow_inf_nan=False, **bounds)]


def _text_field(meta: dict[str, Any]) -> Any:
    if meta.get("choices"):
        return Literal[tuple(meta["choices"])]
    hint: Any = Annotated[str, StringConstraints(strip_whitespace=True, min_length=1,
                                                 pattern=meta.get("pattern"))]
    if meta.get("date"):
        hint = Annotated[hint, AfterValidator(_check_date), Field(json_schema_extra={
            "format": "date"})]
    return hint


def _hint_for(hint: Any, meta: dict[str, Any], owner: str, name: str) -> Any:
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        args = [a for a in typing.get_args(hint) if a is not type(None)]
        return _hint_for(args[0], meta, owner, name) | None
    if origin is tuple:
        item = _hint_for(typing.get_args(hint)[0], dict(meta, min_items=0), owner, name)
        if meta.get("min_items"):
            return Annotated[list[item], Field(min_length=meta["min_items"])]  # type: ignore
        return list[item]  # type: ignore[valid-type]
    if origin is dict:
        key = Annotated[str, StringConstraints(pattern=r"^[A-Za-z][A-Za-z0-9_]*$")]
        value = Annotated[str, StringConstraints(strip_whitespace=True, min_length=1)]
        return dict[key, value]  # type: ignore[valid-type]
    if hint is str:
        return _text_field(meta)
    if hint is bool:
        return bool
    if hint is int:
        return _number_field(meta, integer=True)
    if hint is float:
        return _number_field(meta)
    if hint is Sourced:
        return create_model(f"{SOURCED_PREFIX}{owner}_{name}", __base__=FileModel,
                            __doc__="A number with its source and status.",
                            value=(_number_field(meta), ...), source=(SourceKey, ...),
                            status=(Status, ...), note=(OptText, ""))
    if isinstance(hint, type) and dataclasses.is_dataclass(hint):
        return model_for(hint)
    raise TypeError(f"unsupported field type {hint!r}")


def _description(meta: dict[str, Any]) -> str:
    text = str(meta.get("description", ""))
    return f"{text} [{meta['unit']}]" if meta.get("unit") else text


@cache
def model_for(cls: type) -> type[BaseModel]:
    """The strict pydantic model of a schema dataclass (cached; same name as the class)."""
    hints = typing.get_type_hints(cls)
    definitions: dict[str, Any] = {}
    for fld in dataclasses.fields(cls):
        meta = dict(fld.metadata)
        hint = _hint_for(hints[fld.name], meta, cls.__name__, fld.name)
        if fld.default is not dataclasses.MISSING:
            default: Any = fld.default
        elif fld.default_factory is not dataclasses.MISSING:
            made = fld.default_factory()
            default = list(made) if isinstance(made, tuple) else made
        else:
            default = ...
        definitions[fld.name] = (hint, Field(default, description=_description(meta)))
    doc = (cls.__doc__ or "").strip().splitlines()[0] if cls.__doc__ else None
    return create_model(cls.__name__, __base__=FileModel, __doc__=doc, **definitions)


def build(cls: type, model: BaseModel) -> Any:
    """The dataclass ``cls`` built from a validated instance of :func:`model_for(cls)`."""
    hints = typing.get_type_hints(cls)
    values = {fld.name: _convert(hints[fld.name], getattr(model, fld.name))
              for fld in dataclasses.fields(cls)}
    return cls(**values)


def _convert(hint: Any, value: Any) -> Any:
    if value is None:
        return None
    origin = typing.get_origin(hint)
    if origin in (typing.Union, types.UnionType):
        args = [a for a in typing.get_args(hint) if a is not type(None)]
        return _convert(args[0], value)
    if origin is tuple:
        item = typing.get_args(hint)[0]
        return tuple(_convert(item, v) for v in value)
    if origin is dict:
        return dict(value)
    if hint is Sourced:
        return Sourced(float(value.value), value.source, value.status, value.note)
    if hint is float:
        return float(value)
    if isinstance(hint, type) and dataclasses.is_dataclass(hint):
        return build(hint, value)
    return value
