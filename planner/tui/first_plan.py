"""The first plan, made in a helper process on another core while the UI starts.

Loading the engine takes about as long as loading Textual (numpy, the data tables, the
target library), and one Python process does the two one after the other: its threads share
one interpreter lock, so a thread gains nothing on this work. When the machine has a second
core, :func:`start` launches the helper (:func:`helper_command`) at once, before Textual
loads; the helper loads the engine on the other core, plans the opening inputs (the invented
demo patient) and prints the plan's text (:func:`planner.tui.plan_text.summary_content`) as
one JSON object. The screen shows that text as soon as its plan views are mounted, then
loads the engine itself for everything after (the form, the other views, each recompute),
and its first own plan replaces the helper's text with the same text. The helper's answer is
used only if it was made from the same inputs as the screen's (it echoes them); if it fails,
is late (more than :data:`WAIT_S`) or disagrees, the screen plans the opening inputs itself,
as it does when no helper runs (a single core, or the app started from a test).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from planner.tui.plan_text import SummaryContent

__all__ = ["start", "helper_command", "FirstPlan", "WAIT_S", "main"]

WAIT_S: float = 5.0
"""Longest wait for the helper's answer before the screen plans by itself [s] (common
practice: the helper answers in about 0.15 s on this project's two-core machine)."""

HELPER_NICENESS: int = 19
"""Scheduling niceness of the helper (the lowest priority): it must never take a core from
the UI's own start-up (common practice)."""


# -- the helper process ----------------------------------------------------------------------
def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):      # not Linux
        return os.cpu_count() or 1


class FirstPlan:
    """A running helper and, once read, its answer (see the module docstring)."""

    def __init__(self, process: subprocess.Popen[bytes]) -> None:
        self.process = process

    def result(self, values: dict[str, Any], timeout_s: float = WAIT_S) -> SummaryContent | None:
        """The helper's content for ``values`` (the screen's opening form values), or None
        when it failed, was late or planned other inputs. Blocks (without the interpreter
        lock) until the helper ends; call it from a thread."""
        try:
            out, _ = self.process.communicate(timeout=timeout_s)
        except (subprocess.TimeoutExpired, OSError, ValueError):
            self.close()
            return None
        try:
            data = json.loads(out)
            if data.get("values") != json.loads(json.dumps(values)) or "content" not in data:
                return None
            from planner.tui.plan_text import SummaryContent
            return SummaryContent.from_json(data["content"])
        except (ValueError, KeyError, TypeError, AttributeError):
            return None

    def close(self) -> None:
        """End the helper if it still runs (the app quit first, or it was late)."""
        process = self.process
        try:
            if process.poll() is None:
                process.kill()
            process.wait(timeout=1.0)
        except (OSError, subprocess.TimeoutExpired):
            pass
        for stream in (process.stdout, process.stdin):
            if stream is not None:
                try:
                    stream.close()
                except OSError:
                    pass


def helper_command() -> list[str]:
    """The helper's command line: this interpreter, the planner this process runs (its folder
    first on the path unless it is there already) and never the working directory (``-P``),
    so a ``planner`` or ``json`` module where the user stands cannot stand in for ours."""
    root = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
    code = (f"import sys; r = {root!r}; sys.path.insert(0, r) if r not in sys.path else None; "
            "from planner.tui.first_plan import main; sys.exit(main())")
    return [sys.executable, "-P", "-c", code]


def start() -> FirstPlan | None:
    """Launch the helper on another core (None on a single core, when the environment sets
    ``SCANPLAN_FIRST_PLAN_HELPER=0``, or if it cannot start)."""
    if _cores() < 2 or os.environ.get("SCANPLAN_FIRST_PLAN_HELPER", "1") == "0":
        return None
    try:
        process = subprocess.Popen(helper_command(), stdin=subprocess.DEVNULL,
                                   stdout=subprocess.PIPE,
                                   stderr=subprocess.DEVNULL, close_fds=True)
    except OSError:
        return None
    try:        # it works only on time the UI leaves idle
        os.setpriority(os.PRIO_PROCESS, process.pid, HELPER_NICENESS)
    except (AttributeError, OSError):
        pass
    return FirstPlan(process)


def main() -> int:
    """The helper: plan the UI's opening inputs and print ``{"values", "content"}`` (or
    ``{"values", "error"}``) as one JSON line."""
    from planner.tui.compute import compute, form_values
    from planner.tui.demo import DEMO_INPUTS
    from planner.tui.plan_text import summary_content
    values = form_values(DEMO_INPUTS)
    answer: dict[str, Any] = {"values": values}
    try:
        outcome = compute(values)
        if outcome.plan is None:
            answer["error"] = outcome.message or "no plan"
        else:
            answer["content"] = summary_content(outcome.plan).to_json()
    except Exception as exc:  # noqa: BLE001 - the screen then plans by itself
        answer["error"] = f"{type(exc).__name__}: {exc}"
    sys.stdout.write(json.dumps(answer) + "\n")
    sys.stdout.flush()
    return 0


if __name__ == "__main__":
    sys.exit(main())
