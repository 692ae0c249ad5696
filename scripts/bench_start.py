"""Start-up as a user meets it: ``scanplan`` in a real terminal, and ``scanplan plan --json``.

Prints one JSON object (medians over alternating launches, milliseconds)::

    {"terminal": {"first_paint_ms", "first_plan_ms", "bare_first_paint_ms",
                  "first_paint_ratio", "first_plan_ratio", ...},
     "cli": {"plan_json_ms", "numpy_yaml_ms", "ratio", "version_ms", "python_ms"}, ...}

- **Terminal.** Each app is started as the command a user types, in a fresh tmux window
  (a private tmux server, 120 x 36, ``TERM=xterm-256color``). The clock starts just before
  tmux is asked to start the command, and the pane is read with ``capture-pane`` every few
  milliseconds, through one control-mode client (:class:`Control`: no process per read): *first paint* is the first read that shows the app's own text (the bare
  app's label; scanplan's masthead), *first plan* the first read that shows scanplan's
  planned band (``Band  a–b MHz``). The bare app is a Textual app holding one Label,
  started the same way with the same interpreter. Targets: first paint <= 1.3x and first plan
  <= 2x the bare app's first paint. Stderr is not redirected: Textual draws on it.
- **Command line.** Wall time of ``scanplan plan --target liver --bmi 38 --json`` against
  ``python -c "import numpy, yaml"`` (target: at most 1.8x), plus ``scanplan --version`` and
  ``python -c pass`` for scale.

Every process runs with compiled bytecode allowed (``PYTHONDONTWRITEBYTECODE`` removed from
its environment; the warm-up launches write the caches), as in an installed package: with
that variable set, each start re-compiles every planner module (about 50 of them), which no
installed user pays and which numpy, installed by pip with its bytecode, never pays either.
``--as-is`` keeps the environment unchanged.

``--root DIR`` runs the planner found in ``DIR`` (with a launcher that bypasses the editable
install) instead of the installed ``scanplan`` command, to compare two versions of the code
with the same launcher. Usage: ``python scripts/bench_start.py [--repeats N] [--root DIR]``.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import shlex
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

SOCKET = f"scanplan-bench-{os.getpid()}"
BARE_APP = '''from textual.app import App
from textual.widgets import Label


class Bare(App):
    def compose(self):
        yield Label("bare textual app")


Bare().run()
'''
LAUNCHER = ("import sys; sys.meta_path[:] = [f for f in sys.meta_path if 'editable' not in "
            "repr(f)]; sys.path.insert(0, {root!r}); from planner.cli import main; "
            "sys.exit(main())")
PAINTED = {"bare": re.compile(r"bare textual app"), "scanplan": re.compile(r"scanplan\s+│")}
PLANNED = re.compile(r"[Bb]and\s+\d+(\.\d+)?–\d+(\.\d+)? MHz")
"""The plan summary's band ("Band  start 2.9 MHz · band 1.2–3.7 MHz", or the band alone)."""


def scanplan_command(root: str | None) -> list[str]:
    """The command that starts scanplan: the installed script, or the code in ``root``."""
    if root:
        return [sys.executable, "-c", LAUNCHER.format(root=str(Path(root).resolve()))]
    script = Path(sys.executable).with_name("scanplan")
    return [str(script)] if script.exists() else [shutil.which("scanplan") or "scanplan"]


ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
"""The environment of every measured process (see the module docstring)."""


def _tmux(*args: str) -> str:
    return subprocess.run(["tmux", "-L", SOCKET, *args], capture_output=True, text=True,
                          check=False, env=ENV).stdout


class Control:
    """One tmux control-mode client (``tmux -C``) that runs commands and returns their output.

    Reading the pane through it costs no process per read: the older way, a ``tmux
    capture-pane`` process every 10 ms, kept about a third of a core busy during every
    launch, which this two-core machine then took from the app being measured (and from
    the bare app alike). The client asks for no pane output (``-f no-output``)."""

    def __init__(self) -> None:
        self.process = subprocess.Popen(["tmux", "-L", SOCKET, "-C", "attach-session", "-t", "keep",
                                         "-f", "no-output"], stdin=subprocess.PIPE,
                                        stdout=subprocess.PIPE, text=True, env=ENV, bufsize=1)

    def run(self, command: str) -> str:
        """The output of one tmux command (as ``tmux COMMAND`` would print it)."""
        stdin, stdout = self.process.stdin, self.process.stdout
        assert stdin is not None and stdout is not None
        stdin.write(command + "\n")
        stdin.flush()
        lines: list[str] = []
        inside = False
        for line in stdout:
            if line.startswith("%begin"):
                inside = True
            elif inside and line.startswith(("%end", "%error")):
                return "".join(lines)
            elif inside:
                lines.append(line)
        raise RuntimeError("the tmux control client ended")

    def close(self) -> None:
        try:
            if self.process.stdin is not None:
                self.process.stdin.close()
            self.process.wait(timeout=5)
        except (OSError, subprocess.TimeoutExpired):
            self.process.kill()


def _terminal_launch(control: Control, command: list[str], want_plan: bool,
                     timeout_s: float = 30.0):
    """(first paint, first plan or None) in ms for one launch in a new tmux window."""
    kind = "scanplan" if want_plan else "bare"
    line = "TERM=xterm-256color exec " + shlex.join(command)
    start = time.perf_counter()
    control.run(f"new-window -d -t keep -n run {shlex.quote(line)}")
    paint = plan = None
    try:
        while time.perf_counter() - start < timeout_s:
            screen = control.run("capture-pane -p -t keep:run")
            now = (time.perf_counter() - start) * 1000.0
            if paint is None and PAINTED[kind].search(screen):
                paint = now
                if not want_plan:
                    break
            if want_plan and PLANNED.search(screen):
                plan = now
                paint = now if paint is None else paint
                break
            time.sleep(0.010)
    finally:
        control.run("kill-window -t keep:run")
    if paint is None or (want_plan and plan is None):
        raise RuntimeError(f"{kind} showed nothing within {timeout_s:g} s in tmux")
    return paint, plan


def terminal(repeats: int, root: str | None) -> dict:
    """First paint and first plan of scanplan against a bare Textual app, in tmux."""
    if not shutil.which("tmux"):
        return {"skipped": "tmux not installed"}
    ours = scanplan_command(root)
    with tempfile.TemporaryDirectory() as scratch:
        bare_script = Path(scratch) / "bare_app.py"
        bare_script.write_text(BARE_APP, encoding="utf-8")
        bare = [sys.executable, str(bare_script)]
        _tmux("new-session", "-d", "-s", "keep", "-x", "120", "-y", "36", "sleep 3600")
        control = Control()
        try:
            _terminal_launch(control, bare, False)            # warm the caches of both
            _terminal_launch(control, ours, True)
            bare_paint, paint, plan = [], [], []
            for _ in range(repeats):
                bare_paint.append(_terminal_launch(control, bare, False)[0])
                p, q = _terminal_launch(control, ours, True)
                paint.append(p)
                plan.append(q)
        finally:
            control.close()
            _tmux("kill-server")
    b, p, q = (statistics.median(v) for v in (bare_paint, paint, plan))
    return {"first_paint_ms": round(p, 1), "first_plan_ms": round(q, 1),
            "bare_first_paint_ms": round(b, 1), "first_paint_ratio": round(p / b, 2),
            "first_plan_ratio": round(q / b, 2), "first_paint_met": p / b <= 1.3,
            "first_plan_met": q / b <= 2.0, "repeats": repeats}


def _wall_ms(command: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run(command, check=True, stdout=subprocess.DEVNULL, env=ENV)
    return (time.perf_counter() - start) * 1000.0


def cli(repeats: int, root: str | None) -> dict:
    """``scanplan plan --json`` against ``python -c "import numpy, yaml"`` (alternating)."""
    ours = scanplan_command(root)
    runs = {"plan_json_ms": ours + ["plan", "--target", "liver", "--bmi", "38", "--json"],
            "numpy_yaml_ms": [sys.executable, "-c", "import numpy, yaml"],
            "version_ms": ours + ["--version"], "python_ms": [sys.executable, "-c", "pass"]}
    times: dict[str, list[float]] = {name: [] for name in runs}
    for command in runs.values():
        _wall_ms(command)                            # warm-up
    for _ in range(repeats):
        for name, command in runs.items():
            times[name].append(_wall_ms(command))
    out = {name: round(statistics.median(v), 1) for name, v in times.items()}
    out["ratio"] = round(out["plan_json_ms"] / out["numpy_yaml_ms"], 2)
    out["met"] = out["ratio"] <= 1.8
    out["repeats"] = repeats
    return out


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=9, help="launches of each (default 9)")
    parser.add_argument("--root", help="run the planner in this source folder")
    parser.add_argument("--as-is", action="store_true",
                        help="keep PYTHONDONTWRITEBYTECODE if it is set (no bytecode caches)")
    args = parser.parse_args(argv)
    if args.as_is:
        ENV.clear()
        ENV.update(os.environ)
    if args.repeats < 1:
        parser.error("--repeats must be at least 1")
    result = {"terminal": terminal(args.repeats, args.root), "cli": cli(args.repeats, args.root),
              "bytecode_caches": "PYTHONDONTWRITEBYTECODE" not in ENV}
    print(json.dumps(result, sort_keys=True))
    return 0


if __name__ == "__main__":
    sys.exit(main())
