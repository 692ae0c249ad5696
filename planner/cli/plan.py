"""``scanplan plan``: plan one exam for one patient, from flags or from a plan file.

Every flag maps to one field of :class:`planner.planfile.PlanInputs` (:data:`FLAG_FIELDS`);
:func:`inputs_from_args` is the one way from a command line to inputs, and
:func:`planner.planfile.to_request` the one way from inputs to the engine's request, so that
``--save FILE`` followed by ``--from FILE`` gives the same plan as the original flags.

With ``--from FILE`` the file's inputs are the starting point and every flag given on the
command line replaces the file's value: a repeatable flag (``--condition``, ``--mode``)
replaces the file's whole list, and any of ``--bmi``, ``--height-cm`` and ``--weight-kg``
replaces the file's body size (the other two are cleared unless given too). ``--target`` is
required unless ``--from`` gives it. The engine, the library and numpy load only when the
command runs.
"""

from __future__ import annotations

import argparse

from planner.cli.common import UsageError, os_error_message, write_output
from planner.cli.plan_inputs import FLAG_FIELDS, add_input_arguments, inputs_from_args
from planner.errors import InputError

__all__ = ["FLAG_FIELDS", "inputs_from_args", "register", "run_plan"]


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``plan`` command to ``sub``."""
    p = sub.add_parser("plan", help="plan one exam for one patient")
    add_input_arguments(p)
    p.add_argument("--from", dest="from_file", metavar="FILE",
                   help="start from a saved plan file; flags given here replace its values")
    p.add_argument("--save", metavar="FILE",
                   help="also save the inputs as a plan file (reopen with --from, or in the UI)")
    p.add_argument("--format", choices=("text", "json", "md", "html"), default=None)
    p.add_argument("-o", "--output", metavar="FILE", help="write to a file (atomic) instead of stdout")
    p.add_argument("--force", action="store_true",
                   help="overwrite an existing output (and --save) file")
    p.add_argument("--json", action="store_true", help="same as --format json")
    p.set_defaults(func=run_plan)


def run_plan(args: argparse.Namespace) -> int:
    """Plan, render (text, json, md or html), optionally save the inputs; return 0."""
    from planner.engine import make_plan
    from planner.planfile import load_plan_inputs, to_request
    from planner.report import render_plan

    if args.target is None and args.from_file is None:
        raise UsageError("the following arguments are required: --target (or --from FILE)")
    base = load_plan_inputs(args.from_file) if args.from_file is not None else None
    inputs = inputs_from_args(args, base=base)
    fmt = "json" if args.json else (args.format or "text")
    text = render_plan(make_plan(to_request(inputs)), fmt)
    if args.save is not None:
        _save(args.save, inputs, force=args.force)
    if args.output:
        write_output(args.output, text, force=args.force)
        return 0
    print(text, end="" if text.endswith("\n") else "\n")
    return 0


def _save(path: str, inputs, *, force: bool) -> None:
    """Save the inputs as a plan file (InputError, one line, when the system refuses)."""
    from planner.planfile import save_plan_inputs
    try:
        save_plan_inputs(path, inputs, overwrite=force)
    except OSError as exc:
        raise InputError(os_error_message(exc, path)) from None
