"""The protocol JSON Schema: valid JSON, generated from the model, accepts shipped protocols.

The full check against the JSON Schema draft 2020-12 meta-schema (json-schema.org) runs when
the optional ``jsonschema`` package is installed; otherwise the structure is checked here.
"""

from __future__ import annotations

import dataclasses
import json
import re
from pathlib import Path

import jsonschema
import pytest

from planner.protocol import schema as model
from planner.protocol.jsonschema import protocol_json_schema
from planner.yamlio import load_user_yaml

ROOT = Path(__file__).parents[1] / "protocols"
SHIPPED = sorted(p for p in ROOT.glob("**/*.yaml")
                 if p.name not in {"probes.yaml", "local-policy.yaml", "qa.yaml"})
BROKEN = Path(__file__).parent / "fixtures" / "protocols_broken"


def all_object_schemas(schema: dict) -> dict[str, dict]:
    return {"Protocol": schema, **schema["$defs"]}


def test_schema_is_json_and_declares_draft_2020_12():
    schema = protocol_json_schema()
    assert json.loads(json.dumps(schema)) == schema
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["properties"]["schema_version"] == {
        "const": 1, "description": "Protocol file format version."}


def test_schema_properties_are_the_model_fields():
    """Generated, not hand-written: each object lists exactly its dataclass fields, the
    required ones are those without default, and unknown keys are refused."""
    for name, obj in all_object_schemas(protocol_json_schema()).items():
        cls = getattr(model, name)
        fields = dataclasses.fields(cls)
        assert list(obj["properties"]) == [f.name for f in fields]
        required = [f.name for f in fields if f.default is dataclasses.MISSING
                    and f.default_factory is dataclasses.MISSING]
        assert obj.get("required", []) == required
        assert obj["additionalProperties"] is False


def test_enums_come_from_the_model():
    defs = protocol_json_schema()["$defs"]
    assert defs["View"]["properties"]["position"]["enum"] == list(model.POSITIONS)
    assert defs["Measurement"]["properties"]["calliper"]["enum"] == list(model.CALLIPERS)
    limits = defs["SafetyLimits"]["properties"]["max_ti"]["anyOf"][0]
    assert limits["properties"]["status"]["enum"] == ["verified", "from_memory",
                                                      "common_practice", "derived"]


def test_every_reference_resolves():
    schema = protocol_json_schema()
    text = json.dumps(schema)
    for name in schema["$defs"]:
        assert f'"#/$defs/{name}"' in text
    refs = {part.split('"')[0] for part in text.split('"$ref": "#/$defs/')[1:]}
    assert refs <= set(schema["$defs"])


# A small validator for the keywords this schema uses, following their definitions in
# "JSON Schema Validation: A Vocabulary for Structural Validation of JSON", draft 2020-12
# (sections 6.1-6.5) and the Core applicators (10.2: allOf, anyOf, not, properties,
# additionalProperties, propertyNames, items). It lets the shipped protocols be checked
# when the jsonschema package is not installed.
KNOWN_KEYWORDS = {"$schema", "$id", "$defs", "$ref", "title", "description", "type",
                  "properties", "required", "additionalProperties", "propertyNames", "items",
                  "enum", "const", "pattern", "minLength", "minimum", "exclusiveMinimum",
                  "maximum", "minItems", "anyOf", "allOf", "not", "format", "default"}
TYPES = {"object": dict, "array": list, "string": str, "boolean": bool, "null": type(None)}


def is_valid(instance, schema: dict, root: dict) -> bool:
    if "$ref" in schema:
        return is_valid(instance, root["$defs"][schema["$ref"].split("/")[-1]], root)
    kind = schema.get("type")
    if kind in ("number", "integer"):
        if isinstance(instance, bool) or not isinstance(instance, (int, float)):
            return False
        if kind == "integer" and not float(instance).is_integer():
            return False
    elif kind and not isinstance(instance, TYPES[kind]):
        return False
    checks = [
        "enum" not in schema or instance in schema["enum"],
        "const" not in schema or instance == schema["const"],
        "pattern" not in schema or re.search(schema["pattern"], instance) is not None,
        "minLength" not in schema or len(instance) >= schema["minLength"],
        "minimum" not in schema or instance >= schema["minimum"],
        "exclusiveMinimum" not in schema or instance > schema["exclusiveMinimum"],
        "maximum" not in schema or instance <= schema["maximum"],
        "minItems" not in schema or len(instance) >= schema["minItems"],
        all(is_valid(instance, s, root) for s in schema.get("allOf", [])),
        "anyOf" not in schema or any(is_valid(instance, s, root) for s in schema["anyOf"]),
        "not" not in schema or not is_valid(instance, schema["not"], root),
    ]
    if isinstance(instance, list) and "items" in schema:
        checks.append(all(is_valid(item, schema["items"], root) for item in instance))
    if isinstance(instance, dict):
        props = schema.get("properties", {})
        checks.append(all(key in instance for key in schema.get("required", [])))
        for key, value in instance.items():
            if "propertyNames" in schema:
                checks.append(is_valid(key, schema["propertyNames"], root))
            if key in props:
                checks.append(is_valid(value, props[key], root))
            elif schema.get("additionalProperties") is False:
                checks.append(False)
            elif isinstance(schema.get("additionalProperties"), dict):
                checks.append(is_valid(value, schema["additionalProperties"], root))
    return all(checks)


def keywords(schema) -> set[str]:
    found: set[str] = set()
    if isinstance(schema, dict):
        for key, value in schema.items():
            found.add(key)
            if key in ("properties", "$defs"):
                for sub in value.values():
                    found |= keywords(sub)
            elif key not in ("enum", "const", "required", "description", "title"):
                found |= keywords(value)
    elif isinstance(schema, list):
        for item in schema:
            found |= keywords(item)
    return found


def test_small_validator_knows_every_keyword_of_the_schema():
    assert keywords(protocol_json_schema()) <= KNOWN_KEYWORDS


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: str(p.relative_to(ROOT)))
def test_shipped_protocols_satisfy_the_schema_small_validator(path):
    schema = protocol_json_schema()
    assert is_valid(load_user_yaml(path, kind="protocol").data, schema, schema)


@pytest.mark.parametrize("name", ["unknown_key.yaml", "wrong_type.yaml",
                                  "missing_threshold_source.yaml", "unknown_probe.yaml"])
def test_small_validator_rejects_broken_fixtures(name):
    schema = protocol_json_schema()
    assert not is_valid(load_user_yaml(BROKEN / name, kind="protocol").data, schema, schema)


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: str(p.relative_to(ROOT)))
def test_shipped_protocols_satisfy_the_schema(path):
    validator_cls = jsonschema.Draft202012Validator
    schema = protocol_json_schema()
    validator_cls.check_schema(schema)
    validator = validator_cls(schema, format_checker=validator_cls.FORMAT_CHECKER)
    data = load_user_yaml(path, kind="protocol").data
    assert [e.message for e in validator.iter_errors(data)] == []


@pytest.mark.parametrize("name", ["unknown_key.yaml", "wrong_type.yaml",
                                  "missing_threshold_source.yaml"])
def test_schema_rejects_broken_fixtures(name):
    data = load_user_yaml(BROKEN / name, kind="protocol").data
    validator = jsonschema.Draft202012Validator(protocol_json_schema())
    assert list(validator.iter_errors(data))
