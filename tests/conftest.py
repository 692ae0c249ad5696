"""Shared test set-up: a fixed clock, so that every stamped output (plans, plan files,
protocol sheets) is the same on every run (see :mod:`planner.stamp`)."""

from __future__ import annotations

import os

FIXED_TIME = "2026-03-01T09:30:00Z"
"""The generation time of every output the tests make (invented)."""

os.environ["SCANPLAN_FIXED_TIME"] = FIXED_TIME
