"""``scanplan sweep``: one plan headline per BMI, to see where a probe or a window stops working.

``scanplan sweep --target T --bmi A:B:STEP [other plan flags] [--json]`` takes every plan input
flag but ``--bmi`` (and ``--from FILE`` as a starting point), and gives one row per BMI value
from A to B inclusive in steps of STEP: ``bmi``, ``window`` (id), ``probe`` (id), ``start_mhz``,
``high_mhz``, ``low_mhz``, ``harmonic`` (bool) and ``feasible``. The rows come from the
engine's vectorised path (:func:`planner.engine.sweep.sweep_plans`), which gives for each row
the plan :func:`planner.engine.make_plan` gives for that BMI.
"""

from __future__ import annotations

import argparse

from planner.cli.common import UsageError, emit_json, write_output
from planner.cli.plan_inputs import add_input_arguments, inputs_from_args

__all__ = ["MAX_ROWS", "bmi_range", "register", "run_sweep"]

MAX_ROWS: int = 2000
"""Most rows one sweep prints (a range finer than this is a typing slip)."""

BMI_LIMITS: tuple[float, float] = (10.0, 90.0)
"""BMI values a sweep accepts (the range the validity flags allow without a warning is narrower). [kg/m^2]"""


def bmi_range(text: str) -> list[float]:
    """Parse ``A:B:STEP`` (or a single value ``A``) into the BMI values A, A+STEP, ... <= B.

    Raises
    ------
    UsageError
        Unless A <= B, STEP > 0, every value within :data:`BMI_LIMITS` and at most
        :data:`MAX_ROWS` rows.
    """
    from planner.numbers import NumberError, parse_number

    parts = text.split(":")
    if len(parts) not in (1, 3):
        raise UsageError(f"argument --bmi: expected A:B:STEP (e.g. 20:50:5), got {text!r}")
    try:
        values = [parse_number(part) for part in parts]
    except NumberError as exc:
        raise UsageError(f"argument --bmi: {exc.message}") from None
    start, stop, step = (values[0], values[0], 1.0) if len(values) == 1 else values
    if step <= 0:
        raise UsageError(f"argument --bmi: STEP must be > 0, got {parts[2]!r}")
    if stop < start:
        raise UsageError(f"argument --bmi: B ({stop:g}) must not be below A ({start:g})")
    low, high = BMI_LIMITS
    if start < low or stop > high:
        raise UsageError(f"argument --bmi: BMI must lie within {low:g}-{high:g}, got {text!r}")
    count = int((stop - start) / step + 1e-9) + 1
    if count > MAX_ROWS:
        raise UsageError(f"argument --bmi: {count} rows; at most {MAX_ROWS} (use a larger STEP)")
    return [round(start + i * step, 6) for i in range(count)]


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``sweep`` command to ``sub``."""
    p = sub.add_parser("sweep", help="one plan headline per BMI (where a probe or window stops working)")
    add_input_arguments(p, bmi=False)
    p.add_argument("--bmi", required=True, metavar="A:B:STEP",
                   help="BMI values from A to B in steps of STEP [kg/m2], e.g. 20:50:5")
    p.add_argument("--from", dest="from_file", metavar="FILE",
                   help="start from a saved plan file; flags given here replace its values")
    p.add_argument("--json", action="store_true", help="print the rows as a JSON list")
    p.add_argument("-o", "--output", metavar="FILE", help="write to a file (atomic) instead of stdout")
    p.add_argument("--force", action="store_true", help="overwrite an existing output file")
    p.set_defaults(func=run_sweep)


def _table(rows: list[dict]) -> str:
    head = f"{'BMI':>6}  {'window':<34} {'probe':<18} {'start':>6} {'band MHz':>11}  harmonic"
    lines = [head, "-" * len(head)]
    for r in rows:
        band = "-" if r["low_mhz"] is None else f"{r['low_mhz']:.1f}-{r['high_mhz']:.1f}"
        start = "-" if r["start_mhz"] is None else f"{r['start_mhz']:.1f}"
        flag = "" if r["feasible"] else "  (detail not reached)"
        lines.append(f"{r['bmi']:>6g}  {r['window']:<34} {r['probe'] or '-':<18} {start:>6} {band:>11}  "
                     f"{'yes' if r['harmonic'] else 'no'}{flag}")
    lines.append("")
    lines.append("Decision support only: each row is the plan's headline for that BMI; open the plan "
                 "(scanplan plan) for its findings and safety cautions, which defer to local protocols.")
    return "\n".join(lines) + "\n"


def run_sweep(args: argparse.Namespace) -> int:
    """Print (or write) one row per BMI; return 0."""
    import dataclasses

    from planner.engine.sweep import sweep_plans
    from planner.planfile import load_plan_inputs, to_request

    values = bmi_range(args.bmi)
    if args.target is None and args.from_file is None:
        raise UsageError("the following arguments are required: --target (or --from FILE)")
    base = load_plan_inputs(args.from_file) if args.from_file is not None else None
    args.bmi = None                      # the sweep sets the BMI of each row
    inputs = inputs_from_args(args, base=base)
    inputs = dataclasses.replace(inputs, bmi=values[0], height_cm=None, weight_kg=None)
    rows = [row.to_dict() for row in sweep_plans(to_request(inputs), values)]
    if args.json:
        import json
        text = json.dumps(rows, sort_keys=True, indent=2, allow_nan=False) + "\n"
    else:
        text = _table(rows)
    if args.output:
        write_output(args.output, text, force=args.force)
        return 0
    if args.json:
        emit_json(rows)
    else:
        print(text, end="")
    return 0
