"""Broken protocol files give every expected problem, each at its line.

Each fixture in tests/fixtures/protocols_broken marks the lines where a problem is
expected with a trailing comment ``# expect: <text>``; the test requires one problem
per marker, located at that line and containing that text, and no other problem.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from planner.errors import DataError
from planner.protocol import load_protocol
from planner.protocol.loader import check_files

FIXTURES = Path(__file__).parent / "fixtures" / "protocols_broken"
MARKER = re.compile(r"#\s*expect:\s*(.+?)\s*$")
MARKED = sorted(p.name for p in FIXTURES.glob("*.yaml") if "# expect:" in p.read_text("utf-8"))


def expected_markers(path: Path) -> list[tuple[int, str]]:
    out = []
    for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1):
        found = MARKER.search(line)
        if found:
            out.append((number, found.group(1)))
    return out


def problems_of(path: Path) -> list[str]:
    with pytest.raises(DataError) as info:
        load_protocol(path)
    return info.value.problems


def test_every_kind_of_broken_file_has_a_fixture():
    kinds = {"unknown_key", "wrong_type", "unknown_target", "unknown_window",
             "missing_threshold_source", "syntax_error", "duplicate_key", "alias_bomb",
             "deep_nesting", "unknown_probe", "inconsistent", "wrong_version"}
    assert kinds <= {name.removesuffix(".yaml") for name in MARKED}


@pytest.mark.parametrize("name", MARKED)
def test_broken_fixture_reports_each_marked_problem_at_its_line(name):
    path = FIXTURES / name
    markers = expected_markers(path)
    problems = [p for p in problems_of(path) if p.startswith(f"{path}:")]
    assert len(problems) == len(markers), "\n".join(problems)
    for line, text in markers:
        here = [p for p in problems if p.startswith(f"{path}:{line}:")]
        assert any(text in p for p in here), f"line {line}: {text!r} not in {here}"


def test_problems_are_listed_in_line_order():
    path = FIXTURES / "inconsistent.yaml"
    lines = [int(p[len(f"{path}:"):].split(":")[0]) for p in problems_of(path)]
    assert lines == sorted(lines)


def test_missing_inventory_is_reported_with_the_inventory_problem():
    path = FIXTURES / "missing_inventory.yaml"
    problems = problems_of(path)
    (line, text), = expected_markers(path)
    assert problems[0].startswith(f"{path}:{line}:") and text in problems[0]
    assert problems[1] == (f"{FIXTURES / 'no-such-inventory.yaml'}: cannot read probe "
                           "inventory file: no such file")
    assert len(problems) == 2


def test_binary_file_is_refused():
    path = FIXTURES / "binary.yaml"
    assert problems_of(path) == [
        f"{path}:3:8: binary data (a NUL byte); a protocol file must be UTF-8 YAML text"]


def test_too_large_file_is_refused(tmp_path):
    path = tmp_path / "huge.yaml"
    path.write_text("schema_version: 1\nnotes:\n" + "  - padding text\n" * 130_000,
                    encoding="utf-8")
    assert path.stat().st_size > 2_000_000
    problems = problems_of(path)
    assert problems == [f"{path}: file is larger than the limit of 2,000,000 bytes for a "
                        "protocol file"]


def test_missing_file_is_a_problem_of_that_file(tmp_path):
    path = tmp_path / "absent.yaml"
    assert problems_of(path) == [f"{path}: cannot read protocol file: no such file"]


def test_probe_inventory_given_as_protocol_is_named(tmp_path):
    path = Path(__file__).parents[1] / "protocols" / "harbourside" / "probes.yaml"
    problems = problems_of(path)
    assert len(problems) == 1 and "looks like a probe inventory" in problems[0]


def test_check_files_maps_each_path_to_its_problems():
    good = Path(__file__).parents[1] / "protocols" / "harbourside" / "thyroid.yaml"
    bad = FIXTURES / "unknown_target.yaml"
    results = check_files([good, bad])
    assert results[str(good)] == []
    assert len(results[str(bad)]) == 1 and "unknown target 'livr'" in results[str(bad)][0]


def test_error_title_and_summary():
    with pytest.raises(DataError) as info:
        load_protocol(FIXTURES / "unknown_window.yaml")
    assert info.value.title == "Invalid protocol"
    assert "has 2 problems" in info.value.message
