"""The plan engine: inputs -> layer stacks -> physics -> findings -> Plan."""

from planner.engine.plan import Plan, make_plan
from planner.engine.request import PlanRequest

__all__ = ["Plan", "PlanRequest", "make_plan"]
