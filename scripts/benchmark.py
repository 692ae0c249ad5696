#!/usr/bin/env python3
"""Benchmark scanplan against the quality bars of the design (medians and ratios).

Targets: one plan < 5 ms median (with its reach probability); a 100,000-scenario sweep < 1 s; a protocol sheet of 20 views x
6 habitus classes < 0.2 s; terminal UI first paint within 1.3x a bare Textual app; recompute after a
keystroke < 50 ms; started as a user starts it (``scanplan`` in a real terminal, tmux), first paint
within 1.3x and first plan within 2x a bare Textual app's first paint, and ``scanplan plan --json``
within 1.8x ``python -c "import numpy, yaml"`` (scripts/bench_start.py, measured in the same run).
Peak memory is reported (informative). Machines are shared and noisy, so this
prints figures and says which targets are met; it is not a pass/fail unit test.

Usage: python scripts/benchmark.py [--quick] [--json]
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def _median_ms(fn, repeats: int, warmup: int = 3) -> float:
    for _ in range(warmup):
        fn()
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        fn()
        times.append((time.perf_counter() - start) * 1000.0)
    return statistics.median(times)


def bench_plan(quick: bool) -> dict:
    from planner.body.patient import Patient
    from planner.engine import PlanRequest, make_plan

    request = PlanRequest("liver", Patient.from_inputs(bmi=45, conditions={"steatosis": 2}))
    ms = _median_ms(lambda: make_plan(request), 50 if quick else 300)
    return {"name": "one plan (liver, BMI 45, steatosis)", "median_ms": round(ms, 3),
            "target_ms": 5.0, "met": ms < 5.0}


def bench_sweep(quick: bool) -> dict:
    import numpy as np

    from planner.engine.sweep import sweep

    bmi = np.random.default_rng(1).uniform(17, 60, 100_000)
    ms = _median_ms(lambda: sweep("liver", bmi), 3 if quick else 7, warmup=1)
    return {"name": "sweep of 100,000 scenarios (liver)", "median_ms": round(ms, 1),
            "target_ms": 1000.0, "met": ms < 1000.0}


def bench_sheet(quick: bool) -> dict | None:
    try:
        from planner.protocol.sheet import benchmark_sheet
    except ImportError:
        return {"name": "protocol sheet 20 views x 6 classes", "skipped": "sheet not available"}
    ms = _median_ms(benchmark_sheet, 3 if quick else 9, warmup=1)
    return {"name": "protocol sheet 20 views x 6 classes", "median_ms": round(ms, 1),
            "target_ms": 200.0, "met": ms < 200.0}


def bench_ui(quick: bool) -> dict:
    script = ROOT / "scripts" / "bench_ui.py"
    if not script.exists():
        return {"name": "terminal UI", "skipped": "scripts/bench_ui.py missing"}
    args = [sys.executable, str(script)] + (["--quick"] if quick else [])
    proc = subprocess.run(args, capture_output=True, text=True, timeout=600,
                          env={**os.environ, "PYTHONPATH": str(ROOT)})
    if proc.returncode != 0:
        return {"name": "terminal UI", "error": proc.stderr.strip().splitlines()[-1:]}
    data = json.loads(proc.stdout.strip().splitlines()[-1])
    data["name"] = "terminal UI"
    data["first_paint_met"] = data.get("ratio", 99) <= 1.3
    data["recompute_met"] = data.get("recompute_ms_median", 999) < 50
    return data


def bench_start(quick: bool) -> dict:
    script = ROOT / "scripts" / "bench_start.py"
    args = [sys.executable, str(script), "--repeats", "3" if quick else "9"]
    proc = subprocess.run(args, capture_output=True, text=True, timeout=900)
    if proc.returncode != 0:
        return {"name": "start-up (real entry point)", "error": proc.stderr.strip().splitlines()[-1:]}
    data = json.loads(proc.stdout.strip().splitlines()[-1])
    data["name"] = "start-up (real entry point)"
    return data


def _print_start(r: dict) -> None:
    term, cli = r["terminal"], r["cli"]
    met = lambda ok: "MET" if ok else "NOT MET"  # noqa: E731
    if "skipped" in term:
        print(f"{'scanplan in tmux':<45} {term['skipped']}")
    else:
        print(f"{'scanplan in tmux: first paint':<45} {term['first_paint_ms']:.0f} ms vs bare "
              f"{term['bare_first_paint_ms']:.0f} ms = ratio {term['first_paint_ratio']:.2f}  "
              f"target <= 1.3  {met(term['first_paint_met'])}")
        print(f"{'scanplan in tmux: first plan':<45} {term['first_plan_ms']:.0f} ms vs bare "
              f"{term['bare_first_paint_ms']:.0f} ms = ratio {term['first_plan_ratio']:.2f}  "
              f"target <= 2    {met(term['first_plan_met'])}")
    print(f"{'scanplan plan --json':<45} {cli['plan_json_ms']:.0f} ms vs import numpy, yaml "
          f"{cli['numpy_yaml_ms']:.0f} ms = ratio {cli['ratio']:.2f}  target <= 1.8  "
          f"{met(cli['met'])}")
    print(f"{'scanplan --version':<45} {cli['version_ms']:.0f} ms (python -c pass "
          f"{cli['python_ms']:.0f} ms)")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer repetitions (CI)")
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args()
    results = [bench_plan(args.quick), bench_sweep(args.quick), bench_sheet(args.quick),
               bench_ui(args.quick), bench_start(args.quick)]
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    results.append({"name": "peak memory of this process (engine benchmarks)",
                    "peak_rss_mb": round(peak_mb, 1)})
    if args.json:
        print(json.dumps(results, indent=2))
        return 0
    for r in results:
        if "terminal" in r:
            _print_start(r)
        elif "skipped" in r or "error" in r:
            print(f"{r['name']:<45} {r.get('skipped') or r.get('error')}")
        elif "median_ms" in r:
            print(f"{r['name']:<45} median {r['median_ms']:>9} ms   target < {r['target_ms']:g} ms   "
                  f"{'MET' if r['met'] else 'NOT MET'}")
        elif "ratio" in r:
            print(f"{'UI first paint':<45} {r['first_paint_ms']:.0f} ms vs bare {r['bare_first_paint_ms']:.0f} ms"
                  f" = ratio {r['ratio']:.2f}  target <= 1.3  {'MET' if r['first_paint_met'] else 'NOT MET'}")
            print(f"{'UI recompute after a keystroke':<45} median {r['recompute_ms_median']:.1f} ms   "
                  f"target < 50 ms   {'MET' if r['recompute_met'] else 'NOT MET'}")
        else:
            print(f"{r['name']:<45} {r['peak_rss_mb']} MB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
