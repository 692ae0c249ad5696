"""The plan engine: inputs -> layer stacks -> physics -> rule registry -> typed Plan.

JSON at the edge: :func:`plan_to_json_data` (the data of ``plan --json``) and
:func:`plan_output_schema` (its JSON Schema), both in :mod:`planner.engine.serialize`.
"""

from planner.engine.plan import Plan, make_plan
from planner.engine.request import PlanRequest
from planner.engine.serialize import plan_output_schema, plan_to_json_data

__all__ = ["Plan", "PlanRequest", "make_plan", "plan_output_schema", "plan_to_json_data"]
