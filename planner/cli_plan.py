"""``scanplan plan`` and ``scanplan targets``."""

from __future__ import annotations

from planner.cli import emit_json, finite_float


def register(sub) -> None:
    p = sub.add_parser("plan", help="plan one exam for one patient")
    p.add_argument("--target", required=True, help="target id (see `scanplan targets`)")
    p.add_argument("--bmi", type=finite_float, help="body-mass index [kg/m2]")
    p.add_argument("--height-cm", type=finite_float)
    p.add_argument("--weight-kg", type=finite_float)
    p.add_argument("--sex", choices=("female", "male"))
    p.add_argument("--wall-mm", type=finite_float, help="measured body-wall thickness at the window [mm]")
    p.add_argument("--fat-mm", type=finite_float, help="measured subcutaneous fat thickness [mm]")
    p.add_argument("--depth-cm", type=finite_float, help="measured skin-to-target depth [cm]")
    p.add_argument("--window", help="use this window only (ids in `scanplan targets --json`)")
    p.add_argument("--condition", action="append", default=[], metavar="NAME[:GRADE]",
                   help="steatosis, ascites, full_bladder, empty_bladder, bowel_gas, limited_mobility, "
                        "no_breath_hold, post_prandial, oedema (repeatable)")
    p.add_argument("--gestation-weeks", type=finite_float)
    p.add_argument("--exam", help="exam type for the safety rules (default: the target's)")
    p.add_argument("--mode", action="append", default=[], metavar="MODE",
                   help="planned mode: b_mode, colour_doppler, power_doppler, pulsed_doppler (repeatable)")
    p.add_argument("--contrast", action="store_true", help="a gas contrast agent will be given")
    p.add_argument("--febrile", action="store_true")
    p.add_argument("--lung-in-beam", action="store_true")
    p.add_argument("--pregnancy-possible", action="store_true")
    p.add_argument("--expected-ti", type=finite_float, help="expected displayed TI")
    p.add_argument("--expected-mi", type=finite_float, help="expected displayed MI")
    p.add_argument("--minutes", type=finite_float, help="planned scanning minutes")
    p.add_argument("--probes", metavar="FILE", help="department probe inventory (YAML)")
    p.add_argument("--local", metavar="FILE", help="department local policy (YAML)")
    p.add_argument("--doppler", action="store_true", help="add Doppler planning for vessel targets")
    p.add_argument("--draft", action="store_true", help="mark as a draft for supervised practice")
    p.add_argument("--format", choices=("text", "json", "md", "html"), default=None)
    p.add_argument("-o", "--output", metavar="FILE", help="write to a file (atomic) instead of stdout")
    p.add_argument("--force", action="store_true", help="overwrite an existing output file")
    p.add_argument("--json", action="store_true", help="same as --format json")
    p.set_defaults(func=run_plan)

    t = sub.add_parser("targets", help="list the target library")
    t.add_argument("--json", action="store_true")
    t.set_defaults(func=run_targets)


def request_from_args(args):
    """Build a PlanRequest from parsed arguments (InputError on impossible values)."""
    from planner.body.conditions import parse_condition
    from planner.body.patient import Patient
    from planner.engine.request import PlanRequest
    from planner.library.targets import load_library

    target = load_library().get(args.target)
    conditions: dict[str, int] = {}
    for text in args.condition:
        name, grade = parse_condition(text)
        conditions[name] = grade
    patient = Patient.from_inputs(bmi=args.bmi, height_cm=args.height_cm, weight_kg=args.weight_kg,
                                  sex=args.sex, conditions=conditions,
                                  gestation_weeks=args.gestation_weeks, wall_mm=args.wall_mm,
                                  fat_mm=args.fat_mm, depth_cm=args.depth_cm)
    exam = args.exam or target.exam_type
    if args.gestation_weeks is not None and exam.startswith("neonatal"):
        from planner.errors import InputError
        raise InputError(f"a gestational age does not apply to a {exam.replace('_', ' ')} exam")
    overrides: dict = {name: value for name, value in (
        ("exam_type", args.exam), ("expected_ti", args.expected_ti),
        ("planned_minutes", args.minutes), ("expected_mi", args.expected_mi)) if value is not None}
    overrides.update({name: True for name, flag in (
        ("contrast_agent", args.contrast), ("febrile", args.febrile),
        ("lung_in_beam", args.lung_in_beam), ("pregnancy_possible", args.pregnancy_possible))
        if flag})
    if args.mode:
        modes = list(args.mode)
        if args.doppler and not any(m.endswith("doppler") for m in modes):
            modes.append("pulsed_doppler")
        overrides["modes"] = tuple(modes)
    return PlanRequest(target_id=target.id, patient=patient, window_id=args.window,
                       context_overrides=overrides or None,
                       probes_path=args.probes, local_policy_path=args.local, doppler=args.doppler,
                       draft=args.draft)


def run_plan(args) -> int:
    from planner.engine import make_plan
    from planner.report import render_plan

    fmt = "json" if args.json else (args.format or "text")
    plan = make_plan(request_from_args(args))
    text = render_plan(plan, fmt)
    if args.output:
        from planner.yamlio import atomic_write_text
        atomic_write_text(args.output, text, overwrite=args.force)
        return 0
    print(text, end="" if text.endswith("\n") else "\n")
    return 0


def run_targets(args) -> int:
    from planner.library.targets import load_library

    lib = load_library()
    rows = [{"id": t.id, "name": t.name, "reflector": t.reflector, "region": t.region,
             "exam_type": t.exam_type, "typical_depth_cm": t.typical_depth_cm,
             "detail_mm": t.detail_mm, "windows": [w.id for w in t.windows]}
            for t in lib.targets.values()]
    if args.json:
        emit_json(rows)
        return 0
    for row in rows:
        print(f"{row['id']:<24} {row['region']:<16} {row['reflector']:<9} {row['name']}")
    return 0
