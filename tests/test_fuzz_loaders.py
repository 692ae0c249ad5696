"""Fuzzing of the user-file loaders and of atomic writes (hypothesis).

Loaders under test: :func:`planner.protocol.load_protocol`,
:func:`planner.library.probes.load_inventory`, :func:`planner.safety.load_local_policy`
and :func:`planner.planfile.load_plan_inputs`. Their contract
(``planner/errors.py``, ``planner/yamlio.py``): a file either loads, or raises
:class:`planner.errors.DataError` whose one-line message names the file and whose
``problems`` are ``file:line:col: key.path: message``; for a file that is YAML at all,
at least one problem carries a line number.

Inputs: documents generated from the key vocabulary of the shipped files, structure-aware
mutations of the shipped files (a subtree replaced, removed or duplicated), byte-level
mutations (flips, insertions of YAML punctuation, deletions, truncation), and hostile
files:

- "billion laughs": nine levels of ten references expand to 10**9 copies (the XML
  entity-expansion attack, CVE-2003-1564; the YAML form uses the anchors and aliases of
  the YAML 1.1 specification);
- nesting 10,000 levels deep (a recursive-descent stack overflow, CWE-674);
- a 5 MB file, binary garbage, non-UTF-8 text (the YAML 1.1 specification reads
  Unicode text; scanplan's files are UTF-8), a folder, a missing file, a symbolic-link
  loop;
- language-specific tags that would call code (``!!python/object/apply``, which PyYAML's
  full loader turns into a function call and its safe loader refuses);
- an integer of more than 4,300 digits (the CPython limit on int/str conversion,
  CVE-2020-10735).

Atomic writes: POSIX ``rename()`` replaces the target atomically (IEEE Std 1003.1-2017,
"rename"); a failure at any step before it must leave the old file whole and no
temporary file behind.
"""

from __future__ import annotations

import dataclasses
import json
import math
import os
import random
import re
import shutil
import tempfile
import time
from pathlib import Path
from typing import Any, Callable

import pytest
import yaml
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from planner.engine.serialize import plan_to_json_data
from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.errors import DataError, InputError, PlannerError
from planner import plancheck, planfile
from planner.library.probes import load_inventory
from planner.library.qa_log import load_qa_log
from planner.protocol import load_protocol
from planner.safety import load_local_policy
from planner.yamlio import atomic_write_text

ROOT = Path(__file__).resolve().parents[1]
SCALE = float(os.environ.get("SCANPLAN_FUZZ_SCALE", "1"))
HOSTILE_SECONDS = 8.0
"""Longest time a loader may take to refuse one hostile file. [s] A guard against a loader
that hangs or explodes (an alias bomb expands without limit), not a speed target: a 50,000-item
list takes about 1 s on an idle machine and over 2 s on a busy one."""


def fuzz_settings(examples: int) -> settings:
    return settings(max_examples=max(1, int(examples * SCALE)), deadline=None,
                    derandomize=bool(os.environ.get("CI")),
                    suppress_health_check=[HealthCheck.too_slow,
                                           HealthCheck.function_scoped_fixture])


def _planfile_loader(path):
    return planfile.load_plan_inputs(path)


LOADERS: dict[str, Callable[[Any], Any]] = {
    "protocol": load_protocol,
    "probe inventory": load_inventory,
    "local policy": load_local_policy,
    "plan file": _planfile_loader,
    "probe QA log": load_qa_log,
}


def kind_of(path: Path) -> str:
    if path.name == "probes.yaml":
        return "probe inventory"
    if "policy" in path.name:
        return "local policy"
    if path.name == "qa.yaml":
        return "probe QA log"
    return "protocol"


SHIPPED = sorted((ROOT / "protocols").rglob("*.yaml")) + [ROOT / "planner" / "data" / "probes.yaml"]
SHIPPED_IDS = [str(p.relative_to(ROOT)) for p in SHIPPED]

LOCATED = re.compile(r"^.+?:(\d+):(\d+): \S")


# -- checks -------------------------------------------------------------------------------

def non_finite_numbers(value: Any, path: str = "") -> list[str]:
    """Where a loaded object holds NaN or infinity (dataclasses, mappings, sequences)."""
    if isinstance(value, float):
        return [] if math.isfinite(value) else [path or "(value)"]
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return [bad for f in dataclasses.fields(value)
                for bad in non_finite_numbers(getattr(value, f.name), f"{path}.{f.name}")]
    if isinstance(value, dict):
        return [bad for k, v in value.items() for bad in non_finite_numbers(v, f"{path}.{k}")]
    if isinstance(value, (list, tuple)):
        return [bad for i, v in enumerate(value) for bad in non_finite_numbers(v, f"{path}[{i}]")]
    return []


def is_blank_yaml(raw: bytes) -> bool:
    """True for a file with no YAML content at all (empty, blank or comments only)."""
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        return False
    return all(not line.strip() or line.lstrip().startswith("#") for line in text.splitlines())


def load_or_refusal(kind: str, path: Path):
    """Load ``path`` with the loader of ``kind``; return the object or the DataError."""
    try:
        return LOADERS[kind](path)
    except DataError as exc:
        return exc


def check_refusal(exc: DataError, path: Path, raw: bytes | None) -> None:
    """A clean refusal: one-line message naming the file; located problems."""
    shown = f"{path}: message={exc.message!r}\nproblems={exc.problems[:5]!r}"
    assert exc.message and "\n" not in exc.message, shown
    assert str(path) in exc.message, shown
    assert exc.title, shown
    assert exc.problems and all(isinstance(p, str) and p.strip() for p in exc.problems), shown
    assert all("\n" not in p for p in exc.problems), shown
    assert "Traceback" not in exc.message
    if raw is not None and not is_blank_yaml(raw):
        assert any(LOCATED.match(p) for p in exc.problems), "no problem has a line: " + shown


def check_loaded(kind: str, loaded: Any, path: Path) -> None:
    """A loaded file holds no NaN or infinity, and plans made with it are strict JSON."""
    assert not non_finite_numbers(loaded), (path, non_finite_numbers(loaded))
    if kind == "probe inventory":
        request = PlanRequest("liver", Patient.from_inputs(bmi=32), probes_path=str(path))
    elif kind == "local policy":
        from planner.safety import ExamContext
        request = PlanRequest("liver", Patient.from_inputs(bmi=32), local_policy_path=str(path),
                              context=ExamContext(expected_ti=0.9, planned_minutes=20,
                                                  modes=("b_mode", "pulsed_doppler")))
    else:
        return
    try:
        plan = make_plan(request)
    except InputError:
        return
    json.dumps(plan_to_json_data(plan), allow_nan=False)


def check_outcome(kind: str, path: Path) -> None:
    raw = path.read_bytes() if path.is_file() else None
    result = load_or_refusal(kind, path)
    if isinstance(result, DataError):
        check_refusal(result, path, raw)
    else:
        check_loaded(kind, result, path)


# -- fixtures -----------------------------------------------------------------------------

@pytest.fixture(scope="module")
def workspace(tmp_path_factory) -> Path:
    """Copies of the shipped protocol folders (relative inventory links keep working)."""
    root = tmp_path_factory.mktemp("loader-fuzz")
    shutil.copytree(ROOT / "protocols", root / "protocols")
    (root / "data").mkdir()
    shutil.copy(ROOT / "planner" / "data" / "probes.yaml", root / "data" / "probes.yaml")
    (root / "scratch").mkdir()
    return root


def workspace_copy(workspace: Path, original: Path) -> Path:
    """Where the fuzzed version of a shipped file is written (next to its inventory)."""
    relative = original.relative_to(ROOT)
    folder = workspace / (relative.parent if relative.parts[0] == "protocols" else "data")
    return folder / f"fuzzed-{original.name}"


def read_yaml(path: Path) -> Any:
    return yaml.safe_load(path.read_text(encoding="utf-8"))


def collect_vocabulary() -> tuple[list[str], list[Any]]:
    keys: set[str] = set()
    values: set[Any] = set()

    def walk(node: Any) -> None:
        if isinstance(node, dict):
            for key, value in node.items():
                keys.add(str(key))
                walk(value)
        elif isinstance(node, list):
            for item in node:
                walk(item)
        elif isinstance(node, (str, int, float, bool)) and node is not None:
            if not isinstance(node, str) or len(node) < 40:
                values.add(node)

    for path in SHIPPED:
        walk(read_yaml(path))
    return sorted(keys), sorted(values, key=repr)


KEY_VOCAB, VALUE_VOCAB = collect_vocabulary()


# -- generated documents ------------------------------------------------------------------

scalars = st.one_of(
    st.none(), st.booleans(), st.integers(-10**6, 10**20),
    st.integers(10**300, 10**420), st.integers(-10**420, -10**300),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(st.characters(blacklist_categories=("Cs",)), max_size=20),
    st.sampled_from(VALUE_VOCAB))
keys = st.one_of(st.sampled_from(KEY_VOCAB), st.sampled_from(KEY_VOCAB),
                 st.text(max_size=8), st.integers(-3, 3), st.none(), st.booleans())
documents = st.recursive(
    scalars, lambda children: st.one_of(st.lists(children, max_size=4),
                                        st.dictionaries(keys, children, max_size=5)),
    max_leaves=25)


def dump(data: Any) -> str:
    return yaml.safe_dump(data, sort_keys=False, allow_unicode=True)


@fuzz_settings(150)
@given(kind=st.sampled_from(["protocol", "probe inventory", "local policy"]),
       data=st.dictionaries(keys, documents, max_size=8))
def test_generated_documents_load_or_are_refused_with_a_line(kind, data, workspace):
    path = workspace / "protocols" / "harbourside" / "generated.yaml"
    path.write_text(dump(data), encoding="utf-8")
    check_outcome(kind, path)


def _paths(node: Any, prefix: tuple = ()) -> list[tuple]:
    out = [prefix]
    if isinstance(node, dict):
        for key, value in node.items():
            out += _paths(value, prefix + (key,))
    elif isinstance(node, list):
        for index, value in enumerate(node):
            out += _paths(value, prefix + (index,))
    return out


def _mutate(data: Any, path: tuple, action: str, new: Any) -> Any:
    if not path:
        return new if action == "replace" else data
    parent = data
    for part in path[:-1]:
        parent = parent[part]
    last = path[-1]
    if action == "replace":
        parent[last] = new
    elif action == "delete":
        del parent[last]
    elif action == "duplicate" and isinstance(parent, list):
        parent.insert(last, parent[last])
    elif action == "retype":
        value = parent[last]
        parent[last] = ([value] if not isinstance(value, list) else
                        {"value": value}) if value is not None else ""
    return data


@fuzz_settings(250)
@given(original=st.sampled_from(SHIPPED), data=st.data())
def test_structure_mutations_of_shipped_files(original, data, workspace):
    """A shipped file with a subtree replaced, removed, duplicated or re-typed."""
    tree = read_yaml(original)
    for _ in range(data.draw(st.integers(1, 3), label="mutations")):
        where = data.draw(st.sampled_from(_paths(tree)), label="path")
        action = data.draw(st.sampled_from(["replace", "replace", "delete", "duplicate",
                                            "retype"]), label="action")
        new = data.draw(documents, label="new value") if action == "replace" else None
        tree = _mutate(tree, where, action, new)
    path = workspace_copy(workspace, original)
    path.write_text(dump(tree), encoding="utf-8")
    check_outcome(kind_of(original), path)


# -- byte-level mutations -----------------------------------------------------------------

YAML_PUNCTUATION = [b"&a ", b"*a", b"*zz", b"!!python/object/apply:os.system ['true']", b"<<: ",
                    b"- ", b": ", b"\t", b"{", b"}", b"[", b"]", b"'", b'"', b"%YAML 1.1\n",
                    b"---\n", b"...\n", b"? ", b"!!binary ", b"!custom ", b".nan", b".inf",
                    b"1.0e+999", b"0x1F", b"0o17", b"1:30", b"~", b"null", b"no", b"\xef\xbb\xbf",
                    b"\x00", b"\xff\xfe", b"\xc3", b"\r", b"\x1b[31m", b"#", b"|", b">-", b"\\",
                    b"!!bool ", b"!!int ", b"!!float ", b"!!null ", b"!!str ", b"!!timestamp ",
                    b"9" * 400, b"-" + b"7" * 401]


@st.composite
def byte_mutations(draw, raw: bytes) -> bytes:
    data = bytearray(raw)
    for _ in range(draw(st.integers(1, 4))):
        op = draw(st.sampled_from(["flip", "insert", "punct", "delete", "dup", "truncate",
                                   "swap_lines"]))
        pos = draw(st.integers(0, max(0, len(data) - 1)))
        if op == "flip" and data:
            data[pos] ^= draw(st.integers(1, 255))
        elif op == "insert":
            data[pos:pos] = draw(st.binary(min_size=1, max_size=8))
        elif op == "punct":
            data[pos:pos] = draw(st.sampled_from(YAML_PUNCTUATION))
        elif op == "delete":
            del data[pos:pos + draw(st.integers(1, 64))]
        elif op == "dup":
            size = draw(st.integers(1, 200))
            data[pos:pos] = data[pos:pos + size]
        elif op == "truncate":
            del data[pos:]
        elif op == "swap_lines":
            lines = bytes(data).split(b"\n")
            if len(lines) > 1:
                i = draw(st.integers(0, len(lines) - 1))
                j = draw(st.integers(0, len(lines) - 1))
                lines[i], lines[j] = lines[j], lines[i]
                data = bytearray(b"\n".join(lines))
    return bytes(data)


@fuzz_settings(300)
@given(original=st.sampled_from(SHIPPED), data=st.data())
def test_byte_mutations_of_shipped_files(original, data, workspace):
    mutated = data.draw(byte_mutations(original.read_bytes()), label="bytes")
    path = workspace_copy(workspace, original)
    path.write_bytes(mutated)
    check_outcome(kind_of(original), path)


TAGGED_VALUES = ("!!bool maybe", "!!bool 1", "!!int 12abc", "!!int 0x", "!!float nope",
                 "!!float", "!!null x", "!!timestamp 2026-13-45", "!!str", "!!binary abc",
                 "9" * 400, "-" + "7" * 401, "0x" + "f" * 300, "1" * 400 + ".5",
                 '"' + "8" * 400 + '"', "!!int " + "3" * 400)
"""Type-tagged bad scalars and huge numbers: once KeyError / OverflowError inside the loaders."""


@fuzz_settings(200)
@given(original=st.sampled_from(SHIPPED), data=st.data())
def test_tagged_and_huge_scalars_in_shipped_files(original, data, workspace):
    """Replace the value of one ``key: value`` line with a tagged bad scalar or a huge number."""
    lines = original.read_text(encoding="utf-8").split("\n")
    candidates = [i for i, line in enumerate(lines)
                  if re.match(r"^\s*(- )?[A-Za-z_]+: [^{\[#|>].*$", line)]
    index = data.draw(st.sampled_from(candidates), label="line")
    value = data.draw(st.sampled_from(TAGGED_VALUES), label="value")
    key = lines[index].split(": ", 1)[0]
    lines[index] = f"{key}: {value}"
    path = workspace_copy(workspace, original)
    path.write_text("\n".join(lines), encoding="utf-8")
    check_outcome(kind_of(original), path)


@pytest.mark.parametrize("original", SHIPPED, ids=SHIPPED_IDS)
def test_shipped_files_load(original):
    """The examples shipped with scanplan are valid (the baseline of the mutations)."""
    loaded = LOADERS[kind_of(original)](original)
    assert not non_finite_numbers(loaded)


# -- files that are not ours --------------------------------------------------------------

FOREIGN = SHIPPED + [ROOT / "README.md", ROOT / "pyproject.toml",
                     ROOT / "planner" / "cli" / "__init__.py"]


@pytest.mark.parametrize("kind", ["protocol", "probe inventory", "local policy", "plan file"])
@pytest.mark.parametrize("path", FOREIGN, ids=[str(p.relative_to(ROOT)) for p in FOREIGN])
def test_a_file_of_another_kind_is_refused_with_a_clear_message(kind, path):
    """Each loader given another kind's file (or a README, TOML, Python source)."""
    if path in SHIPPED and kind_of(path) == kind:
        pytest.skip("a file of this kind (loads: see test_shipped_files_load)")
    result = load_or_refusal(kind, path)
    assert isinstance(result, DataError), f"{kind} loader accepted {path}"
    check_refusal(result, path, path.read_bytes())
    assert kind in result.message or kind in result.title.lower(), result.message


# -- hostile files ------------------------------------------------------------------------

def _billion_laughs() -> str:
    lines = ['a: &a ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]']
    for previous, name in zip("abcdefgh", "bcdefghi"):
        lines.append(f"{name}: &{name} [{', '.join(['*' + previous] * 10)}]")
    return "\n".join(lines) + "\n"


def _merge_bomb() -> str:
    lines = ["a0: &a0 {k: v}"]
    for i in range(1, 30):
        lines.append(f"a{i}: &a{i} {{<<: [*a{i - 1}], k{i}: [*a{i - 1}, *a{i - 1}]}}")
    return "\n".join(lines) + "\n"


HOSTILE: dict[str, Callable[[Path], Path]] = {}


def hostile(name: str):
    def register(make: Callable[[Path], Path]):
        HOSTILE[name] = make
        return make
    return register


def _write(folder: Path, name: str, content: str | bytes) -> Path:
    path = folder / name
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content, encoding="utf-8")
    return path


hostile("billion-laughs")(lambda d: _write(d, "bomb.yaml", _billion_laughs()))
hostile("merge-key-bomb")(lambda d: _write(d, "merge.yaml", _merge_bomb()))
hostile("recursive-alias")(lambda d: _write(d, "loop.yaml", "a: &a [1, *a]\n"))
hostile("flow-nesting-10000")(lambda d: _write(d, "flow.yaml", "a: " + "[" * 10_000
                                                + "]" * 10_000 + "\n"))
hostile("mapping-nesting-10000")(lambda d: _write(d, "map.yaml", "a: " + "{b: " * 10_000
                                                   + "1" + "}" * 10_000 + "\n"))
hostile("block-nesting-10000")(lambda d: _write(d, "block.yaml",
                                                 "a:\n  " + "- " * 10_000 + "x\n"))
hostile("indent-nesting-3000")(lambda d: _write(d, "indent.yaml", "".join(
    " " * i + f"k{i}:\n" for i in range(3000)) + " " * 3000 + "v\n"))
hostile("5-MB-file")(lambda d: _write(d, "big.yaml", "".join(
    f"key{i}: value number {i} padded to make the file large\n" for i in range(100_000))))
hostile("5-MB-single-line")(lambda d: _write(d, "line.yaml", "a: " + "x" * 5_000_000 + "\n"))
hostile("binary-garbage")(lambda d: _write(d, "garbage.yaml",
                                           random.Random(1).randbytes(64 * 1024)))
hostile("binary-without-nul")(lambda d: _write(d, "garbage2.yaml", bytes(
    b for b in random.Random(2).randbytes(64 * 1024) if b)))
hostile("latin-1-text")(lambda d: _write(d, "latin1.yaml",
                                         "department: Hôpital Général\n".encode("latin-1")))
hostile("utf-16-text")(lambda d: _write(d, "utf16.yaml", "department: Demo\n".encode("utf-16")))
hostile("control-characters")(lambda d: _write(d, "ctrl.yaml", "department: De\x1b[2Jmo\x07\n"))
hostile("python-tag")(lambda d: _write(d, "tag.yaml",
                                       "a: !!python/object/apply:os.system ['echo owned']\n"))
hostile("custom-tag")(lambda d: _write(d, "custom.yaml", "a: !include /etc/passwd\n"))
hostile("integer-of-5000-digits")(lambda d: _write(d, "bigint.yaml", "a: 1" + "0" * 5000 + "\n"))
hostile("float-overflow")(lambda d: _write(d, "inf.yaml", "schema_version: 1.0e+999\n"))
hostile("50k-item-list")(lambda d: _write(d, "many.yaml", "a: [" + "1, " * 50_000 + "1]\n"))
hostile("many-documents")(lambda d: _write(d, "docs.yaml", "a: 1\n---\nb: 2\n"))
hostile("empty-file")(lambda d: _write(d, "empty.yaml", ""))
hostile("a-folder")(lambda d: (d / "folder.yaml").mkdir() or d / "folder.yaml")
hostile("missing-file")(lambda d: d / "does-not-exist.yaml")
hostile("symlink-loop")(lambda d: (d / "link.yaml").symlink_to(d / "link.yaml") or d / "link.yaml")


@pytest.mark.parametrize("kind", list(LOADERS))
@pytest.mark.parametrize("case", sorted(HOSTILE))
def test_hostile_files_are_refused_quickly_with_one_clear_line(case, kind, tmp_path):
    path = HOSTILE[case](tmp_path)
    start = time.perf_counter()
    try:
        LOADERS[kind](path)
    except DataError as exc:
        elapsed = time.perf_counter() - start
        raw = path.read_bytes() if path.is_file() else None
        located = (raw is not None and case != "empty-file"
                   and "larger than the limit" not in exc.message)
        check_refusal(exc, path, raw if located else None)
    except PlannerError as exc:  # pragma: no cover - the assertion explains
        pytest.fail(f"{case}: {type(exc).__name__} instead of DataError: {exc.message}")
    else:
        pytest.fail(f"{case}: the {kind} loader accepted a hostile file")
    assert elapsed < HOSTILE_SECONDS, f"{case}: {elapsed:.2f} s"


@pytest.mark.parametrize("kind", list(LOADERS))
def test_refusal_names_the_kind_of_file_once(kind, tmp_path):
    """'... is not a usable protocol file', not '... a usable plan file file'."""
    result = load_or_refusal(kind, tmp_path / "missing.yaml")
    assert isinstance(result, DataError)
    assert kind in result.message and " file file" not in result.message, result.message


def _deny_reading(path: Path, monkeypatch) -> None:
    """Make every way of opening ``path`` fail with EACCES, as the kernel does for a
    non-root user on a mode-000 file (root bypasses file modes, so CI as root needs this)."""
    import builtins
    import errno
    import io
    denied = os.path.realpath(path)

    def guard(real):
        def opener(file, *args, **kwargs):
            if isinstance(file, (str, bytes, os.PathLike)) and \
                    os.path.realpath(os.fsdecode(file)) == denied:
                raise PermissionError(errno.EACCES, os.strerror(errno.EACCES), os.fspath(file))
            return real(file, *args, **kwargs)
        return opener
    monkeypatch.setattr(builtins, "open", guard(builtins.open))
    monkeypatch.setattr(io, "open", guard(io.open))
    monkeypatch.setattr(os, "open", guard(os.open))


@pytest.mark.parametrize("kind", list(LOADERS))
def test_unreadable_file_is_refused_with_the_reason(kind, tmp_path, monkeypatch):
    """A file the user may not read: a DataError naming the file and the reason, as any user.

    Not root: the file's mode is 000 (a real EACCES). Root reads any file, so there the
    refusal is injected at every open() of that file.
    """
    path = _write(tmp_path, "secret.yaml", "schema_version: 1\n")
    path.chmod(0)
    if not hasattr(os, "geteuid") or os.geteuid() == 0:
        _deny_reading(path, monkeypatch)
    try:
        result = load_or_refusal(kind, path)
        assert isinstance(result, DataError), result
        assert "ermission" in result.message and str(path) in result.message, result.message
        assert "\n" not in result.message
    finally:
        path.chmod(0o600)


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="no /dev/zero")
def test_an_endless_device_is_read_only_up_to_the_limit():
    start = time.perf_counter()
    result = load_or_refusal("protocol", Path("/dev/zero"))
    assert isinstance(result, DataError)
    assert time.perf_counter() - start < HOSTILE_SECONDS


# -- atomic writes ------------------------------------------------------------------------

TEXTS = st.text(st.characters(blacklist_categories=("Cs",)), max_size=2000)


@fuzz_settings(150)
@given(first=TEXTS, second=TEXTS)
def test_atomic_write_round_trips_exactly_and_never_overwrites_silently(first, second):
    with tempfile.TemporaryDirectory() as folder:
        target = Path(folder) / "out.txt"
        atomic_write_text(target, first)
        assert target.read_bytes().decode("utf-8") == first
        with pytest.raises(InputError, match="exists"):
            atomic_write_text(target, second)
        assert target.read_bytes().decode("utf-8") == first
        atomic_write_text(target, second, overwrite=True)
        assert target.read_bytes().decode("utf-8") == second
        assert [p.name for p in Path(folder).iterdir()] == ["out.txt"]


class _Boom(OSError):
    def __init__(self) -> None:
        super().__init__(5, "Input/output error")


def _fail(*args, **kwargs):
    raise _Boom()


FAILURE_POINTS = ["replace", "link", "fsync", "chmod", "write", "mkstemp", "close"]


@pytest.mark.parametrize("overwrite", [True, False], ids=["replace-existing", "new-file"])
@pytest.mark.parametrize("point", FAILURE_POINTS)
def test_a_failure_at_any_step_keeps_the_old_file_and_leaves_no_temporary(point, overwrite,
                                                                          tmp_path,
                                                                          monkeypatch):
    target = tmp_path / "plan.yaml"
    if overwrite:
        target.write_text("old: content\n", encoding="utf-8")
    before = sorted(p.name for p in tmp_path.iterdir())
    if point == "write":
        real_fdopen = os.fdopen

        def fdopen(*args, **kwargs):
            stream = real_fdopen(*args, **kwargs)
            real_write = stream.write

            def write(text):
                real_write(text[: len(text) // 2])
                stream.flush()
                raise _Boom()
            stream.write = write
            return stream
        monkeypatch.setattr(os, "fdopen", fdopen)
    elif point == "close":
        real_fdopen = os.fdopen

        def fdopen(*args, **kwargs):
            stream = real_fdopen(*args, **kwargs)
            real_exit = stream.__class__.__exit__

            class Closing:
                def __enter__(self):
                    return stream

                def __exit__(self, *exc):
                    real_exit(stream, *exc)
                    if exc[0] is None:
                        raise _Boom()
                    return False
            return Closing()
        monkeypatch.setattr(os, "fdopen", fdopen)
    elif point == "mkstemp":
        monkeypatch.setattr(tempfile, "mkstemp", _fail)
    else:
        monkeypatch.setattr(os, point, _fail)
    try:
        atomic_write_text(target, "new: " + "x" * 100_000 + "\n", overwrite=overwrite)
    except InputError as exc:
        assert str(target) in exc.message and "\n" not in exc.message
    else:
        # a step that was not reached (e.g. os.link when replacing) must not matter
        assert target.read_text(encoding="utf-8").startswith("new: ")
        assert sorted(p.name for p in tmp_path.iterdir()) == sorted(set(before) | {"plan.yaml"})
        return
    if overwrite:
        assert target.read_text(encoding="utf-8") == "old: content\n"
    else:
        assert not target.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == before


# -- saved plans (planner.planfile) -------------------------------------------------------

@st.composite
def plan_inputs(draw):
    from planner.body.conditions import CONDITIONS
    from planner.library.targets import load_library
    from planner.safety import EXAM_TYPES, MODES
    library = load_library()
    target = draw(st.sampled_from(sorted(library.targets)))
    windows = [w.id for w in library.targets[target].windows]
    use_height = draw(st.booleans())
    text = st.text(st.characters(blacklist_categories=("Cs",)), max_size=40)
    conditions = draw(st.dictionaries(st.sampled_from(sorted(CONDITIONS)), st.integers(1, 3),
                                      max_size=3))
    conditions = tuple((k, g) for k, g in conditions.items() if g in CONDITIONS[k].grades)
    signoff = planfile.SignOff(**{f.name: draw(text) for f in dataclasses.fields(planfile.SignOff)
                                  if f.type in (str, "str")})
    values = dict(
        target_id=target, window_id=draw(st.one_of(st.none(), st.sampled_from(windows))),
        bmi=None if use_height else draw(st.one_of(st.none(), st.floats(12, 80))),
        height_cm=draw(st.floats(140, 200)) if use_height else None,
        weight_kg=draw(st.floats(40, 150)) if use_height else None,
        sex=draw(st.sampled_from([None, "female", "male"])),
        wall_mm=draw(st.one_of(st.none(), st.floats(5, 60))),
        depth_cm=draw(st.one_of(st.none(), st.floats(1, 30))),
        gestation_weeks=draw(st.one_of(st.none(), st.floats(5, 41))),
        conditions=conditions,
        exam_type=draw(st.one_of(st.none(), st.none(), st.sampled_from(sorted(EXAM_TYPES)))),
        modes=tuple(draw(st.lists(st.sampled_from(sorted(MODES)), min_size=1, max_size=3,
                                  unique=True))),
        contrast_agent=draw(st.booleans()), febrile=draw(st.booleans()),
        pregnancy_possible=draw(st.booleans()),
        expected_ti=draw(st.one_of(st.none(), st.floats(0, 4))),
        planned_minutes=draw(st.one_of(st.none(), st.floats(0, 90))),
        draft=draw(st.booleans()), signoff=signoff)
    known = {f.name for f in dataclasses.fields(planfile.PlanInputs)}
    return planfile.PlanInputs(**{k: v for k, v in values.items() if k in known})


@fuzz_settings(150)
@given(inputs=plan_inputs())
def test_saved_plan_round_trips_exactly(inputs):
    """What is saved is what is loaded: every field, floats to the last bit, any text."""
    assume(not plancheck.check_inputs(inputs))
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "plan.yaml"
        planfile.save_plan_inputs(path, inputs)
        loaded = planfile.load_plan_inputs(path)
        assert loaded == inputs
        with pytest.raises(InputError, match="exists"):
            planfile.save_plan_inputs(path, inputs)
        planfile.save_plan_inputs(path, loaded, overwrite=True)
        assert planfile.load_plan_inputs(path) == inputs
        assert [p.name for p in Path(folder).iterdir()] == ["plan.yaml"]


@fuzz_settings(200)
@given(inputs=plan_inputs(), data=st.data())
def test_mutated_saved_plans_load_or_are_refused_with_a_line(inputs, data, workspace):
    assume(not plancheck.check_inputs(inputs))
    path = workspace / "scratch" / "saved.yaml"
    planfile.save_plan_inputs(path, inputs, overwrite=True)
    if data.draw(st.booleans(), label="structural"):
        tree = yaml.safe_load(path.read_text(encoding="utf-8"))
        where = data.draw(st.sampled_from(_paths(tree)), label="path")
        action = data.draw(st.sampled_from(["replace", "delete", "retype"]), label="action")
        tree = _mutate(tree, where, action, data.draw(documents, label="new"))
        path.write_text(dump(tree), encoding="utf-8")
    else:
        path.write_bytes(data.draw(byte_mutations(path.read_bytes()), label="bytes"))
    raw = path.read_bytes()
    result = load_or_refusal("plan file", path)
    if isinstance(result, DataError):
        check_refusal(result, path, raw)
    else:
        assert not non_finite_numbers(result)
        try:
            plan = make_plan(planfile.to_request(result))
        except InputError:
            return
        except DataError as exc:    # a named probe inventory or local policy is not usable
            assert result.probes_path or result.local_policy_path
            assert all(problem.strip() and "\n" not in problem for problem in exc.problems)
            return
        json.dumps(plan_to_json_data(plan), allow_nan=False)


# -- minimal reproductions of what the fuzzing found (each fails until fixed) -------------

@pytest.mark.parametrize("kind", list(LOADERS))
def test_a_key_with_a_line_break_stays_on_one_line(kind, tmp_path):
    """Problems are one line each (``file:line:col: key.path: message``), even for a
    quoted key holding a line break."""
    path = _write(tmp_path, "f.yaml", 'schema_version: 1\n"bad\\nkey": 1\n')
    result = load_or_refusal(kind, path)
    assert isinstance(result, DataError)
    check_refusal(result, path, path.read_bytes())


@pytest.mark.parametrize("where, value", [
    (("views", 0, "measurements", 0, "thresholds"), True),
    (("views", 0, "measurements"), 5),
    (("views", 0, "fallbacks"), True),
    (("equipment", "alternative_probes"), 7),
], ids=lambda v: str(v))
def test_a_scalar_where_a_list_belongs_is_a_located_problem(where, value, workspace):
    """``thresholds: true`` (and the like) in a protocol: a located problem, not a TypeError."""
    original = ROOT / "protocols" / "harbourside" / "thyroid.yaml"
    tree = read_yaml(original)
    node = tree
    for part in where[:-1]:
        node = node[part]
    node[where[-1]] = value
    path = workspace_copy(workspace, original)
    path.write_text(dump(tree), encoding="utf-8")
    result = load_or_refusal("protocol", path)
    assert isinstance(result, DataError)
    check_refusal(result, path, path.read_bytes())


def test_local_policy_refuses_nan_and_infinity(tmp_path):
    """``.nan`` and ``.inf`` are YAML 1.1 floats (yaml.org/type/float.html) but not limits;
    accepted, they crash the plan (OverflowError in the scan-time finding)."""
    path = _write(tmp_path, "policy.yaml", (
        "schema_version: 1\ndepartment: Demo\n"
        "exam_limits:\n  default: {max_ti: .nan, max_mi: .nan, max_minutes: .inf}\n"
        "scan_time_limits:\n  default:\n    - {ti_above: 0, ti_up_to: .nan, max_minutes: .nan}\n"
        "preferred_settings:\n  default: {start_ti: .inf}\n"))
    result = load_or_refusal("local policy", path)
    assert isinstance(result, DataError), result
    check_refusal(result, path, path.read_bytes())
    assert len(result.problems) >= 6, result.problems


@pytest.mark.parametrize("exam", ["{type: [a], modes: [b_mode]}", "{modes: [[b_mode]]}",
                                  "{modes: [{a: 1}]}"])
def test_saved_plan_with_a_list_where_text_belongs_is_a_located_problem(exam, tmp_path):
    """A list or mapping where the plan file wants an exam type or mode id."""
    path = _write(tmp_path, "plan.yaml", f"schema_version: 1\ntarget: liver\nexam: {exam}\n")
    result = load_or_refusal("plan file", path)
    assert isinstance(result, DataError), result
    check_refusal(result, path, path.read_bytes())


def test_a_mapping_with_text_and_number_keys_is_a_located_problem(tmp_path):
    """YAML keys may be text and numbers in one mapping (``{a: 1, 0: 2}``); listing the
    unknown ones must not compare text with numbers."""
    path = _write(tmp_path, "probes.yaml", "schema_version: 1\nprobes:\n  - {a: 1, 0: 2}\n")
    result = load_or_refusal("probe inventory", path)
    assert isinstance(result, DataError), result
    check_refusal(result, path, path.read_bytes())
