"""``scanplan qa FILE [--probes INV] [--json]``: each probe's signal budget from its QA log.

The log (schema kind ``qa``, :mod:`planner.files.qa`) is checked in full (exit 1 with every
problem as ``file:line:col: key.path: message``); each probe's budget, its sessions as a depth
of penetration under the baseline's conditions, its trend and the QA warnings follow
(:mod:`planner.engine.qa_budget`). ``--probes`` names the inventory whose probe ids and pulse
bandwidths the log refers to (default: the generic one). Output carries the version and time
stamp (:mod:`planner.stamp`). The engine loads only when the command runs.
"""

from __future__ import annotations

import argparse

from planner.cli.common import write_output

__all__ = ["register", "run_qa"]


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``qa`` command to ``sub``."""
    p = sub.add_parser("qa", help="each probe's signal budget and trend from a phantom QA log")
    p.add_argument("file", metavar="FILE", help="probe QA log (YAML, schema kind qa)")
    p.add_argument("--probes", metavar="INV", help="probe inventory the log's probe ids refer to")
    p.add_argument("--json", action="store_true", help="JSON instead of text")
    p.add_argument("-o", "--output", metavar="FILE", help="write to a file (atomic) instead of stdout")
    p.add_argument("--force", action="store_true", help="overwrite an existing output file")
    p.set_defaults(func=run_qa)


def run_qa(args: argparse.Namespace) -> int:
    """Print (or write) the QA report; return 0 (QA warnings are part of the report)."""
    import json

    from planner.engine.qa_budget import qa_report
    from planner.library.probes import load_inventory
    from planner.library.qa_log import load_qa_log
    from planner.report.qa import qa_data, qa_text
    from planner.stamp import current_stamp

    inventory = load_inventory(args.probes)
    report = qa_report(load_qa_log(args.file), inventory)
    stamp = current_stamp()
    if args.json:
        text = json.dumps(qa_data(report, inventory.origin, stamp), sort_keys=True, indent=2,
                          allow_nan=False) + "\n"
    else:
        text = qa_text(report, inventory.origin, stamp)
    if args.output:
        write_output(args.output, text, force=args.force)
        return 0
    print(text, end="")
    return 0
