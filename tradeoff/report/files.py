"""Writing output files safely: never a half-written file or folder, never an unasked overwrite,
never anything but a regular file replaced.

Every output (netlists, workbooks, CSV tables, plots, the review set) goes through this module.

- `check_writable(path, force)` refuses, with an OutputError naming the path, a target that is a
  directory, a symbolic link, a named pipe, a socket or a device (even with `force`: only a
  regular file is ever replaced), an existing file without `force`, and a target whose nearest
  existing ancestor is a file or a directory this process may not write into.
- `write_atomic(path, data, force)` writes one file: to a temporary file in the target's own
  directory, flushed to disk, then renamed over the target in one step (`os.replace`, atomic on
  one file system), so a reader sees the old file or the complete new one.
- `write_all(files, force, folders)` writes several files (contents given, or made on demand by a
  function) after checking every target first, so a refusal writes and creates nothing. The files
  are first written into one hidden staging folder (`.tradeoff-partial-*`) beside the outputs; at
  the end a folder that did not exist (a new `--review DIR`) is renamed into place in one step, and
  files into folders that exist are moved in one by one (each complete). On an error, Ctrl-C or
  SIGTERM the staging folder is removed, so no partial set is left and a rerun starts clean; a
  staging folder left by a process killed outright is removed by the next write into that folder.

While files are written, SIGTERM and SIGHUP raise `Interrupted` (a BaseException, like Ctrl-C's
KeyboardInterrupt), so the clean-up runs; the CLI reports it and exits 128 + the signal number.
"""
from __future__ import annotations

import contextlib
import os
import shutil
import signal
import stat
import tempfile
import threading
from collections.abc import Callable, Iterable, Iterator, Mapping
from pathlib import Path
from typing import BinaryIO

from tradeoff.errors import Interrupted, OutputError

__all__ = ["write_atomic", "write_all", "check_writable", "interruptible", "STAGING_PREFIX"]

STAGING_PREFIX = ".tradeoff-partial-"
"""Name start of the hidden staging folder of `write_all` (removed when it ends, however it ends)."""

Contents = str | bytes | Callable[[], str | bytes]
"""A file's contents: text (written as UTF-8), bytes, or a function giving either when the file is made."""


@contextlib.contextmanager
def interruptible() -> Iterator[None]:
    """Within the block, SIGTERM and SIGHUP raise Interrupted instead of ending the process at once, so
    `finally` clean-up runs (only in the main thread, where Python delivers signals)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def raise_interrupted(signum, _frame):
        raise Interrupted(signum)

    previous = {s: signal.signal(s, raise_interrupted) for s in (signal.SIGTERM, signal.SIGHUP)}
    try:
        yield
    finally:
        for s, handler in previous.items():
            signal.signal(s, handler)


def _reason(exc: OSError) -> str:
    return exc.strerror or exc.__class__.__name__


_KINDS = ((stat.S_ISDIR, "a directory"), (stat.S_ISLNK, "a symbolic link"), (stat.S_ISFIFO, "a named pipe"),
          (stat.S_ISSOCK, "a socket"), (stat.S_ISCHR, "a character device"), (stat.S_ISBLK, "a block device"))


def _kind(mode: int) -> str | None:
    """What a non-regular file is ('a named pipe'), or None for a regular file."""
    return next((name for test, name in _KINDS if test(mode)), None)


def _existing_ancestor(target: Path) -> Path:
    """The nearest ancestor of `target` that exists, after checking it is a directory this process may
    write into. Raises OutputError."""
    ancestor = target.parent
    while not os.path.lexists(ancestor) and ancestor != ancestor.parent:
        ancestor = ancestor.parent
    if not ancestor.is_dir():
        raise OutputError(f"{target}: {ancestor} is a file, not a directory; accepted: a path whose folders are "
                          "folders (missing ones are created)")
    if not os.access(ancestor, os.W_OK | os.X_OK, effective_ids=os.access in os.supports_effective_ids):
        raise OutputError(f"{target}: the directory {ancestor} is not writable; accepted: a path in a directory "
                          "you may write to")
    return ancestor


def check_writable(path: str | Path, force: bool, create_folders: bool = False) -> Path:
    """The target `path`, after checking it may be written: not a directory, symbolic link, pipe, socket
    or device (whatever `force` says), not an existing file without `force`, and its directory exists
    (or, with `create_folders`, its nearest existing ancestor is a writable directory). Raises OutputError."""
    target = Path(path)
    try:
        mode = os.lstat(target).st_mode
    except (FileNotFoundError, NotADirectoryError):  # a missing folder, or a file where a folder should be
        mode = None
    except OSError as exc:
        raise OutputError(f"{target}: cannot be examined ({_reason(exc)})") from None
    if mode is not None and (kind := _kind(mode)) is not None:
        raise OutputError(f"{target}: is {kind}, which is never replaced (not even with --force); accepted: "
                          "a path to a regular file or a new name")
    if not create_folders and not target.parent.is_dir():
        what = "is a file" if os.path.lexists(target.parent) else "does not exist"
        raise OutputError(f"{target}: the directory {target.parent} {what}; accepted: a path in an existing "
                          "directory")
    _existing_ancestor(target)
    if mode is not None and not force:
        raise OutputError(f"{target}: exists and was left untouched; accepted: a new file name, or --force to "
                          "replace it")
    return target


def _payload(data: Contents) -> bytes:
    data = data() if callable(data) else data
    return data.encode("utf-8") if isinstance(data, str) else bytes(data)


def _usual_mode(path: Path) -> None:
    """Give `path` the mode a new file gets (mkstemp makes it private)."""
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(path, 0o666 & ~umask)


def _write_synced(path: Path, payload: bytes, handle: BinaryIO | None = None) -> None:
    """Write `payload` to `path` (through `handle` when already open), flushed to disk, with the usual mode."""
    with handle if handle is not None else open(path, "wb") as out:
        out.write(payload)
        out.flush()
        os.fsync(out.fileno())
    _usual_mode(path)


def write_atomic(path: str | Path, data: Contents, force: bool) -> Path:
    """Write `data` (text as UTF-8, bytes, or a function giving either) to `path` atomically; returns
    the path written.

    Raises OutputError when the target may not be written (see `check_writable`; it is left
    untouched), or when writing fails (no partial or temporary file is left).
    """
    target = check_writable(path, force)
    payload = _payload(data)
    with interruptible():
        try:
            fd, temp_name = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".tmp")
        except OSError as exc:
            raise OutputError(f"{target}: cannot create a file in {target.parent} ({_reason(exc)})") from None
        temp = Path(temp_name)
        try:
            _write_synced(temp, payload, os.fdopen(fd, "wb"))
            _place(temp, target, force)
        except OSError as exc:
            temp.unlink(missing_ok=True)
            if isinstance(exc, OutputError):
                raise
            raise OutputError(f"{target}: writing failed ({_reason(exc)}); no partial file was left") from None
        except BaseException:
            temp.unlink(missing_ok=True)
            raise
    return target


def _place(temp: Path, target: Path, force: bool) -> None:
    """Move the complete file `temp` to `target`: over a regular file with `force` (checked again just
    before), else only if `target` still does not exist (a hard link fails on an existing name, so a
    file created meanwhile is not overwritten; rename where links are not supported)."""
    if force:
        check_writable(target, force)
        os.replace(temp, target)
        return
    try:
        os.link(temp, target)
    except FileExistsError:
        raise OutputError(f"{target}: exists and was left untouched; accepted: a new file name, or --force to "
                          "replace it") from None
    except OSError:  # no hard links on this file system: the check above is the guard
        os.replace(temp, target)
    else:
        temp.unlink()


def write_all(files: Mapping[str | Path, Contents] | Iterable[tuple[str | Path, Contents]], force: bool,
              folders: Iterable[str | Path] = ()) -> list[Path]:
    """Write several files (contents, or functions making them, called one at a time) and create the
    `folders` (empty ones too); returns the paths written, in order.

    Every target is checked before anything is made, written or created, so an existing file without
    `force`, a special file or an unwritable place writes nothing. The files go to a staging folder
    first and are moved into place at the end (a new folder in one rename); an error or interruption
    on the way removes the staging folder and leaves the outputs as they were. OutputError names the
    files already moved in when moving itself fails.
    """
    items = [(Path(path), data) for path, data in (files.items() if isinstance(files, Mapping) else files)]
    names = [path for path, _ in items]
    if len(set(names)) != len(names):
        raise OutputError("the same output file is named twice: " + ", ".join(
            str(n) for n in sorted({n for n in names if names.count(n) > 1})))
    folders = [Path(f) for f in folders]
    for folder in folders:
        if os.path.lexists(folder) and not folder.is_dir():
            raise OutputError(f"{folder}: is a file; accepted: a directory (it is created if missing)")
        if not folder.is_dir():
            _existing_ancestor(folder / "x")
    for path in names:
        check_writable(path, force, create_folders=True)
    staged: dict[Path, list[tuple[Path, Contents | None]]] = {}  # existing ancestor -> entries below it
    for path, data in [*((f, None) for f in folders), *items]:
        key = _existing_ancestor(path if data is not None else path / "x").resolve()
        staged.setdefault(key, []).append((_resolved(path).relative_to(key), data))
    with interruptible(), contextlib.ExitStack() as cleanup:
        stagings = {anchor: _staging_folder(anchor, cleanup) for anchor in staged}
        try:
            for anchor, entries in staged.items():
                for relative, data in entries:
                    place = stagings[anchor] / relative
                    if data is None:
                        place.mkdir(parents=True, exist_ok=True)
                        continue
                    place.parent.mkdir(parents=True, exist_ok=True)
                    _write_synced(place, _payload(data))
            moved: list[Path] = []
            for anchor, staging in stagings.items():
                _commit(staging, anchor, force, moved)
        except OSError as exc:
            if isinstance(exc, OutputError):
                raise
            raise OutputError(f"writing the output files failed ({_reason(exc)}); nothing was left "
                              "half-written") from None
    return names


def _staging_folder(anchor: Path, cleanup: contextlib.ExitStack) -> Path:
    """A new hidden folder in `anchor`, removed with everything in it when `cleanup` closes.

    Its name carries this host and process id, so the next run removes a staging folder whose process
    was killed outright (SIGKILL, a power cut) before its own clean-up could run (`_clear_abandoned`)."""
    _clear_abandoned(anchor)
    try:
        staging = Path(tempfile.mkdtemp(dir=anchor, prefix=f"{STAGING_PREFIX}{_HOST}-{os.getpid()}-"))
    except OSError as exc:
        raise OutputError(f"{anchor}: cannot create the staging folder ({_reason(exc)})") from None
    cleanup.callback(shutil.rmtree, staging, ignore_errors=True)
    return staging


_HOST = "".join(c if c.isalnum() else "_" for c in os.uname().nodename) or "host"
"""This machine's name as it appears in staging folder names (letters and digits only)."""


def _clear_abandoned(anchor: Path) -> None:
    """Remove the staging folders in `anchor` left by a process of this host that no longer runs.

    A folder of another host, of a process still running, or with a name this module did not make is
    left alone: only our own abandoned staging is ever removed."""
    for folder in anchor.glob(f"{STAGING_PREFIX}{_HOST}-*-*"):
        pid = folder.name[len(f"{STAGING_PREFIX}{_HOST}-"):].split("-", 1)[0]
        if not pid.isdigit() or not folder.is_dir() or folder.is_symlink():
            continue
        try:
            os.kill(int(pid), 0)
        except ProcessLookupError:
            shutil.rmtree(folder, ignore_errors=True)
        except OSError:
            continue  # a process of another user: still running


def _resolved(path: Path) -> Path:
    """`path` with its existing part resolved (symbolic links followed) and the missing rest appended."""
    missing: list[str] = []
    while not os.path.lexists(path) and path != path.parent:
        missing.insert(0, path.name)
        path = path.parent
    return path.resolve().joinpath(*missing)


def _commit(staged: Path, target: Path, force: bool, moved: list[Path]) -> None:
    """Move everything in the staging folder `staged` into the directory `target`: a folder missing
    there in one rename, a file over a regular file (with `force`) or to a new name."""
    for entry in sorted(staged.iterdir()):
        destination = target / entry.name
        if entry.is_dir() and not os.path.lexists(destination):
            os.rename(entry, destination)
            moved.append(destination)
        elif entry.is_dir():
            if not destination.is_dir():
                raise OutputError(f"{destination}: is not a directory; accepted: a directory")
            _commit(entry, destination, force, moved)
        else:
            try:
                _place(entry, destination, force)
            except OSError as exc:
                done = f"; moved in before the failure, complete: {', '.join(map(str, moved))}" if moved else ""
                why = str(exc) if isinstance(exc, OutputError) else f"{destination}: writing failed ({_reason(exc)})"
                raise OutputError(f"{why}{done}") from None
            moved.append(destination)
