#!/usr/bin/env python3
"""Headline plans of ten common targets at BMI 21 and 45, to compare two versions of the physics.

For each target and BMI it records what a plan shows first: the band (low/high), the start
frequency of the sweep headline, the probe and the window. Save one version's table with
``--save FILE`` and compare another against it with ``--compare FILE`` (a Markdown table with
before -> after in each changed cell).

Usage: python scripts/physics_before_after.py [--save FILE] [--compare FILE]
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

TARGETS = ("liver", "gallbladder", "kidney", "aorta", "pancreas", "thyroid", "carotid-bifurcation",
           "fetal-head", "appendix", "femoral-vein")
BMIS = (21.0, 45.0)
GESTATION_WEEKS = {"fetal-head": 20.0}
"""Gestation for the obstetric target (a mid-trimester survey; invented demo input)."""

FIELDS = ("low", "high", "start", "probe", "window")


def headlines() -> dict[str, dict]:
    """``"target@bmi" -> {low, high, start, probe, window}`` for every target and BMI."""
    from planner.body.patient import Patient
    from planner.engine import PlanRequest, make_plan
    from planner.engine.sweep import sweep_plans

    out: dict[str, dict] = {}
    for target in TARGETS:
        for bmi in BMIS:
            patient = Patient.from_inputs(bmi=bmi, gestation_weeks=GESTATION_WEEKS.get(target))
            request = PlanRequest(target, patient)
            plan = make_plan(request)
            row = sweep_plans(request, [bmi])[0]
            out[f"{target}@{bmi:g}"] = {
                "low": plan.frequency_mhz.low, "high": plan.frequency_mhz.high,
                "start": row.start_mhz, "probe": plan.probe.id if plan.probe else None,
                "window": plan.window.id}
    return out


def _cell(before, after) -> str:
    if before == after:
        return f"{after}"
    return f"{before} -> **{after}**"


def table(before: dict, after: dict) -> str:
    lines = ["| target | BMI | " + " | ".join(FIELDS) + " |",
             "|---|---|" + "---|" * len(FIELDS)]
    for key, new in after.items():
        target, bmi = key.split("@")
        old = before.get(key, {})
        lines.append(f"| {target} | {bmi} | " + " | ".join(_cell(old.get(f), new[f]) for f in FIELDS) + " |")
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--save", metavar="FILE", help="write this version's table as JSON")
    parser.add_argument("--compare", metavar="FILE", help="compare with a table saved earlier")
    args = parser.parse_args(argv)
    now = headlines()
    if args.save:
        Path(args.save).write_text(json.dumps(now, indent=1) + "\n", encoding="utf-8")
    before = json.loads(Path(args.compare).read_text(encoding="utf-8")) if args.compare else now
    print(table(before, now))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
