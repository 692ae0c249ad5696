"""Tests of planner.yamlio: safe loading with positions, limits, atomic writes.

External references used below:
- YAML 1.1 type repository, "Boolean Language-Independent Type" (yaml.org/type/bool.html):
  y|Y|yes|Yes|YES|n|N|no|No|NO|true|...|on|On|ON|off|Off|OFF are booleans.
- YAML 1.1 type repository, "Floating-Point Language-Independent Type"
  (yaml.org/type/float.html): the decimal form needs a '.' and an exponent with a sign,
  so '1e3' is not a float in YAML 1.1 (it is in YAML 1.2).
- YAML 1.1 type repository, "Integer" (yaml.org/type/int.html): a leading 0 means octal,
  and base 60 (1:30) is an integer.
- "Billion laughs" entity expansion attack (XML; the YAML form uses anchors and aliases):
  nine levels of ten references expand to 10**9 copies.
"""

from __future__ import annotations

import os
import stat

import pytest

from planner.errors import DataError, InputError
from planner.yamlio import (
    LoadedYaml,
    ProblemCollector,
    atomic_write_text,
    dump_yaml,
    format_key_path,
    load_user_yaml,
)


def write(tmp_path, text: str | bytes, name: str = "f.yaml"):
    path = tmp_path / name
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    return path


def refusal(path, **limits) -> DataError:
    with pytest.raises(DataError) as info:
        load_user_yaml(path, kind="protocol", **limits)
    return info.value


# --- loading and positions -------------------------------------------------------------

def test_positions_are_one_based_for_keys_and_list_items(tmp_path):
    path = write(tmp_path, "title: Demo\nviews:\n  - target: liver\n    window: right-subcostal\n"
                           "  - target: kidney\n")
    loaded = load_user_yaml(path, kind="protocol")
    assert isinstance(loaded, LoadedYaml)
    assert loaded.data == {"title": "Demo", "views": [
        {"target": "liver", "window": "right-subcostal"}, {"target": "kidney"}]}
    assert loaded.line_of(("title",)) == (1, 1)
    assert loaded.line_of(("views", 0)) == (3, 5)
    assert loaded.line_of(("views", 0, "window")) == (4, 5)
    assert loaded.line_of(("views", 1, "target")) == (5, 5)
    assert loaded.line_of(("views", 1, "window")) is None
    assert loaded.nearest_line_of(("views", 1, "window")) == (5, 5)


def test_yaml_11_implicit_types_are_kept_as_the_spec_says(tmp_path):
    """YAML 1.1 bool, float and int type pages (yaml.org/type/*): no/on are booleans,
    1e3 is text, 010 is octal 8, 1:30 is base-60 90."""
    path = write(tmp_path, "a: no\nb: on\nc: 1e3\nd: 1.0e+3\ne: 010\nf: 1:30\n")
    data = load_user_yaml(path, kind="protocol").data
    assert data == {"a": False, "b": True, "c": "1e3", "d": 1000.0, "e": 8, "f": 90}


def test_timestamps_stay_text_and_merge_keys_work(tmp_path):
    path = write(tmp_path, "date: 2027-03-01\nbase: &b {x: 1, y: 2}\nitem:\n  <<: *b\n  y: 5\n")
    loaded = load_user_yaml(path, kind="protocol")
    assert loaded.data["date"] == "2027-03-01"
    assert loaded.data["item"] == {"y": 5, "x": 1}
    assert loaded.line_of(("item", "y")) == (5, 3)


def test_utf8_bom_and_unicode_are_accepted(tmp_path):
    path = write(tmp_path, "\ufefftitle: Échographie – rénale\n".encode("utf-8"))
    assert load_user_yaml(path, kind="protocol").data == {"title": "Échographie – rénale"}


# --- refusals ----------------------------------------------------------------------------

def test_syntax_error_reports_parser_line_and_column(tmp_path):
    path = write(tmp_path, "a: 1\nb: [1, 2\nc: 3\n")
    error = refusal(path)
    assert len(error.problems) == 1
    assert error.problems[0].startswith(f"{path}:3:2: YAML syntax error")


def test_tab_indentation_is_a_syntax_error_with_its_line(tmp_path):
    path = write(tmp_path, "a:\n\tb: 1\n")
    assert refusal(path).problems[0].startswith(f"{path}:2:")


def test_every_duplicate_key_is_reported(tmp_path):
    path = write(tmp_path, "a: 1\nb:\n  c: 1\n  c: 2\na: 3\n")
    problems = refusal(path).problems
    assert problems == [
        f"{path}:4:3: b.c: duplicate key 'c' (first given at line 3)",
        f"{path}:5:1: a: duplicate key 'a' (first given at line 1)",
    ]


def test_billion_laughs_alias_bomb_is_refused(tmp_path):
    """Nine levels of ten aliases expand to about 10**9 nodes (billion laughs)."""
    lines = ['a: &a ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]']
    previous = "a"
    for level in "bcdefghi":
        lines.append(f"{level}: &{level} [" + ", ".join([f"*{previous}"] * 10) + "]")
        previous = level
    path = write(tmp_path, "\n".join(lines) + "\n")
    problems = refusal(path).problems
    assert len(problems) == 1 and "alias bomb" in problems[0]


def test_recursive_alias_is_refused(tmp_path):
    path = write(tmp_path, "a: &x [1, *x]\n")
    assert "recursive alias" in refusal(path).problems[0]


def test_small_shared_alias_is_fine(tmp_path):
    path = write(tmp_path, "a: &x {k: 1}\nb: *x\nc: *x\n")
    assert load_user_yaml(path, kind="protocol").data["c"] == {"k": 1}


@pytest.mark.parametrize("text", [
    "a: " + "[" * 45 + "]" * 45 + "\n",
    "".join("  " * i + f"k{i}:\n" for i in range(45)) + "  " * 45 + "v: 1\n",
])
def test_nesting_deeper_than_the_limit_is_refused(tmp_path, text):
    path = write(tmp_path, text)
    problem = refusal(path).problems[0]
    assert "deeper than the limit of 40" in problem
    assert problem.startswith(f"{path}:")


def test_very_deep_flow_nesting_does_not_crash(tmp_path):
    path = write(tmp_path, "[" * 100_000)
    assert len(refusal(path).problems) == 1


def test_too_large_file_is_refused_before_parsing(tmp_path):
    path = write(tmp_path, "a: " + "x" * 2000 + "\n")
    problem = refusal(path, max_bytes=1000).problems[0]
    assert "larger than the limit of 1,000 bytes" in problem


def test_node_count_limit(tmp_path):
    path = write(tmp_path, "a: [" + ", ".join(["1"] * 50) + "]\n")
    assert "more than 20 YAML nodes" in refusal(path, max_nodes=20).problems[0]


def test_binary_file_is_refused_with_position(tmp_path):
    path = write(tmp_path, b"a: 1\nb: \x00\x01\x02\n")
    assert refusal(path).problems[0] == (
        f"{path}:2:4: binary data (a NUL byte); a protocol file must be UTF-8 YAML text")


def test_latin1_file_is_refused_with_position(tmp_path):
    path = write(tmp_path, "a: 1\ntitle: r\xe9nal\n".encode("latin-1"))
    assert refusal(path).problems[0].startswith(f"{path}:2:9: not UTF-8 text (byte 0xe9)")


def test_control_character_is_refused_with_position(tmp_path):
    path = write(tmp_path, "a: 1\nb: x\x07y\n")
    assert refusal(path).problems[0].startswith(f"{path}:2:5:")


def test_missing_file_and_folder_are_problems_not_tracebacks(tmp_path):
    missing = tmp_path / "nope.yaml"
    assert refusal(missing).problems == [f"{missing}: cannot read protocol file: no such file"]
    assert "is a folder" in refusal(tmp_path).problems[0]


@pytest.mark.parametrize("text, expected", [
    ("", "the file is empty"),
    ("# only a comment\n", "the file is empty"),
    ("- a\n- b\n", "the top level is a list"),
    ("just text\n", "the top level is a single value"),
    ("a: 1\n---\nb: 2\n", "YAML syntax error"),
])
def test_top_level_must_be_one_mapping(tmp_path, text, expected):
    assert expected in refusal(write(tmp_path, text)).problems[0]


@pytest.mark.parametrize("text", ["a: !!binary aGVsbG8=\n", "a: !custom x\n",
                                  "a: !!python/object:os.system {}\n", "a: !!set {x}\n"])
def test_non_core_tags_are_refused(tmp_path, text):
    assert "unsupported YAML tag" in refusal(write(tmp_path, text)).problems[0]


def test_complex_keys_are_refused(tmp_path):
    assert "a key must be plain text" in refusal(write(tmp_path, "? [a, b]\n: 1\n")).problems[0]


def test_limits_must_be_positive_integers(tmp_path):
    with pytest.raises(ValueError, match="max_depth"):
        load_user_yaml(write(tmp_path, "a: 1\n"), kind="protocol", max_depth=0)


def test_refusal_title_and_message_name_the_kind(tmp_path):
    error = refusal(write(tmp_path, "- x\n"))
    assert error.title == "Invalid protocol file"
    assert "not a usable protocol file" in error.message


# --- ProblemCollector --------------------------------------------------------------------

def test_problem_collector_formats_paths_and_positions(tmp_path):
    path = write(tmp_path, "views:\n  - target: liver\n  - target: x\n    window: y\n")
    loaded = load_user_yaml(path, kind="protocol")
    problems = ProblemCollector(path, loaded)
    problems.add(("views", 1, "window"), "unknown window 'y'")
    problems.add(("views", 0, "window"), "missing (required)")
    problems.add(("title",), "missing (required)")
    problems.add(("views",), "explicit line", line=7)
    assert problems.problems == [
        f"{path}:4:5: views[1].window: unknown window 'y'",
        f"{path}:2:5: views[0].window: missing (required)",
        f"{path}:1:1: title: missing (required)",
        f"{path}:7:1: views: explicit line",
    ]
    with pytest.raises(DataError) as info:
        problems.raise_if_any(title="Invalid protocol")
    assert info.value.problems == problems.problems
    assert info.value.title == "Invalid protocol"
    assert "4 problems" in info.value.message


def test_problem_collector_without_positions_and_without_problems(tmp_path):
    problems = ProblemCollector("x.yaml")
    problems.raise_if_any()  # nothing to raise
    problems.add(("a", 0, "b"), "bad")
    assert problems.problems == ["x.yaml: a[0].b: bad"]


def test_format_key_path():
    assert format_key_path(("views", 2, "target")) == "views[2].target"
    assert format_key_path((0, "a")) == "[0].a"
    assert format_key_path(()) == ""


# --- atomic writes -----------------------------------------------------------------------

def test_atomic_write_creates_and_refuses_to_overwrite(tmp_path):
    target = tmp_path / "out.yaml"
    atomic_write_text(target, "a: 1\n")
    assert target.read_text(encoding="utf-8") == "a: 1\n"
    with pytest.raises(InputError, match="exists; use --force"):
        atomic_write_text(target, "a: 2\n")
    assert target.read_text(encoding="utf-8") == "a: 1\n"
    atomic_write_text(target, "a: 2\n", overwrite=True)
    assert target.read_text(encoding="utf-8") == "a: 2\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.yaml"]


def test_atomic_write_failure_leaves_old_file_and_no_temporary(tmp_path, monkeypatch):
    target = tmp_path / "out.yaml"
    target.write_text("original\n", encoding="utf-8")

    def broken_fsync(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", broken_fsync)
    with pytest.raises(InputError, match="No space left"):
        atomic_write_text(target, "new content that must never appear half written\n",
                          overwrite=True)
    assert target.read_text(encoding="utf-8") == "original\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.yaml"]


def test_atomic_write_failure_of_a_new_file_leaves_nothing(tmp_path, monkeypatch):
    def broken_link(src, dst):
        raise KeyboardInterrupt  # an interruption at the worst moment

    monkeypatch.setattr(os, "link", broken_link)
    with pytest.raises(KeyboardInterrupt):
        atomic_write_text(tmp_path / "new.yaml", "x\n")
    assert list(tmp_path.iterdir()) == []


def test_atomic_write_keeps_permissions_of_replaced_file(tmp_path):
    target = tmp_path / "out.yaml"
    target.write_text("a\n", encoding="utf-8")
    os.chmod(target, 0o640)
    atomic_write_text(target, "b\n", overwrite=True)
    assert stat.S_IMODE(target.stat().st_mode) == 0o640


def test_atomic_write_bad_targets(tmp_path):
    with pytest.raises(InputError, match="does not exist"):
        atomic_write_text(tmp_path / "missing" / "out.yaml", "x")
    with pytest.raises(InputError, match="is a folder"):
        atomic_write_text(tmp_path, "x")


def test_dump_yaml_round_trips_in_order_with_unicode(tmp_path):
    data = {"title": "Rénal – échographie", "views": [{"id": "a", "band": (1.0, 6.0)}],
            "flag": False, "empty": None}
    text = dump_yaml(data)
    assert text.index("title") < text.index("views")
    assert "Rénal – échographie" in text
    path = write(tmp_path, text)
    assert load_user_yaml(path, kind="plan").data == {
        "title": "Rénal – échographie", "views": [{"id": "a", "band": [1.0, 6.0]}],
        "flag": False, "empty": None}


FIX = "remove the tag or fix the value"


@pytest.mark.parametrize("value,expected", [
    ("!!bool maybe", "'maybe' is not true or false (it is tagged !!bool); " + FIX),
    ("!!int 12abc", "'12abc' is not a whole number (it is tagged !!int); " + FIX),
    ("!!float nope", "'nope' is not a number (it is tagged !!float); " + FIX),
    ("!!float", "'' is not a number (it is tagged !!float); " + FIX),
    ("!!int " + "3" * 5000, "number too long or malformed (5000 characters)"),
])
def test_a_scalar_its_tag_refuses_is_a_located_problem(tmp_path, value, expected):
    """Once a KeyError (``!!bool maybe``) or an IndexError (an empty ``!!float``) escaped."""
    path = tmp_path / "tagged.yaml"
    path.write_text(f"schema_version: 1\nitems:\n  - id: {value}\n", encoding="utf-8")
    with pytest.raises(DataError) as caught:
        load_user_yaml(path, kind="probe inventory")
    assert caught.value.problems == [f"{path}:3:9: items[0].id: {expected}"]
