"""Command-line edge cases: each gives one line on stderr and exit 2, never an internal error.

- an output name the system refuses (over NAME_MAX, 255 bytes on Linux file systems, POSIX
  ``ENAMETOOLONG``) for ``plan -o``, ``plan --save`` and ``protocol schema -o --force``;
- ``--opt=--``, which Python 3.11's argparse stores as an empty list instead of refusing;
- numbers that ``float`` would read but that do not show plainly what they mean (``1_0``,
  Unicode digits such as ``٣٥``).
"""

from __future__ import annotations

import io
from contextlib import redirect_stderr, redirect_stdout

import pytest

from planner.cli import main

LONG = "p" * 300


def run(*argv: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


def one_line_usage_error(code: int, out: str, err: str) -> str:
    assert (code, out) == (2, ""), err
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("scanplan: error: "), err
    assert "internal error" not in err and "Traceback" not in err
    return lines[0]


@pytest.mark.parametrize("argv", [
    ["plan", "--target", "liver", "-o", LONG],
    ["plan", "--target", "liver", "--save", LONG],
    ["plan", "--target", "liver", "--save", LONG, "--force"],
    ["protocol", "schema", "-o", LONG, "--force"],
    ["protocol", "schema", "-o", LONG],
])
def test_an_over_long_output_name_is_one_clear_line(argv, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    line = one_line_usage_error(*run(*argv))
    assert "name too long" in line and len(line) < 200
    assert list(tmp_path.iterdir()) == []             # nothing left behind


def test_an_output_in_a_missing_folder_is_one_clear_line(tmp_path):
    line = one_line_usage_error(*run("plan", "--target", "liver", "-o",
                                     str(tmp_path / "nowhere" / "plan.txt")))
    assert "does not exist" in line


@pytest.mark.parametrize("argv, option", [
    (["plan", "--target=--", "--bmi", "30"], "--target"),
    (["plan", "--target", "liver", "--window=--"], "--window"),
    (["plan", "--target", "liver", "--exam=--"], "--exam"),
    (["plan", "--target", "liver", "--condition=--"], "--condition"),
    (["plan", "--target", "liver", "--mode=--"], "--mode"),
    (["plan", "--target", "liver", "--bmi=--"], "--bmi"),
    (["plan", "--target", "liver", "--probes=--"], "--probes"),
    (["plan", "--target", "liver", "--from=--"], "--from"),
    (["plan", "--target", "liver", "--sex=--"], "--sex"),
    (["calc", "path", "--layers=--", "--frequency-mhz", "3"], "--layers"),
    (["calc", "interface", "--from=--", "--to", "fat"], "--from"),
    (["protocol", "sheet", "x.yaml", "--habitus=--"], "--habitus"),
    (["protocol", "schema", "--output=--"], "-o/--output"),
])
def test_an_option_given_the_separator_as_value_is_refused(argv, option):
    line = one_line_usage_error(*run(*argv))
    assert f"argument {option}: expected one argument" in line


@pytest.mark.parametrize("argv, fragment", [
    (["plan", "--target", "liver", "--bmi", "1_0"], "'_' separators"),
    (["plan", "--target", "liver", "--bmi", "٣٥"], "ARABIC-INDIC DIGIT THREE"),
    (["plan", "--target", "liver", "--minutes", "１５"], "FULLWIDTH DIGIT ONE"),
    (["plan", "--target", "liver", "--condition", "steatosis:٣"], "ARABIC-INDIC DIGIT THREE"),
    (["plan", "--target", "liver", "--condition", "steatosis:1_0"], "'_' separators"),
    (["calc", "doppler", "--depth-cm", "٥", "--frequency-mhz", "3", "--angle-deg", "30"],
     "ARABIC-INDIC DIGIT FIVE"),
    (["calc", "path", "--layers", "fat:1_0", "--frequency-mhz", "3"], "'_' separators"),
])
def test_lookalike_numbers_are_refused(argv, fragment):
    line = one_line_usage_error(*run(*argv))
    assert fragment in line


def test_plain_numbers_still_plan():
    code, out, _ = run("plan", "--target", "liver", "--bmi", " 35 ", "--condition", "steatosis:2",
                       "--json")
    assert code == 0 and '"bmi": 35.0' in out


@pytest.mark.parametrize("argv", [["-x"], ["--bogus=1"], ["--json"]])
def test_a_stray_option_without_a_subcommand_is_a_usage_error_not_the_ui(argv, monkeypatch):
    import planner.cli as cli
    monkeypatch.setattr(cli, "run_ui", lambda args=None: pytest.fail("the UI was started"))
    line = one_line_usage_error(*run(*argv))
    assert "unrecognized arguments" in line


def test_no_arguments_starts_the_ui(monkeypatch):
    import planner.cli as cli
    started = []
    monkeypatch.setattr(cli, "run_ui", lambda args=None: started.append(args) or 0)
    assert run() == (0, "", "") and started == [None]
    assert run("ui")[0] == 0 and len(started) == 2
