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
    p.add_argument("--trusted", metavar="FILE",
                   help="trusted-keys file to verify the signature of the --from file against")
    p.add_argument("--format", choices=("text", "json", "md", "html"), default=None)
    p.add_argument("-o", "--output", metavar="FILE", help="write to a file (atomic) instead of stdout")
    p.add_argument("--force", action="store_true",
                   help="overwrite an existing output (and --save) file")
    p.add_argument("--json", action="store_true", help="same as --format json")
    p.set_defaults(func=run_plan)


def run_plan(args: argparse.Namespace) -> int:
    """Plan, render (text, json, md or html), optionally save the plan file; return 0.

    With ``--from FILE`` and no flag that changes its inputs, a recomputed headline that
    differs from the one saved is listed on stderr (item, as saved, now) before the plan.
    A draft prints the student's decisions against the plan and the signature's status."""
    from planner.engine import make_plan
    from planner.headline import headline_changes, headline_data
    from planner.plandoc import load_plan_document
    from planner.planfile import to_request
    from planner.report import render_plan
    from planner.stamp import current_stamp

    if args.target is None and args.from_file is None:
        raise UsageError("the following arguments are required: --target (or --from FILE)")
    if args.trusted is not None and args.from_file is None:
        raise UsageError("argument --trusted: needs --from FILE (the signed plan file)")
    document = load_plan_document(args.from_file) if args.from_file is not None else None
    inputs = inputs_from_args(args, base=document.inputs if document else None)
    fmt = "json" if args.json else (args.format or "text")
    plan = make_plan(to_request(inputs))
    stamp = current_stamp()
    verification = None
    if document is not None:
        unchanged = inputs == document.inputs
        if unchanged:
            _report_changes(args.from_file, document.computed,
                            headline_changes(document.computed, headline_data(plan, stamp)))
        verification = _verify(document, args.trusted, unchanged)
    review = signoff = None
    if inputs.draft:
        from planner.report.review import draft_review, signed_fields
        review = draft_review(plan, inputs.choices, verification)
        signoff = signed_fields(inputs.signoff.as_report_fields(), verification)
    text = render_plan(plan, fmt, signoff, stamp=stamp, review=review)
    if args.save is not None:
        _save(args.save, inputs, force=args.force, plan=plan, stamp=stamp)
    if args.output:
        write_output(args.output, text, force=args.force)
        return 0
    print(text, end="" if text.endswith("\n") else "\n")
    return 0


def _report_changes(path: str, stored, changes: list[tuple[str, str, str]]) -> None:
    """List on stderr what recomputing the saved plan changed (nothing when unchanged)."""
    import sys

    from planner.headline import changes_table
    if not changes:
        return
    made = f" (saved by {stored.get('generated_by')} at {stored.get('generated_at')})"
    print(f"scanplan: note: the plan recomputed from {path} differs from the one saved{made}:",
          file=sys.stderr)
    for line in changes_table(changes):
        print(line, file=sys.stderr)


def _verify(document, trusted_path: str | None, unchanged: bool):
    """The signature status of a reopened file; inputs changed by flags count as changed."""
    from planner.signing import Verification, load_trusted_keys, verify_document
    trusted = load_trusted_keys(trusted_path) if trusted_path is not None else None
    result = verify_document(document.data, trusted)
    if not unchanged and result.status in ("valid", "unchecked"):
        return Verification("changed", result.name, result.signed_at, result.comment,
                            result.role)
    return result


def _save(path: str, inputs, *, force: bool, plan=None, stamp=None) -> None:
    """Save the plan file (InputError, one line, when the system refuses)."""
    from planner.planfile import save_plan_inputs
    try:
        save_plan_inputs(path, inputs, overwrite=force, plan=plan, stamp=stamp)
    except OSError as exc:
        raise InputError(os_error_message(exc, path)) from None
