"""One file layer: a strict model for every file kind scanplan reads.

Every file goes through :func:`planner.yamlio.load_user_yaml` (safe loading, size, depth,
node and alias limits, duplicate keys, bad tags) and then one pydantic v2 model in strict
mode; :mod:`planner.files.problems` maps the model's error locations onto the file's lines,
so every problem comes out at once as ``file:line:col: key.path: message``.

- protocol: a model generated from the dataclasses of :mod:`planner.protocol.schema`
  (:mod:`planner.files.dataclass_model`); loader ``planner.protocol.loader.load_protocol``;
- probe inventory: :class:`planner.files.probes.InventoryFile`;
  loader ``planner.library.probes.load_inventory``;
- local policy: :class:`planner.files.policy.PolicyFile`;
  loader ``planner.safety.policy.load_local_policy``;
- plan file: :class:`planner.files.plan.PlanFile`; loader ``planner.planfile.load_plan_inputs``;
- trusted keys: :class:`planner.files.trusted.TrustedKeysFile`;
  loader ``planner.signing.load_trusted_keys``;
- probe QA log: :class:`planner.files.qa.QaFile`; loader ``planner.library.qa_log.load_qa_log``;
- target library: :class:`planner.files.targets.TargetsFile`;
  loader ``planner.library.targets.parse_library``;
- package data (``planner/data``): :mod:`planner.files.package`; read fast at run time
  (:mod:`planner.datafiles`) and validated once by the test suite.

:func:`schema_for` returns the JSON Schema of a user file kind; :data:`SCHEMA_KINDS` is the
registry (kind -> function returning the schema) that other kinds are added to with
:func:`register_schema`. Importing this package does not import pydantic (about 60 ms):
the models load only when a user file is validated or a schema is asked for.
"""

from __future__ import annotations

from collections.abc import Callable
from importlib import import_module
from typing import Any

__all__ = ["SCHEMA_KINDS", "register_schema", "schema_for"]


def _lazy(target: str) -> Callable[[], dict[str, Any]]:
    module_name, _, name = target.partition(":")

    def make() -> dict[str, Any]:
        return getattr(import_module(module_name), name)()

    make.__name__ = name
    make.__doc__ = f"The JSON Schema from ``{target}``."
    return make


SCHEMA_KINDS: dict[str, Callable[[], dict[str, Any]]] = {
    "protocol": _lazy("planner.protocol.jsonschema:protocol_json_schema"),
    "probes": _lazy("planner.files.schemas:inventory_schema"),
    "policy": _lazy("planner.files.schemas:policy_schema"),
    "plan": _lazy("planner.files.schemas:plan_schema"),
    "plan-output": _lazy("planner.engine.serialize:plan_output_schema"),
    "trusted-keys": _lazy("planner.files.schemas:trusted_keys_schema"),
    "qa": _lazy("planner.files.schemas:qa_schema"),
}
"""File kind -> function returning its JSON Schema (draft 2020-12), in listing order."""


def register_schema(kind: str, factory: Callable[[], dict[str, Any]]) -> None:
    """Add (or replace) the schema of ``kind``; ``factory()`` returns the schema dict."""
    if not isinstance(kind, str) or not kind or not callable(factory):
        raise ValueError("register_schema needs a kind name and a callable")
    SCHEMA_KINDS[kind] = factory


def schema_for(kind: str) -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of file kind ``kind`` (see :data:`SCHEMA_KINDS`).

    Raises
    ------
    planner.errors.InputError
        For an unknown kind, naming the valid ones.
    """
    factory = SCHEMA_KINDS.get(kind)
    if factory is None:
        from planner.errors import InputError
        raise InputError(f"unknown schema kind {kind!r}; valid kinds: "
                         f"{', '.join(SCHEMA_KINDS)}", title="Unknown schema")
    return factory()
