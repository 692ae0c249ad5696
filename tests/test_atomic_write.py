"""Atomic writes (planner.atomicfile): user paths refused in one line, stale temporary files
of killed writers removed by the next save, the target never torn.

The kill test runs real writer processes and ends them with SIGKILL at random moments
(POSIX signal semantics: SIGKILL cannot be caught, so nothing in the writer can clean up).
"""

from __future__ import annotations

import errno
import os
import random
import signal
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner.atomicfile import (NAME_MAX_BYTES, atomic_write_text, remove_stale_temp_files,
                                temp_files_for, user_path)
from planner.errors import InputError, PathError, PlannerError

LONG_NAME = "p" * 300 + ".yaml"


def _one_line_path_error(excinfo) -> str:
    exc = excinfo.value
    assert isinstance(exc, PathError) and isinstance(exc, PlannerError)
    assert "\n" not in exc.message and len(exc.message) < 200
    return exc.message


# -- refusals ---------------------------------------------------------------------------

@pytest.mark.parametrize("name", [LONG_NAME, "é" * 130 + ".md"])   # 300 and 263 bytes
def test_a_file_name_longer_than_255_bytes_is_refused_in_one_line(tmp_path, name):
    assert len(os.fsencode(name)) > NAME_MAX_BYTES
    with pytest.raises(PathError) as excinfo:
        atomic_write_text(tmp_path / name, "x\n", overwrite=True)
    assert "too long" in _one_line_path_error(excinfo)
    assert list(tmp_path.iterdir()) == []


def test_a_too_long_folder_component_is_refused(tmp_path):
    with pytest.raises(PathError) as excinfo:
        atomic_write_text(tmp_path / ("d" * 256) / "plan.yaml", "x\n")
    assert "too long" in _one_line_path_error(excinfo)


def test_a_name_of_exactly_255_bytes_is_written(tmp_path):
    """255 bytes is the limit itself, and the temporary file's name must still fit."""
    target = tmp_path / ("n" * 250 + ".yaml")
    atomic_write_text(target, "ok\n")
    assert target.read_text(encoding="utf-8") == "ok\n"
    assert sorted(tmp_path.iterdir()) == [target]


def test_an_unknown_user_after_tilde_is_refused(tmp_path):
    with pytest.raises(PathError) as excinfo:
        atomic_write_text("~nosuchuser_scanplan/plan.yaml", "x\n")
    message = _one_line_path_error(excinfo)
    assert "nosuchuser_scanplan" in message and "no user" in message


def test_tilde_is_the_home_folder(tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path))
    assert user_path("~/plan.yaml") == tmp_path / "plan.yaml"
    atomic_write_text("~/plan.yaml", "home\n")
    assert (tmp_path / "plan.yaml").read_text(encoding="utf-8") == "home\n"


def test_a_known_user_after_tilde_is_that_users_home():
    import pwd
    entry = pwd.getpwuid(os.getuid())
    assert user_path(f"~{entry.pw_name}/x.yaml") == Path(entry.pw_dir) / "x.yaml"


@pytest.mark.parametrize("text", ["", "   ", "a\0b.yaml", "line\nbreak\0.yaml"])
def test_empty_and_nul_paths_are_refused(text):
    with pytest.raises(PathError) as excinfo:
        user_path(text)
    _one_line_path_error(excinfo)


def test_a_missing_folder_is_refused(tmp_path):
    with pytest.raises(PathError) as excinfo:
        atomic_write_text(tmp_path / "missing" / "out.yaml", "x")
    assert "does not exist" in _one_line_path_error(excinfo)


def test_a_path_through_a_file_is_refused(tmp_path):
    (tmp_path / "file").write_text("x", encoding="utf-8")
    with pytest.raises(PathError) as excinfo:
        atomic_write_text(tmp_path / "file" / "out.yaml", "x")
    _one_line_path_error(excinfo)


def test_a_permission_problem_is_one_line_not_an_oserror(tmp_path, monkeypatch):
    """The operating system's refusal (EACCES) becomes a PathError naming the file.

    The refusal is injected at the point where the temporary file is created, so that the
    test also runs as root (root bypasses folder permissions).
    """
    def refuse(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))
    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    with pytest.raises(PathError) as excinfo:
        atomic_write_text(tmp_path / "out.yaml", "x")
    message = _one_line_path_error(excinfo)
    assert "Permission denied" in message and "out.yaml" in message


def test_path_error_is_an_input_error_for_the_command_line():
    """The command line maps InputError to exit code 2 (planner.errors.ExitCode.USAGE)."""
    assert issubclass(PathError, InputError)


# -- stale temporary files --------------------------------------------------------------

def _dead_pid() -> int:
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    child.wait()
    return child.pid


def _fake_temp(target: Path, pid: int, age_s: float = 0.0, token: str = "abcdefgh") -> Path:
    from planner.atomicfile import _temp_prefix
    prefix = _temp_prefix(target, NAME_MAX_BYTES).rsplit(".", 2)[0]
    path = target.parent / f"{prefix}.{pid}.{token}.tmp"
    path.write_text("partial", encoding="utf-8")
    if age_s:
        stamp = time.time() - age_s
        os.utime(path, (stamp, stamp))
    return path


def test_only_stale_temporary_files_of_the_same_target_are_removed(tmp_path):
    target = tmp_path / "plan.yaml"
    other = tmp_path / "other.yaml"
    dead = _fake_temp(target, _dead_pid())
    old = _fake_temp(target, os.getpid(), age_s=3600, token="old12345")
    live = _fake_temp(target, os.getpid())              # a write in progress in this process
    others = _fake_temp(other, _dead_pid())             # another target's leftover
    assert set(temp_files_for(target)) == {dead, old, live}
    assert remove_stale_temp_files(target) == 2
    assert set(temp_files_for(target)) == {live}
    assert others.exists()
    atomic_write_text(other, "x\n")
    assert not others.exists()


_WRITER = textwrap.dedent("""
    import sys
    from planner.atomicfile import atomic_write_text
    target, size = sys.argv[1], int(sys.argv[2])
    print("ready", flush=True)
    i = 0
    while True:
        body = f"{i:08d}\\n" * (size // 9)
        atomic_write_text(target, f"begin {i}\\n{body}end {i}\\n", overwrite=True)
        i += 1
""")


SIZE = 400_000


def _intact(text: str) -> bool:
    """A complete version: the initial one, or ``begin N``, the writer's body for N, ``end N``."""
    if text == "begin 0\nend 0\n":
        return True
    head = text.split("\n", 1)[0]
    if not head.startswith("begin ") or not head[6:].isdigit():
        return False
    number = int(head[6:])
    return text == f"begin {number}\n" + f"{number:08d}\n" * (SIZE // 9) + f"end {number}\n"


def test_sigkill_during_saves_never_tears_the_file_and_the_next_save_cleans_up(tmp_path):
    """50 writers killed with SIGKILL mid-loop; the file stays whole; one save leaves no temp."""
    target = tmp_path / "plan.yaml"
    target.write_text("begin 0\nend 0\n", encoding="utf-8")
    rng = random.Random(20261202)
    kills, left_behind = 50, 0
    for _ in range(kills):
        writer = subprocess.Popen([sys.executable, "-c", _WRITER, str(target), str(SIZE)],
                                  stdout=subprocess.PIPE, text=True)
        assert writer.stdout.readline().strip() == "ready"
        time.sleep(rng.uniform(0.0, 0.03))
        writer.send_signal(signal.SIGKILL)
        writer.wait()
        writer.stdout.close()
        assert writer.returncode == -signal.SIGKILL
        assert _intact(target.read_text(encoding="utf-8")), "target torn by a kill"
        left_behind = max(left_behind, len(temp_files_for(target)))
    # the kills did leave temporary files (otherwise this test would prove nothing)
    assert left_behind >= 1
    atomic_write_text(target, "begin 1\nend 1\n", overwrite=True)
    assert temp_files_for(target) == []
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.yaml"]
    assert target.read_text(encoding="utf-8") == "begin 1\nend 1\n"


# -- fuzz: any typed path is written or refused with one line -----------------------------

SCALE = float(os.environ.get("SCANPLAN_FUZZ_SCALE", "1"))
COMPONENT = st.one_of(
    st.text(st.characters(blacklist_categories=("Cs",)), min_size=1, max_size=40),
    st.integers(200, 320).map(lambda n: "n" * n),
    st.integers(100, 140).map(lambda n: "é" * n),
    st.sampled_from(["", ".", "-", " ", "\0", "plan.yaml", "~", "~zz_nosuchuser"]),
)


@settings(max_examples=max(1, int(300 * SCALE)), deadline=None,
          derandomize=bool(os.environ.get("CI")),
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(parts=st.lists(COMPONENT, min_size=1, max_size=3), tilde=st.booleans(),
       overwrite=st.booleans())
def test_any_typed_path_is_written_or_refused_in_one_line(parts, tilde, overwrite):
    """Names of any length and script, NUL, `~` forms: a write or a PathError, never an
    OSError; nothing is written outside the folder and no temporary file stays."""
    parts = [p for p in parts if p not in ("..",) and not p.startswith("/")]
    parts = [p.replace("/", "_") for p in parts] or ["x"]
    with tempfile.TemporaryDirectory() as folder:
        base = Path(folder)
        typed = ("~zz_nosuchuser/" if tilde else f"{folder}/") + "/".join(parts)
        try:
            atomic_write_text(typed, "x\n", overwrite=overwrite)
        except PathError as exc:
            assert "\n" not in exc.message and len(exc.message) < 300, exc.message
        else:
            assert not tilde
            assert user_path(typed).read_text(encoding="utf-8") == "x\n"
        leftovers = [p for p in base.rglob("*") if p.name.endswith(".tmp")]
        assert leftovers == []
