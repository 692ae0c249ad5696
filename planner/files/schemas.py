"""JSON Schemas (draft 2020-12) of the user file kinds, generated from their models.

Editors with a YAML language server check a file as it is typed when it starts with
``# yaml-language-server: $schema=<path to the schema file>``.
"""

from __future__ import annotations

from typing import Any

from planner.files.base import json_schema_of

__all__ = ["inventory_schema", "policy_schema", "plan_schema", "qa_schema", "trusted_keys_schema"]

_ID = "https://scanplan.invalid/schemas/{}-v1.json"


def inventory_schema() -> dict[str, Any]:
    """Schema of a probe inventory file."""
    from planner.files.probes import InventoryFile
    return json_schema_of(InventoryFile, title="scanplan probe inventory (schema_version 1)",
                          schema_id=_ID.format("probes"))


def policy_schema() -> dict[str, Any]:
    """Schema of a local safety policy file."""
    from planner.files.policy import PolicyFile
    return json_schema_of(PolicyFile, title="scanplan local safety policy (schema_version 1)",
                          schema_id=_ID.format("policy"))


def plan_schema() -> dict[str, Any]:
    """Schema of a saved plan file (inputs, computed headline, decisions, signature)."""
    from planner.files.plan import PlanFile
    return json_schema_of(PlanFile, title="scanplan plan inputs (schema_version 1)",
                          schema_id=_ID.format("plan"))


def trusted_keys_schema() -> dict[str, Any]:
    """Schema of a trusted-keys file (supervisors' public keys)."""
    from planner.files.trusted import TrustedKeysFile
    return json_schema_of(TrustedKeysFile, title="scanplan trusted keys (schema_version 1)",
                          schema_id=_ID.format("trusted-keys"))


def qa_schema() -> dict[str, Any]:
    """Schema of a probe QA log (phantom depth-of-penetration measurements)."""
    from planner.files.qa import QaFile
    return json_schema_of(QaFile, title="scanplan probe QA log (schema_version 1)",
                          schema_id=_ID.format("qa"))
