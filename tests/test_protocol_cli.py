"""`protocol check` and `protocol schema` subcommands (exit codes and output)."""

from __future__ import annotations

import argparse
import io
import json
from pathlib import Path

import pytest

from planner.errors import ExitCode, InputError
from planner.cli.protocol import register
from planner.protocol.jsonschema import protocol_json_schema

ROOT = Path(__file__).parents[1]
GOOD = ROOT / "protocols" / "harbourside" / "thyroid.yaml"
BAD = ROOT / "tests" / "fixtures" / "protocols_broken" / "unknown_window.yaml"


def run(argv: list[str]) -> tuple[int, str]:
    parser = argparse.ArgumentParser(prog="scanplan")
    register(parser.add_subparsers(dest="command"))
    args = parser.parse_args(argv)
    out = io.StringIO()
    code = args.func(args, out=out)
    return code, out.getvalue()


def test_check_valid_file_exits_zero():
    code, out = run(["protocol", "check", str(GOOD)])
    assert code == ExitCode.OK == 0
    assert out == "checked 1 file: all valid\n"


def test_check_invalid_and_missing_files_exit_one_and_list_every_problem(tmp_path):
    missing = tmp_path / "absent.yaml"
    code, out = run(["protocol", "check", str(GOOD), str(BAD), str(missing)])
    assert code == ExitCode.INVALID_FILE == 1
    lines = out.splitlines()
    assert lines[0].startswith(f"{BAD}:23:5: views[0].window: unknown window")
    assert lines[1].startswith(f"{BAD}:28:9: views[0].fallbacks[0].window")
    assert lines[2] == f"{missing}: cannot read protocol file: no such file"
    assert lines[3] == "checked 3 files: 1 valid, 2 invalid, 3 problems"


def test_check_json_output():
    code, out = run(["protocol", "check", "--json", str(GOOD), str(BAD)])
    data = json.loads(out)
    assert code == 1 and data[str(GOOD)] == [] and len(data[str(BAD)]) == 2


def test_schema_to_stdout_and_to_file(tmp_path):
    code, out = run(["protocol", "schema"])
    assert code == 0 and json.loads(out) == protocol_json_schema()
    target = tmp_path / "protocol.schema.json"
    assert run(["protocol", "schema", "-o", str(target)]) == (0, "")
    assert json.loads(target.read_text(encoding="utf-8")) == protocol_json_schema()
    with pytest.raises(InputError, match="use --force"):
        run(["protocol", "schema", "-o", str(target)])
    target.write_text("old", encoding="utf-8")
    assert run(["protocol", "schema", "-o", str(target), "--force"])[0] == 0
    assert json.loads(target.read_text(encoding="utf-8"))["$defs"]


def test_protocol_without_subcommand_is_a_usage_error():
    parser = argparse.ArgumentParser(prog="scanplan")
    register(parser.add_subparsers(dest="command"))
    with pytest.raises(SystemExit) as info:
        parser.parse_args(["protocol"])
    assert info.value.code == ExitCode.USAGE


def test_register_returns_the_protocol_subcommands_for_more_commands():
    parser = argparse.ArgumentParser(prog="scanplan")
    commands = register(parser.add_subparsers(dest="command"))
    extra = commands.add_parser("example-extra")
    extra.set_defaults(func=lambda args: 0)
    assert parser.parse_args(["protocol", "example-extra"]).func(None) == 0
    assert parser.parse_args(["protocol", "sheet", "x.yaml"]).command == "protocol"
