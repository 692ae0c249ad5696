#!/usr/bin/env python3
"""Concordance of scanplan's plans with published practice (tests/practice/cases.yaml).

Each case of the table is planned through the engine path the ``scanplan plan`` command uses
(its argument parser, :func:`planner.cli.plan_inputs.inputs_from_args`,
:func:`planner.planfile.to_request`, :func:`planner.engine.make_plan` and the ``--json``
serialiser), and four values of the plan are compared with what practice gives:

start band
    The plan's start frequency (``frequency_mhz.start`` of a feasible band: the text report's
    "start at ... MHz") lies inside the practice band, allowing 0.25 MHz either side
    (:data:`TOLERANCE_MHZ`). A plan without a feasible band disagrees.
probe type
    ``probe.type`` of the plan is one of the types practice accepts (a list, because practice
    often names only "a linear array" and the plan has two linear types).
harmonic
    ``harmonic.advised`` equals practice's on/off; practice "either" agrees with both.
first window
    ``window.id`` of the plan (its first window) is in the set practice accepts.

The table states, for every practice value, its source key, the place in the source and its
status (verified, from memory, common practice). ``known_disagreements`` lists the
case/column pairs where the current engine disagrees, each with a cause and a one-line
diagnosis; the report marks them, and lists any listed pair that now agrees (stale) or any
disagreement not listed (new).

Usage: python scripts/practice_report.py [--json] [--table FILE] [--case ID ...]
Exit status 0 (1 when the table file is invalid: every problem is listed on stderr).
"""

from __future__ import annotations

import argparse
import json
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

TABLE = ROOT / "tests" / "practice" / "cases.yaml"
TABLE_REFERENCES = ROOT / "tests" / "practice" / "references.yaml"
COLUMNS = ("start_band", "probe_type", "harmonic", "first_window")
COLUMN_TITLES = {"start_band": "start band", "probe_type": "probe type", "harmonic": "harmonic",
                 "first_window": "first window"}
TOLERANCE_MHZ = 0.25
"""Allowance either side of a practice band, in MHz (bands are quoted to 0.5 MHz)."""
STATUSES = ("verified", "from_memory", "common_practice")
HARMONIC_VALUES = ("on", "off", "either")
INPUT_FLAGS = {"target": "--target", "bmi": "--bmi", "sex": "--sex",
               "gestation_weeks": "--gestation-weeks", "window": "--window", "doppler": "--doppler"}


class TableError(Exception):
    """The table file cannot be used; ``problems`` lists every problem (file:line: message)."""

    def __init__(self, problems: list[str]):
        super().__init__(f"{len(problems)} problem(s) in the practice table")
        self.problems = problems


@dataclass(frozen=True)
class Table:
    """The loaded table: cases, known disagreements keyed by (case id, column), and causes."""

    cases: list[dict[str, Any]]
    known: dict[tuple[str, str], dict[str, str]]
    causes: dict[str, str]
    observations: list[dict[str, Any]]


def reference_keys() -> dict[str, str]:
    """scanplan's bibliography merged with the table's own (a key may not be in both)."""
    from planner.references import REFERENCES
    from planner.yamlio import load_user_yaml
    own = load_user_yaml(TABLE_REFERENCES, kind="reference list").data
    clash = sorted(set(own) & set(REFERENCES))
    if clash:
        raise TableError([f"{TABLE_REFERENCES}: keys also defined by scanplan: {', '.join(clash)}"])
    return {**REFERENCES, **{str(k): str(v) for k, v in own.items()}}


def _check_value(col: str, value: Any, keys: dict[str, str]) -> list[str]:
    """Problems of one practice value (relative messages, no position)."""
    if not isinstance(value, dict):
        return ["must be a mapping"]
    out = []
    for name in ("source", "where", "status"):
        if not isinstance(value.get(name), str) or not value.get(name, "").strip():
            out.append(f"needs a non-empty {name!r}")
    if isinstance(value.get("source"), str) and value["source"] not in keys:
        out.append(f"unknown source key {value['source']!r}")
    if value.get("status") not in STATUSES and isinstance(value.get("status"), str):
        out.append(f"status must be one of {', '.join(STATUSES)}, got {value['status']!r}")
    if col == "start_band":
        lo, hi = value.get("low_mhz"), value.get("high_mhz")
        if not isinstance(lo, (int, float)) or not isinstance(hi, (int, float)) \
                or isinstance(lo, bool) or isinstance(hi, bool):
            out.append("needs numbers low_mhz and high_mhz")
        elif not 0 < lo <= hi <= 30:
            out.append(f"needs 0 < low_mhz <= high_mhz <= 30 MHz, got {lo}-{hi}")
    elif col == "harmonic":
        if value.get("value") not in HARMONIC_VALUES:
            out.append(f"value must be one of {', '.join(HARMONIC_VALUES)}")
    else:
        acc = value.get("accept")
        if not isinstance(acc, list) or not acc or not all(isinstance(a, str) for a in acc):
            out.append("needs a non-empty list 'accept' of ids")
    return out


def load_table(path: Path = TABLE) -> Table:
    """Load and check the table; :class:`TableError` lists every problem with file and line."""
    from planner.errors import DataError
    from planner.yamlio import load_user_yaml
    try:
        loaded = load_user_yaml(path, kind="practice table")
        keys = reference_keys()
    except DataError as exc:
        raise TableError(list(exc.problems) or [exc.message]) from None
    problems: list[str] = []

    def at(key_path: tuple, message: str) -> None:
        pos = loaded.line_of(key_path)
        where = f"{path}:{pos[0]}:{pos[1]}" if pos else f"{path}"
        problems.append(f"{where}: {'.'.join(str(k) for k in key_path)}: {message}")

    data = loaded.data
    cases = data.get("cases")
    if not isinstance(cases, list) or not cases:
        raise TableError([f"{path}: 'cases' must be a non-empty list"])
    seen: set[str] = set()
    for i, case in enumerate(cases):
        if not isinstance(case, dict):
            at(("cases", i), "must be a mapping")
            continue
        cid = case.get("id")
        if not isinstance(cid, str) or not cid:
            at(("cases", i), "needs an 'id'")
        elif cid in seen:
            at(("cases", i, "id"), f"duplicate id {cid!r}")
        seen.add(str(cid))
        inputs = case.get("inputs")
        if not isinstance(inputs, dict) or not isinstance(inputs.get("target"), str) \
                or not isinstance(inputs.get("bmi"), (int, float)):
            at(("cases", i, "inputs"), "needs a target id and a BMI")
        elif set(inputs) - set(INPUT_FLAGS):
            at(("cases", i, "inputs"), f"unknown inputs {sorted(set(inputs) - set(INPUT_FLAGS))}")
        practice = case.get("practice")
        if not isinstance(practice, dict):
            at(("cases", i), "needs a 'practice' mapping")
            continue
        for col in COLUMNS:
            if col not in practice:
                at(("cases", i, "practice"), f"missing column {col!r}")
                continue
            for message in _check_value(col, practice[col], keys):
                at(("cases", i, "practice", col), message)
    causes = data.get("causes") or {}
    if not isinstance(causes, dict):
        at(("causes",), "must be a mapping of cause id to description")
        causes = {}
    known: dict[tuple[str, str], dict[str, str]] = {}
    for j, entry in enumerate(data.get("known_disagreements") or []):
        if not isinstance(entry, dict):
            at(("known_disagreements", j), "must be a mapping")
            continue
        pair = (entry.get("case"), entry.get("column"))
        if pair[0] not in seen:
            at(("known_disagreements", j, "case"), f"no case {pair[0]!r}")
        if pair[1] not in COLUMNS:
            at(("known_disagreements", j, "column"), f"column must be one of {', '.join(COLUMNS)}")
        if entry.get("cause") not in causes:
            at(("known_disagreements", j, "cause"), f"unknown cause {entry.get('cause')!r}")
        if not isinstance(entry.get("diagnosis"), str) or not entry["diagnosis"].strip():
            at(("known_disagreements", j), "needs a one-line 'diagnosis'")
        if pair in known:
            at(("known_disagreements", j), f"listed twice: {pair[0]} / {pair[1]}")
        known[(str(pair[0]), str(pair[1]))] = entry
    observations = data.get("observations") or []
    for j, obs in enumerate(observations):
        if not isinstance(obs, dict) or not isinstance(obs.get("note"), str) \
                or not isinstance(obs.get("cases"), list):
            at(("observations", j), "needs an id, a list of cases and a note")
            continue
        for cid in obs["cases"]:
            if cid not in seen:
                at(("observations", j, "cases"), f"no case {cid!r}")
    if problems:
        raise TableError(problems)
    return Table(cases=cases, known=known, causes={str(k): str(v) for k, v in causes.items()},
                 observations=list(observations))


def plan_argv(inputs: dict[str, Any]) -> list[str]:
    """The ``scanplan plan`` command line of a case's inputs (``--json`` added)."""
    argv = ["plan"]
    for key, flag in INPUT_FLAGS.items():
        value = inputs.get(key)
        if value is None or value is False:
            continue
        argv += [flag] if value is True else [flag, f"{value:g}" if isinstance(value, float) else str(value)]
    return argv + ["--json"]


def plan_case(inputs: dict[str, Any]) -> dict[str, Any]:
    """The ``plan --json`` data of a case, computed in process through the command's path."""
    from planner.cli import build_parser
    from planner.cli.plan_inputs import inputs_from_args
    from planner.engine import make_plan
    from planner.engine.serialize import plan_to_json_data
    from planner.planfile import to_request
    args = build_parser(("plan",)).parse_args(plan_argv(inputs))
    return plan_to_json_data(make_plan(to_request(inputs_from_args(args))))


def plan_values(data: dict[str, Any]) -> dict[str, Any]:
    """The four compared values of a plan's JSON data."""
    band = data.get("frequency_mhz") or {}
    probe = data.get("probe") or {}
    return {"start_band": band.get("start") if band.get("feasible") else None,
            "probe_type": probe.get("type"),
            "harmonic": bool((data.get("harmonic") or {}).get("advised")),
            "first_window": (data.get("window") or {}).get("id")}


def agrees(column: str, practice: dict[str, Any], value: Any) -> bool:
    """The agreement rule of one column (see the module docstring)."""
    if column == "start_band":
        return value is not None and \
            practice["low_mhz"] - TOLERANCE_MHZ <= value <= practice["high_mhz"] + TOLERANCE_MHZ
    if column == "harmonic":
        return practice["value"] == "either" or value == (practice["value"] == "on")
    return value in practice["accept"]


def practice_text(column: str, practice: dict[str, Any]) -> str:
    if column == "start_band":
        return f"{practice['low_mhz']:g}-{practice['high_mhz']:g} MHz"
    if column == "harmonic":
        return practice["value"]
    return " | ".join(practice["accept"])


def plan_text(column: str, value: Any) -> str:
    if column == "start_band":
        return "no band" if value is None else f"{value:.1f} MHz"
    if column == "harmonic":
        return "on" if value else "off"
    return str(value)


def evaluate(table: Table, only: set[str] | None = None) -> dict[str, Any]:
    """Plan every case and compare; the report as plain data (what ``--json`` prints)."""
    rows = []
    totals = {col: [0, 0] for col in COLUMNS}
    stale, unlisted = [], []
    for case in table.cases:
        if only and case["id"] not in only:
            continue
        values = plan_values(plan_case(case["inputs"]))
        cols = {}
        for col in COLUMNS:
            prac = case["practice"][col]
            ok = agrees(col, prac, values[col])
            known = table.known.get((case["id"], col))
            totals[col][0] += ok
            totals[col][1] += 1
            if ok and known:
                stale.append(f"{case['id']}/{col}")
            if not ok and not known:
                unlisted.append(f"{case['id']}/{col}")
            cols[col] = {"practice": practice_text(col, prac), "plan": plan_text(col, values[col]),
                         "agree": ok, "source": prac["source"], "where": prac["where"],
                         "status": prac["status"], "note": prac.get("note"),
                         "known_disagreement": None if known is None else
                         {"cause": known["cause"], "diagnosis": known["diagnosis"]}}
        rows.append({"id": case["id"], "title": case.get("title", case["id"]),
                     "inputs": case["inputs"], "argv": plan_argv(case["inputs"])[:-1],
                     "columns": cols})
    agree_all = sum(a for a, _ in totals.values())
    count_all = sum(n for _, n in totals.values())
    return {"tolerance_mhz": TOLERANCE_MHZ, "cases": rows,
            "totals": {col: {"agree": a, "of": n} for col, (a, n) in totals.items()},
            "overall": {"agree": agree_all, "of": count_all},
            "cases_all_agree": sum(all(c["agree"] for c in r["columns"].values()) for r in rows),
            "causes": table.causes, "observations": table.observations,
            "stale_known": stale, "unlisted_disagreements": unlisted}


def render_text(report: dict[str, Any]) -> str:
    """A table per case, then totals per column and overall, then disagreements by cause."""
    lines = ["Practice concordance: scanplan plans against published practice",
             f"(start band allows {report['tolerance_mhz']:g} MHz either side; "
             "status: verified / from_memory / common_practice)", ""]
    width = max(len(t) for t in COLUMN_TITLES.values())
    for row in report["cases"]:
        lines.append(f"{row['id']}: {row['title']}")
        lines.append(f"  inputs: scanplan {' '.join(row['argv'])}")
        pw = max(8, *(len(c["practice"]) for c in row["columns"].values()))
        vw = max(4, *(len(c["plan"]) for c in row["columns"].values()))
        lines.append(f"  {'column':<{width}}  {'practice':<{pw}}  {'plan':<{vw}}  agree")
        for col, c in row["columns"].items():
            mark = "yes" if c["agree"] else ("no (known)" if c["known_disagreement"] else "no")
            lines.append(f"  {COLUMN_TITLES[col]:<{width}}  {c['practice']:<{pw}}  "
                         f"{c['plan']:<{vw}}  {mark}")
            lines.append(f"  {'':<{width}}    {c['source']}, {c['where']} [{c['status']}]")
            if c["known_disagreement"]:
                lines.append(f"  {'':<{width}}    diagnosis: {c['known_disagreement']['diagnosis']}")
        lines.append("")
    lines.append("Totals (agree / cases):")
    for col, t in report["totals"].items():
        lines.append(f"  {COLUMN_TITLES[col]:<{width}}  {t['agree']:3d} / {t['of']}")
    o = report["overall"]
    lines.append(f"  {'overall':<{width}}  {o['agree']:3d} / {o['of']}  "
                 f"({report['cases_all_agree']} of {len(report['cases'])} cases agree in every column)")
    by_cause: dict[str, list[str]] = {}
    for row in report["cases"]:
        for col, c in row["columns"].items():
            if not c["agree"] and c["known_disagreement"]:
                by_cause.setdefault(c["known_disagreement"]["cause"], []).append(
                    f"{row['id']} / {COLUMN_TITLES[col]}: {c['known_disagreement']['diagnosis']}")
    if by_cause:
        lines += ["", "Disagreements by cause:"]
        for cause, items in by_cause.items():
            lines.append(f"  {cause}: {report['causes'].get(cause, '')} ({len(items)})")
            lines += [f"    - {item}" for item in items]
    if report["observations"]:
        lines += ["", "Observations (not counted as disagreements):"]
        for obs in report["observations"]:
            lines.append(f"  {obs.get('id', '')}: {obs['note']}")
            lines.append(f"    cases: {', '.join(obs['cases'])}")
    for label, items in (("Listed as disagreements but now agree (update the list)", report["stale_known"]),
                         ("Disagreements not in the list", report["unlisted_disagreements"])):
        if items:
            lines += ["", f"{label}:"] + [f"  - {item}" for item in items]
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--json", action="store_true", help="machine-readable report (JSON)")
    parser.add_argument("--table", type=Path, default=TABLE, help="the table file (YAML)")
    parser.add_argument("--case", action="append", metavar="ID", help="only this case (repeatable)")
    args = parser.parse_args(argv)
    try:
        table = load_table(args.table)
    except TableError as exc:
        for problem in exc.problems:
            print(problem, file=sys.stderr)
        print(f"practice_report: error: {exc}", file=sys.stderr)
        return 1
    unknown = sorted(set(args.case or ()) - {c["id"] for c in table.cases})
    if unknown:
        print(f"practice_report: error: no case {', '.join(unknown)}", file=sys.stderr)
        return 2
    report = evaluate(table, set(args.case) if args.case else None)
    text = json.dumps(report, indent=2, sort_keys=True) + "\n" if args.json else render_text(report)
    sys.stdout.write(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
