"""Property-based fuzzing of the ``scanplan`` command line (hypothesis).

The contract under test is the one ``planner/cli.py`` states: exit status 0 (done),
1 (a checked file is invalid) or 2 (invalid command line); diagnostics on stderr as
``scanplan: error: ...``; no traceback ever reaches the user. Exit statuses follow the
POSIX convention (IEEE Std 1003.1-2017, "exit": 0 is success, non-zero is failure), and
``--json`` output must be valid JSON (RFC 8259).

Command lines are generated from the real parser (every subcommand and option found by
walking :func:`planner.cli.build_parser`), with plausible and junk values and junk tokens
inserted anywhere. Everything runs inside a temporary folder, so that an ``--output``
that the fuzzer makes up cannot land in the working tree.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import re
from pathlib import Path

import pytest
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from planner import cli
from planner.body.conditions import CONDITIONS
from planner.body.habitus import BMI_CLASSES
from planner.library.targets import load_library
from planner.physics.tissues import load_tissues
from planner.safety import EXAM_TYPES, MODES

ROOT = Path(__file__).resolve().parents[1]
SHIPPED_PROTOCOLS = sorted(str(p) for p in (ROOT / "protocols").rglob("*.yaml"))
SHIPPED_INVENTORIES = [str(p) for p in sorted((ROOT / "protocols").rglob("probes.yaml"))] + [
    str(ROOT / "planner" / "data" / "probes.yaml")]
SHIPPED_POLICIES = [str(p) for p in sorted((ROOT / "protocols").rglob("local-policy*.yaml"))]

SCALE = float(os.environ.get("SCANPLAN_FUZZ_SCALE", "1"))


def fuzz_settings(examples: int) -> settings:
    return settings(max_examples=max(1, int(examples * SCALE)), deadline=None,
                    derandomize=bool(os.environ.get("CI")),
                    suppress_health_check=[HealthCheck.too_slow,
                                           HealthCheck.function_scoped_fixture])


# -- the grammar: taken from the real parser ----------------------------------------------

def leaf_parsers(parser: argparse.ArgumentParser, path: tuple[str, ...] = ()):
    """Yield ``(command path, parser)`` for every runnable (sub)command."""
    subs = [a for a in parser._actions if isinstance(a, argparse._SubParsersAction)]
    if not subs:
        yield path, parser
        return
    for name, child in subs[0].choices.items():
        yield from leaf_parsers(child, path + (name,))


PARSER = cli.build_parser()
LEAVES = {path: [a for a in p._actions if not isinstance(a, argparse._HelpAction)]
          for path, p in leaf_parsers(PARSER)}
GLOBAL_OPTIONS = [o for a in PARSER._actions for o in a.option_strings
                  if not isinstance(a, argparse._HelpAction)]

LIBRARY = load_library()
TARGETS = sorted(LIBRARY.targets)
WINDOWS = sorted({w.id for t in LIBRARY.targets.values() for w in t.windows})
TISSUES = sorted(load_tissues())
HABITUS_CLASSES = [row[0] for row in BMI_CLASSES]

junk_text = st.text(st.characters(blacklist_categories=("Cs",)), max_size=12)
junk_token = st.one_of(
    junk_text,
    st.sampled_from(["--", "-", "-x", "--nope", "--json", "--force", "-o", "nan", "inf",
                     "-1", "1e999", "0", "", " ", "--target=", "--bmi=30", "plan", "calc",
                     "protocol", "check", "schema", "targets", "ui", "\x00", "é", "../x",
                     "--target=--", "--window=--", "--exam=--", "--mode=--", "--output=--",
                     "1_0", "٣٥", "-o", "x" * 300, "--save", "--from"]))


def float_text() -> st.SearchStrategy[str]:
    return st.one_of(
        st.floats(allow_nan=False, allow_infinity=False).map(repr),
        st.floats(-10, 200).map(lambda v: f"{v:g}"),
        st.integers(-5, 400).map(str),
        st.sampled_from(["nan", "NaN", "inf", "-inf", "1e400", "-0", "0", "", "abc", "0x10",
                         "1_000", "٣", " 30 ", "1e-400", "+5"]))


def condition_text() -> st.SearchStrategy[str]:
    names = sorted(CONDITIONS) + ["steatosis", "STEATOSIS", "bowel-gas", "x"]
    grades = ["", ":1", ":2", ":3", ":0", ":9", ":mild", ":severe", ":", ":-1", ":1.5"]
    return st.one_of(st.tuples(st.sampled_from(names), st.sampled_from(grades)).map("".join),
                     junk_text)


def layers_text() -> st.SearchStrategy[str]:
    layer = st.tuples(st.sampled_from(TISSUES + ["x", ""]),
                      st.sampled_from([":", ":", ":", ""]),
                      float_text()).map("".join)
    return st.one_of(st.lists(layer, min_size=1, max_size=4).map(",".join), junk_text)


PLAUSIBLE_RANGES = {
    "bmi": (15, 60), "height_cm": (140, 200), "weight_kg": (40, 180), "wall_mm": (5, 80),
    "fat_mm": (2, 60), "depth_cm": (2, 25), "gestation_weeks": (5, 41), "expected_ti": (0, 3),
    "expected_mi": (0, 1.9), "minutes": (1, 60), "z1": (0.1, 8), "z2": (0.1, 8),
    "c1": (300, 4100), "c2": (300, 4100), "angle_deg": (0, 89), "frequency_mhz": (0.5, 20),
    "velocity_cm_s": (-300, 300)}


def chance(one_in: int) -> st.SearchStrategy[bool]:
    """True about once in ``one_in`` draws (sampled_from draws near-uniformly)."""
    return st.sampled_from([False] * (one_in - 1) + [True])


def value_strategy(action: argparse.Action, files: dict[str, list[str]]):
    """Plausible and junk values for one option, chosen by what the option means."""
    dest = action.dest
    if action.choices:
        plausible = st.sampled_from(sorted(action.choices))
    elif getattr(action.type, "__name__", "") == "finite_float":
        low, high = PLAUSIBLE_RANGES.get(dest, (-1e3, 1e3))
        plausible = st.floats(low, high).map(lambda v: f"{v:.4g}")
    elif dest == "target":
        plausible = st.sampled_from(TARGETS)
    elif dest == "window":
        plausible = st.sampled_from(WINDOWS)
    elif dest == "condition":
        plausible = condition_text()
    elif dest == "mode":
        plausible = st.sampled_from(sorted(MODES))
    elif dest == "exam":
        plausible = st.sampled_from(sorted(EXAM_TYPES))
    elif dest in ("from_tissue", "to_tissue"):
        plausible = st.sampled_from(TISSUES)
    elif dest == "layers":
        plausible = layers_text()
    elif dest == "habitus":
        plausible = st.lists(st.sampled_from(HABITUS_CLASSES), min_size=1, max_size=3).map(",".join)
    elif dest in ("probes", "local", "files", "protocol", "protocols", "file", "path", "input",
                  "from_file"):
        plausible = st.sampled_from(files["inputs"])
    elif dest in ("output", "save"):
        plausible = st.sampled_from(files["outputs"])
    else:
        plausible = junk_text
    return st.sampled_from(["plausible"] * 6 + ["wide", "junk"]).flatmap(
        lambda kind: plausible if kind == "plausible"
        else (float_text() if kind == "wide" else junk_token))


@st.composite
def command_lines(draw, files):
    """A command line of the real grammar, sometimes with junk tokens anywhere."""
    path = draw(st.sampled_from(sorted(LEAVES)))
    actions = LEAVES[path]
    tokens = list(path)
    optional = [a for a in actions if a.option_strings]
    chosen = [a for a in optional if a.required and not draw(chance(12))]
    chosen += draw(st.lists(st.sampled_from(optional), max_size=5)) if optional else []
    for action in chosen:
        tokens.append(draw(st.sampled_from(action.option_strings)))
        if action.nargs != 0:
            tokens.append(draw(value_strategy(action, files)))
    for action in (a for a in actions if not a.option_strings):
        count = draw(st.integers(1 if action.nargs == "+" else 0, 3)) if action.nargs in (
            "+", "*") else 1
        tokens += [draw(value_strategy(action, files)) for _ in range(count)]
    if draw(chance(5)):
        for _ in range(draw(st.integers(1, 2))):
            tokens.insert(draw(st.integers(0, len(tokens))), draw(junk_token))
    if draw(chance(20)) and GLOBAL_OPTIONS:
        tokens.insert(0, draw(st.sampled_from(GLOBAL_OPTIONS)))
    return tokens


# -- fixtures -----------------------------------------------------------------------------

@pytest.fixture(scope="module")
def files(tmp_path_factory) -> dict[str, list[str]]:
    """Input files (shipped, hostile, missing) and output names in a scratch folder."""
    root = tmp_path_factory.mktemp("cli-fuzz")
    hostile = root / "in"
    hostile.mkdir()
    (hostile / "bomb.yaml").write_text(
        'a: &a ["x","x","x","x","x","x","x","x","x"]\n'
        + "".join(f"{c}: &{c} [{', '.join(['*' + p] * 9)}]\n"
                  for p, c in zip("abcdefgh", "bcdefghi")), encoding="utf-8")
    (hostile / "deep.yaml").write_text("a: " + "[" * 10_000 + "]" * 10_000 + "\n",
                                       encoding="utf-8")
    (hostile / "binary.yaml").write_bytes(bytes(range(256)) * 8)
    (hostile / "latin1.yaml").write_bytes("department: Hôpital\n".encode("latin-1"))
    (hostile / "empty.yaml").write_text("", encoding="utf-8")
    (hostile / "list.yaml").write_text("- a\n- b\n", encoding="utf-8")
    (hostile / "folder.yaml").mkdir()
    inputs = (SHIPPED_PROTOCOLS + SHIPPED_INVENTORIES + SHIPPED_POLICIES
              + sorted(str(p) for p in hostile.iterdir())
              + [str(hostile / "missing.yaml"), str(root), os.devnull])
    out = root / "out"
    out.mkdir()
    (out / "existing.txt").write_text("keep me\n", encoding="utf-8")
    outputs = [str(out / "plan.txt"), str(out / "existing.txt"), str(out / "no-folder" / "x.txt"),
               str(out), "relative-output.txt", str(out / ("n" * 300))]
    return {"root": [str(root)], "inputs": inputs, "outputs": outputs}


@pytest.fixture
def no_ui(monkeypatch):
    """The terminal UI is not started by a fuzzed command line (no subcommand, or ``ui``)."""
    started = []
    monkeypatch.setattr(cli, "run_ui", lambda args=None: started.append(args) or 0)
    return started


def run(argv, capsys) -> tuple[int, str, str]:
    """Run ``main(argv)``; a SystemExit (``--help``, ``--version``) counts as its code."""
    capsys.readouterr()
    try:
        code = cli.main(list(argv))
    except SystemExit as exc:
        code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 2)
    out, err = capsys.readouterr()
    return code, out, err


NOT_A_NUMBER = re.compile(r"(?<![A-Za-z_])-?(nan|inf|infinity)(?![A-Za-z_])", re.IGNORECASE)


def check_contract(argv, code, out, err) -> None:
    shown = f"argv={argv!r}\nexit={code}\nstderr={err[-2000:]}"
    assert code in (0, 1, 2), shown
    assert "Traceback" not in err and "Traceback" not in out, shown
    assert "internal error" not in err, shown
    typed_newline = any("\n" in t or "\r" in t for t in argv)  # echoed back as typed
    if code == 2 and not typed_newline:
        lines = err.strip("\n").split("\n")
        assert lines[-1].startswith("scanplan: error: "), shown
        # One line, except that `draft` names every problem of a bad file it was given
        # (file:line:col: key.path: message) before its one line (bad input there is exit 2).
        given = tuple(f"{t}:" for t in argv if not t.startswith("-"))
        assert len(lines) == 1 or (argv[:1] == ["draft"] and given
                                   and all(line.startswith(given) for line in lines[:-1])), shown
    if code == 1 and err.strip() and not typed_newline:
        assert err.strip("\n").split("\n")[-1].startswith("scanplan: error: "), shown
    writes_file = any(t in ("-o", "--output") or t.startswith("--output=") for t in argv)
    asks_help = any(t in ("-h", "--help", "--version") for t in argv)
    if code == 0 and "--json" in argv and not (writes_file or asks_help) and out.strip():
        json.loads(out)
    echoed = any(NOT_A_NUMBER.search(t) for t in argv)   # e.g. a file named 'inf', echoed back
    if code == 0 and "calc" not in argv and not echoed:
        assert not NOT_A_NUMBER.search(out), f"{shown}\nstdout={out[:3000]}"


# -- properties ---------------------------------------------------------------------------

@fuzz_settings(400)
@given(data=st.data())
def test_any_command_line_exits_0_1_or_2_without_traceback(data, files, capsys, no_ui,
                                                          monkeypatch):
    monkeypatch.chdir(files["root"][0])
    argv = data.draw(command_lines(files), label="argv")
    code, out, err = run(argv, capsys)
    event(f"{' '.join(argv[:2])}: exit {code}")
    check_contract(argv, code, out, err)


@fuzz_settings(150)
@given(argv=st.lists(junk_token, max_size=6))
def test_pure_junk_exits_cleanly(argv, files, capsys, no_ui, monkeypatch):
    monkeypatch.chdir(files["root"][0])
    code, out, err = run(argv, capsys)
    check_contract(argv, code, out, err)


EDGE_CASES = [
    ["plan", "--target", "liver", "--bmi", "nan"],
    ["plan", "--target", "liver", "--bmi", "1e400"],
    ["plan", "--target", "liver", "--bmi", "30", "--height-cm", "170", "--weight-kg", "80"],
    ["plan", "--target", "liver", "--height-cm", "0", "--weight-kg", "80"],
    ["plan", "--target", "liver", "--depth-cm", "0.1"],
    ["plan", "--target", "liver", "--wall-mm", "30", "--fat-mm", "40"],
    ["plan", "--target", "liver", "--condition", "steatosis:9"],
    ["plan", "--target", "liver", "--condition", "full_bladder", "--condition", "empty_bladder"],
    ["plan", "--target", "liver", "--gestation-weeks", "20", "--exam", "neonatal_head"],
    ["plan", "--target", "embryo", "--gestation-weeks", "8", "--mode", "pulsed_doppler"],
    ["plan", "--target", "liver", "--window", "nope"],
    ["plan", "--target", "lvier"],
    ["plan", "--target", "liver\nsecond line"],
    ["plan", "--target", "liver", "--exam", "bogus"],
    ["plan", "--target", "liver", "--mode", "x-ray"],
    ["plan", "--target", "liver", "--expected-ti", "-1"],
    ["plan", "--target", "liver", "--local", "missing.yaml"],
    ["plan", "--target", "liver", "--probes", "."],
    ["plan"],
    ["calc"],
    ["calc", "interface"],
    ["calc", "interface", "--z1", "0", "--z2", "1"],
    ["calc", "interface", "--from", "fat", "--to", "liver", "--angle-deg", "95"],
    ["calc", "interface", "--z1", "1.4", "--z2", "1.6", "--c1", "1450", "--c2", "1580",
     "--angle-deg", "89.9", "--json"],
    ["calc", "path", "--layers", "fat:1e400", "--frequency-mhz", "3"],
    ["calc", "path", "--layers", "fat:3,,liver:10", "--frequency-mhz", "3"],
    ["calc", "path", "--layers", "fat:3", "--frequency-mhz", "0"],
    ["calc", "path", "--layers", "fat:1e300", "--frequency-mhz", "1e300", "--json"],
    ["calc", "doppler", "--depth-cm", "1e300", "--frequency-mhz", "1e-300", "--angle-deg", "0",
     "--json"],
    ["calc", "doppler", "--depth-cm", "5", "--frequency-mhz", "3", "--angle-deg", "90"],
    ["calc", "doppler", "--depth-cm", "5", "--frequency-mhz", "3", "--angle-deg", "89.999999",
     "--velocity-cm-s", "1e308", "--json"],
    ["protocol"],
    ["protocol", "check"],
    ["protocol", "check", "missing.yaml", "."],
    ["protocol", "schema", "-o", "."],
    ["targets", "--json"],
    ["--version"],
    ["--help"],
    ["plan", "--help"],
    [],
    ["ui"],
    ["--"],
]


@pytest.mark.parametrize("argv", EDGE_CASES, ids=lambda a: " ".join(a)[:60] or "(none)")
def test_edge_case_command_lines(argv, files, capsys, no_ui, monkeypatch):
    """Hand-picked corners (NaN, overflow, contradictions, typos, missing values)."""
    monkeypatch.chdir(files["root"][0])
    code, out, err = run(argv, capsys)
    check_contract(argv, code, out, err)


CALC_NUMBER = st.one_of(st.floats(allow_nan=False, allow_infinity=False),
                        st.floats(-100, 100), st.sampled_from([0.0, -0.0, 1e-300, 1e300, 89.9999]))


@fuzz_settings(200)
@given(which=st.sampled_from(["path", "doppler", "interface-z", "interface-tissue"]),
       a=CALC_NUMBER, b=CALC_NUMBER, c=CALC_NUMBER, d=CALC_NUMBER,
       tissues=st.lists(st.sampled_from(TISSUES), min_size=1, max_size=3),
       as_json=st.booleans())
def test_calc_results_are_finite_or_refused_naming_the_option(which, a, b, c, d, tissues,
                                                               as_json, capsys):
    """Any finite number on the command line: a finite answer, or an exit 2 whose message
    names the option at fault (``--...``); never 'inf'/'nan' shown as a result, never a
    bare JSON-encoder message (RFC 8259 s. 6 has no Infinity or NaN)."""
    if which == "path":
        argv = ["calc", "path", "--layers", ",".join(f"{t}:{a!r}" for t in tissues),
                "--frequency-mhz", repr(b)]
    elif which == "doppler":
        argv = ["calc", "doppler", "--depth-cm", repr(a), "--frequency-mhz", repr(b),
                "--angle-deg", repr(c), "--velocity-cm-s", repr(d)]
    elif which == "interface-z":
        argv = ["calc", "interface", "--z1", repr(a), "--z2", repr(b), "--c1", repr(c),
                "--c2", repr(d), "--angle-deg", repr(abs(a) % 90)]
    else:
        argv = ["calc", "interface", "--from", tissues[0], "--to", tissues[-1],
                "--angle-deg", repr(c)]
    argv += ["--json"] if as_json else []
    code, out, err = run(argv, capsys)
    check_contract(argv, code, out, err)
    shown = f"argv={argv!r}\nexit={code}\nstdout={out[:600]}\nstderr={err}"
    if code == 0:
        assert not NOT_A_NUMBER.search(out), shown
        if as_json:
            def finite(value):
                if isinstance(value, float):
                    assert math.isfinite(value), shown
                elif isinstance(value, dict):
                    for item in value.values():
                        finite(item)
                elif isinstance(value, list):
                    for item in value:
                        finite(item)
            finite(json.loads(out))
    else:
        assert "JSON compliant" not in err, shown
        assert "--" in err or "layer" in err or "tissue" in err, shown


# -- files written by the command line ------------------------------------------------------

def test_output_is_never_silently_overwritten(tmp_path, capsys):
    """``-o`` onto an existing file without ``--force`` is refused and leaves it intact."""
    target = tmp_path / "plan.txt"
    target.write_text("earlier plan\n", encoding="utf-8")
    argv = ["plan", "--target", "liver", "--bmi", "30", "-o", str(target)]
    code, out, err = run(argv, capsys)
    assert code == 2 and "--force" in err, err
    assert target.read_text(encoding="utf-8") == "earlier plan\n"
    code, out, err = run(argv + ["--force"], capsys)
    assert code == 0, err
    assert target.read_text(encoding="utf-8") != "earlier plan\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.txt"]


@pytest.mark.parametrize("broken", ["replace", "fsync", "write"])
def test_failed_write_keeps_the_old_file_and_leaves_no_temporary(tmp_path, capsys, monkeypatch,
                                                                 broken):
    """A crash in the middle of ``-o FILE --force`` (disk full, I/O error) leaves the old
    file whole, no temporary file behind and no traceback (exit 2)."""
    target = tmp_path / "schema.json"
    target.write_text("old\n", encoding="utf-8")

    def fail(*args, **kwargs):
        raise OSError(28, "No space left on device")

    if broken == "write":
        real_fdopen = os.fdopen

        class Failing:
            def __init__(self, stream):
                self.stream = stream

            def __enter__(self):
                return self

            def __exit__(self, *exc):
                self.stream.close()
                return False

            def write(self, text):
                self.stream.write(text[: len(text) // 2])
                self.stream.flush()
                fail()

            def __getattr__(self, name):
                return getattr(self.stream, name)

        monkeypatch.setattr(os, "fdopen", lambda *a, **k: Failing(real_fdopen(*a, **k)))
    else:
        monkeypatch.setattr(os, broken, fail)
    for argv in (["protocol", "schema", "-o", str(target), "--force"],
                 ["plan", "--target", "thyroid", "--bmi", "22", "-o", str(target), "--force"]):
        code, out, err = run(argv, capsys)
        assert code == 2, (argv, code, err)
        assert "No space left" in err and "Traceback" not in err, err
        assert target.read_text(encoding="utf-8") == "old\n"
        assert sorted(p.name for p in tmp_path.iterdir()) == ["schema.json"]


@pytest.mark.parametrize("argv", [
    ["calc", "path", "--layers", "fat:1e300", "--frequency-mhz", "3"],
    ["calc", "path", "--layers", "fat:3", "--frequency-mhz", "1e300"],
    ["calc", "path", "--layers", "fat:3", "--frequency-mhz", "1e300", "--json"],
    ["calc", "doppler", "--depth-cm", "5", "--frequency-mhz", "3", "--angle-deg", "60",
     "--velocity-cm-s", "1e308", "--json"],
    ["calc", "doppler", "--depth-cm", "2.3e-54", "--frequency-mhz", "2.2e-313", "--angle-deg",
     "0", "--velocity-cm-s", "90", "--json"],
], ids=lambda a: " ".join(a[1:]))
def test_calc_refuses_out_of_range_values_by_name(argv, capsys):
    """Out-of-range physical values are refused naming the option (no 'inf dB' result,
    no bare 'Out of range float values are not JSON compliant')."""
    code, out, err = run(argv, capsys)
    assert code == 2, (code, out[:300])
    assert "--" in err and "JSON compliant" not in err, err
