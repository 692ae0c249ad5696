"""Paths typed by a user, and atomic writes that leave nothing behind.

:func:`user_path` turns what a user typed (command line or UI dialog) into a
:class:`~pathlib.Path`, expanding ``~`` and ``~user`` deliberately and refusing, with
one line, what the operating system would only answer with an ``OSError``: an
unknown user, a NUL byte, a name longer than the file system allows.

:func:`atomic_write_text` writes through a temporary file in the target's folder,
``fsync`` and rename, so that the target is always either the old or the new
content, never torn. The temporary file is named after its target and its writer
(``.<name>.<digest>.<pid>.<random>.tmp``, at most 255 bytes), so that a writer killed
mid-save leaves a file the next save of the same target recognises and removes
(:func:`remove_stale_temp_files`): one whose writer process is gone, or older than
:data:`STALE_AFTER_S` (a reused process id).

Every failure is a :class:`planner.errors.PathError` with one line; a bare
``OSError`` never reaches the caller.
"""

from __future__ import annotations

import _thread
import contextlib
import errno
import os
import re
import time
from pathlib import Path

from planner.errors import PathError

__all__ = ["STALE_AFTER_S", "NAME_MAX_BYTES", "atomic_write_text", "remove_stale_temp_files",
           "temp_files_for", "user_path"]

NAME_MAX_BYTES = 255
"""Longest file name (one path component) in bytes: NAME_MAX of Linux ext4, XFS, btrfs,
APFS and NTFS (common practice; the folder's own limit is asked when it can be)."""

STALE_AFTER_S = 30.0
"""A temporary file older than this is stale even if a process with its writer's id
runs (ids are reused); a save of a plan or report takes milliseconds (common practice)."""

_TEMP_RE = re.compile(r"\.(?P<digest>[0-9a-f]{12})\.(?P<pid>[0-9]+)\.[^.]+\.tmp\Z")
_READABLE_PREFIX_BYTES = 60



def _reason(exc: OSError) -> str:
    """The operating system's own one-line wording ("Permission denied", "File name too long")."""
    return exc.strerror or errno.errorcode.get(exc.errno or -1, "") or type(exc).__name__


def _name_max(folder: Path) -> int:
    try:
        return int(os.pathconf(folder, "PC_NAME_MAX"))
    except (OSError, ValueError, TypeError):
        return NAME_MAX_BYTES


def user_path(text: str | os.PathLike[str]) -> Path:
    """The path a user typed, with ``~`` expanded; PathError (one line) if it cannot be used.

    ``~`` and ``~/x`` name the home folder (``HOME``), ``~user/x`` that user's home;
    an unknown user, an empty path, a NUL byte, or a component longer than
    :data:`NAME_MAX_BYTES` bytes is refused here rather than failing later in the
    operating system.
    """
    raw = os.fspath(text)
    if isinstance(raw, bytes):  # pragma: no cover - callers pass text
        raw = os.fsdecode(raw)
    if not raw.strip():
        raise PathError("no file name given")
    if "\0" in raw:
        raise PathError(f"{_short(raw)}: a file name cannot contain a NUL character")
    expanded = raw
    if raw.startswith("~"):
        expanded = os.path.expanduser(raw)
        if expanded.startswith("~"):
            user = raw[1:].split(os.sep, 1)[0]
            if not user:
                raise PathError(f"{_short(raw)}: cannot expand '~' (HOME is not set); "
                                "write the full path")
            raise PathError(f"{_short(raw)}: no user named {_short(user, 40)!r} for "
                            f"'~{_short(user, 40)}'; write the full path")
    path = Path(expanded)
    for part in path.parts:
        size = len(os.fsencode(part))
        if size > NAME_MAX_BYTES:
            raise PathError(f"{_short(raw)}: file name too long ({size} bytes; at most "
                            f"{NAME_MAX_BYTES} per name)")
    return path


def _short(text: str, limit: int = 80) -> str:
    """Text for a one-line message: control characters (a line break, NUL) shown as escapes,
    and shortened (a 300-character name must not fill the screen)."""
    text = "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in text)
    return text if len(text) <= limit else f"{text[: limit - 20]}…{text[-19:]}"


def _digest(target: Path) -> str:
    import hashlib          # only when writing: it loads OpenSSL (about 4 ms)
    return hashlib.sha256(os.fsencode(target.name)).hexdigest()[:12]


def _temp_prefix(target: Path, name_max: int) -> str:
    """``.<readable part of the name>.<digest>.<pid>.``, short enough for mkstemp's suffix."""
    budget = min(_READABLE_PREFIX_BYTES, name_max - 60)
    readable = os.fsencode(target.name)[: max(budget, 0)].decode("utf-8", "ignore")
    readable = readable.replace(".", "_") or "file"
    return f".{readable}.{_digest(target)}.{os.getpid()}."


def temp_files_for(target: str | os.PathLike[str]) -> list[Path]:
    """The temporary files of writes to ``target`` (finished or not) present in its folder."""
    target = Path(target)
    digest = _digest(target)
    try:
        names = os.listdir(target.parent)
    except OSError:
        return []
    found = []
    for name in names:
        match = _TEMP_RE.search(name)
        if name.startswith(".") and match and match["digest"] == digest:
            found.append(target.parent / name)
    return sorted(found)


def _writer_alive(pid: int) -> bool:
    if pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError, OSError):
        return True   # someone else's process: assume it is writing
    return True


def remove_stale_temp_files(target: str | os.PathLike[str], *,
                            stale_after_s: float = STALE_AFTER_S) -> int:
    """Remove temporary files left by killed writes to ``target``; return how many.

    A file is stale when its writer's process is gone or it is older than
    ``stale_after_s``; a write in progress in a live process is left alone. Errors
    (a file removed meanwhile, no permission) are ignored: cleaning is best effort.
    """
    removed = 0
    now = time.time()
    for path in temp_files_for(target):
        match = _TEMP_RE.search(path.name)
        if match is None:          # temp_files_for gives only matching names; never guess
            continue
        try:
            age = now - path.lstat().st_mtime
            if age > stale_after_s or not _writer_alive(int(match["pid"])):
                path.unlink()
                removed += 1
        except (OSError, ValueError):
            continue
    return removed


def _stat(path: Path, target: Path):
    """``os.stat`` or None when absent; PathError for any other refusal."""
    try:
        return path.stat()
    except (FileNotFoundError, NotADirectoryError):
        return None
    except OSError as exc:
        raise PathError(f"cannot write {_short(str(target))}: {_reason(exc)}") from None


_UMASK_LOCK = _thread.allocate_lock()   # threading's Lock, without importing threading


def _default_mode() -> int:
    with _UMASK_LOCK:
        mask = os.umask(0o022)
        os.umask(mask)
    return 0o666 & ~mask


def atomic_write_text(path: str | os.PathLike[str], text: str, *, overwrite: bool = False,
                      mode: int | None = None) -> None:
    """Write ``text`` (UTF-8) to ``path`` atomically, leaving no temporary file behind.

    The text goes to a temporary file in the same folder, is flushed and ``fsync``-ed,
    then moved over the target with ``os.replace`` (or hard-linked when ``overwrite``
    is false, so that a file appearing meanwhile is never replaced); on any error the
    temporary file is removed and the target is untouched. Stale temporary files of
    earlier, killed writes to the same target are removed first.

    Parameters
    ----------
    path : str or os.PathLike
        The file to write; ``~`` is expanded (:func:`user_path`).
    text : str
        The complete new content.
    overwrite : bool
        Replace an existing file (the command line's ``--force``).
    mode : int, optional
        Permission bits of the new file (e.g. ``0o600`` for a private key); the temporary
        file is private from its creation. None: an existing file's, else the umask's.

    Raises
    ------
    planner.errors.PathError
        One line: the file exists and ``overwrite`` is false, the target is a folder,
        its folder does not exist, the name is too long, ``~user`` is unknown, or the
        operating system refuses the write (permission, read-only, full disk).
    """
    target = user_path(path)
    folder = target.parent
    shown = _short(str(target))
    folder_stat = _stat(folder, target)
    if folder_stat is None or not os.path.isdir(folder):
        raise PathError(f"cannot write {shown}: folder {_short(str(folder))} does not exist")
    target_stat = _stat(target, target)
    if target_stat is not None and os.path.isdir(target):
        raise PathError(f"{shown} is a folder; give a file name to write")
    if target_stat is not None and not overwrite:
        raise PathError(f"{shown} exists; use --force to overwrite it")
    name_max = _name_max(folder)
    if len(os.fsencode(target.name)) > name_max:
        raise PathError(f"cannot write {shown}: file name too long "
                        f"({len(os.fsencode(target.name))} bytes; at most {name_max})")
    if mode is None:
        mode = (target_stat.st_mode & 0o7777) if target_stat is not None else _default_mode()
    remove_stale_temp_files(target)
    import tempfile  # here, not at start-up: the UI imports this module before its first frame
    try:
        handle, temp_name = tempfile.mkstemp(prefix=_temp_prefix(target, name_max),
                                             suffix=".tmp", dir=folder)
    except OSError as exc:
        raise PathError(f"cannot write {shown}: {_reason(exc)}") from None
    try:
        with os.fdopen(handle, "w", encoding="utf-8", newline="") as stream:
            stream.write(text)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temp_name, mode)
        if overwrite:
            os.replace(temp_name, target)
        else:
            _move_no_clobber(temp_name, target, shown)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(temp_name)
        if isinstance(exc, OSError):
            raise PathError(f"cannot write {shown}: {_reason(exc)}") from None
        raise
    _fsync_folder(folder)


def _move_no_clobber(temp_name: str, target: Path, shown: str) -> None:
    """Move without replacing a file that appeared meanwhile (hard link when possible)."""
    try:
        os.link(temp_name, target)
    except FileExistsError:
        raise PathError(f"{shown} exists; use --force to overwrite it") from None
    except OSError:
        if os.path.lexists(target):
            raise PathError(f"{shown} exists; use --force to overwrite it") from None
        os.replace(temp_name, target)
        return
    os.unlink(temp_name)


def _fsync_folder(folder: Path) -> None:
    """Make the rename durable (best effort: some file systems refuse a folder fsync)."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
