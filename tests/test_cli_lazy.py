"""The command line is built lazily and its package has no import cycle.

Walking the real parser, every subcommand (and every nested one) is run with ``--help`` in a
fresh interpreter: only its own module of ``planner.cli`` may load, and none of the heavy
modules (numpy, the physics, the engine, the protocol schema). ``scanplan --version`` and the
terminal UI's start load no subcommand module and no numpy. A static walk of the imports of
``planner/cli/`` (function-level imports included) finds no cycle.
"""

from __future__ import annotations

import argparse
import ast
import json
import subprocess
import sys
from pathlib import Path

import pytest

from planner.cli import COMMANDS, build_parser

ROOT = Path(__file__).resolve().parents[1]
CLI_DIR = ROOT / "planner" / "cli"
HEAVY = ("numpy", "planner.physics", "planner.engine", "planner.protocol.schema",
         "planner.protocol.jsonschema", "planner.protocol.loader", "planner.library.targets",
         "planner.report", "textual", "yaml")
"""Modules that building any subcommand's parser must not load."""


def subcommand_paths(parser: argparse.ArgumentParser, path: tuple[str, ...] = ()):
    """Every command path of the parser, nested ones included."""
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, child in action.choices.items():
                yield path + (name,)
                yield from subcommand_paths(child, path + (name,))


def loaded_after(code: str) -> list[str]:
    """The modules loaded in a fresh interpreter after running ``code``."""
    script = ("import sys, json\n" + code +
              "\nsys.stdout = sys.__stdout__\nprint(json.dumps(sorted(sys.modules)))")
    proc = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                          timeout=60, cwd=ROOT)
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout.strip().splitlines()[-1])


def heavy(modules: list[str]) -> list[str]:
    return [m for m in modules if any(m == h or m.startswith(h + ".") for h in HEAVY)]


def test_the_parser_names_exactly_the_registered_commands():
    top = {path[0] for path in subcommand_paths(build_parser()) if len(path) == 1}
    assert top == set(COMMANDS)
    assert {path[0] for path in subcommand_paths(build_parser(()))} == set(COMMANDS)


PATHS = sorted(subcommand_paths(build_parser()))


@pytest.mark.parametrize("path", PATHS, ids=["-".join(p) for p in PATHS])
def test_each_subcommand_loads_only_its_own_module(path):
    code = ("import io, contextlib\nfrom planner.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    try:\n"
            f"        main({list(path) + ['--help']!r})\n"
            "    except SystemExit:\n"
            "        pass\n")
    modules = loaded_after(code)
    own = COMMANDS[path[0]][0]
    others = [COMMANDS[name][0] for name in COMMANDS if name != path[0]]
    assert own in modules
    assert [m for m in others if m in modules] == []
    assert heavy(modules) == []


def test_version_loads_no_subcommand_and_no_numpy():
    code = ("import io, contextlib\nfrom planner.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    try:\n        main(['--version'])\n    except SystemExit:\n        pass\n")
    modules = loaded_after(code)
    assert [module for module, _ in COMMANDS.values() if module in modules] == []
    assert heavy(modules) == []


def test_the_ui_starts_before_numpy_or_any_subcommand_loads():
    """What is loaded at the moment ``scanplan`` (no arguments) hands over to the UI."""
    code = ("import planner.tui.app as app\n"
            "seen = []\n"
            "helpers = []\n"
            "def run(first_plan=None):\n"
            "    seen.append(sorted(sys.modules)); helpers.append(first_plan)\n"
            "    if first_plan is not None: first_plan.close()\n"
            "    return 0\n"
            "app.run_app = run\n"
            "from planner.cli import main\n"
            "assert main([]) == 0\n"
            "sys.modules.clear(); sys.modules.update({m: None for m in seen[0]})\n")
    modules = loaded_after(code)
    assert "planner.tui.app" in modules
    assert [module for module, _ in COMMANDS.values() if module in modules] == []
    assert [m for m in heavy(modules) if not m.startswith("textual")] == []


def test_running_calc_does_not_load_the_plan_engine():
    code = ("import io, contextlib\nfrom planner.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    main(['calc', 'doppler', '--depth-cm', '5', '--frequency-mhz', '3', "
            "'--angle-deg', '30', '--json'])\n")
    modules = loaded_after(code)
    assert "numpy" in modules and "planner.cli.calc" in modules
    assert [m for m in modules if m.startswith(("planner.engine", "planner.protocol",
                                                "planner.cli.plan"))] == []


def _imports(path: Path) -> set[str]:
    """Every module ``path`` imports, at any depth of the code (absolute names)."""
    names: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module:
            names.add(node.module)
            names.update(f"{node.module}.{alias.name}" for alias in node.names)
    return names


def test_no_import_cycle_inside_the_cli_package():
    modules = {("planner.cli" if p.stem == "__init__" else f"planner.cli.{p.stem}"): p
               for p in CLI_DIR.glob("*.py")}
    graph = {name: {m for m in _imports(path) if m in modules and m != name}
             for name, path in modules.items()}
    assert "planner.cli" not in set().union(*(graph[m] for m in graph if m != "planner.cli"))

    def visit(node: str, stack: tuple[str, ...]) -> None:
        assert node not in stack, f"import cycle: {' -> '.join(stack + (node,))}"
        for nxt in graph[node]:
            visit(nxt, stack + (node,))
    for name in graph:
        visit(name, ())


def test_every_command_module_registers_itself():
    """A command's own module adds its parser; the lazily built parser equals the full one."""
    full = {p: sorted(a.dest for a in _leaf(build_parser(), p)._actions) for p in PATHS}
    for path in PATHS:
        lazy = _leaf(build_parser([path[0]]), path)
        assert sorted(a.dest for a in lazy._actions) == full[path]


def _leaf(parser: argparse.ArgumentParser, path: tuple[str, ...]) -> argparse.ArgumentParser:
    for name in path:
        sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
        parser = sub.choices[name]
    return parser


NOT_FOR_ONE_PLAN = ("numpy.ma", "numpy.random", "statistics", "decimal", "hashlib",
                    "importlib.resources", "zipfile", "tempfile", "threading")
"""Modules a plan never needs whose import was measured on its start-up path (numpy.ma alone
about 12 ms, pulled in by ``numpy.unique`` and ``numpy.quantile`` in numpy 2.4)."""


def test_one_plan_loads_none_of_the_modules_it_does_not_need():
    """``scanplan plan --json`` keeps off the imports it was measured to pay for nothing:
    the masked arrays and random generators of numpy, statistics (fractions, decimal),
    OpenSSL's hashes, importlib.resources (zipfile, tempfile) and threading."""
    loaded = loaded_after("import io, contextlib\nfrom planner.cli import main\n"
                          "with contextlib.redirect_stdout(io.StringIO()):\n"
                          "    main(['plan', '--target', 'liver', '--bmi', '38', '--json'])")
    assert "planner.engine.spread" in loaded          # the plan (and its draws) really ran
    assert [m for m in NOT_FOR_ONE_PLAN if m in loaded] == []


def test_a_line_starting_with_a_command_skips_the_stand_in_parser(monkeypatch):
    """The subcommand of ``scanplan plan ...`` is read off the line (argparse matches names
    exactly); an option or an unknown word first still goes through argparse."""
    import planner.cli as cli
    built = []
    real = cli.build_parser
    monkeypatch.setattr(cli, "build_parser", lambda commands=None: built.append(commands) or real(commands))
    assert cli._command(["plan", "--target", "liver"]) == "plan"
    assert built == []
    with pytest.raises(Exception):
        cli._command(["plna"])                         # argparse: invalid choice
    assert built == [()]
