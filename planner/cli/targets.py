"""``scanplan targets``: the target library, as a table or as JSON."""

from __future__ import annotations

import argparse

from planner.cli.common import emit_json

__all__ = ["register", "run_targets"]


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``targets`` command to ``sub``."""
    t = sub.add_parser("targets", help="list the target library")
    t.add_argument("--json", action="store_true")
    t.set_defaults(func=run_targets)


def run_targets(args: argparse.Namespace) -> int:
    """Print one row per target (``--json``: id, name, reflector, region, exam_type,
    typical_depth_cm, detail_mm, windows; obstetric targets also ``gestation_weeks`` with the
    ``valid`` and ``scan`` ranges and the ``default`` planned when none is given)."""
    from planner.body.gestation import gestation_range
    from planner.library.targets import load_library

    lib = load_library()
    rows = []
    for t in lib.targets.values():
        row = {"id": t.id, "name": t.name, "reflector": t.reflector, "region": t.region,
               "exam_type": t.exam_type, "typical_depth_cm": t.typical_depth_cm,
               "detail_mm": t.detail_mm, "windows": [w.id for w in t.windows]}
        rng = gestation_range(t.id)
        if rng is not None:
            row["gestation_weeks"] = {"valid": list(rng.valid.value), "scan": list(rng.scan.value),
                                      "default": rng.default.value}
        rows.append(row)
    if args.json:
        emit_json(rows)
        return 0
    for row in rows:
        print(f"{row['id']:<24} {row['region']:<16} {row['reflector']:<9} {row['name']}")
    return 0
