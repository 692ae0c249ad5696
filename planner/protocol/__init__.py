"""Department protocol files: typed model, safe loading with every problem, JSON Schema.

A protocol describes one exam of one department (views in order, windows, positions,
measurements with sourced thresholds, local safety limits, escalation,
documentation). See :mod:`planner.protocol.schema` for the format.
"""

from __future__ import annotations

from planner.protocol.jsonschema import protocol_json_schema
from planner.protocol.loader import check_files, load_protocol
from planner.protocol.schema import SCHEMA_VERSION, Protocol

__all__ = ["Protocol", "SCHEMA_VERSION", "load_protocol", "check_files", "protocol_json_schema"]
