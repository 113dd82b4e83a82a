"""Writing output files safely: never a half-written file, never an unasked overwrite.

Every output (netlists, workbooks, CSV tables, plots) goes through `write_atomic`: the data is
written to a temporary file in the target's own directory, flushed to disk, then renamed over
the target in one step (`os.replace`, atomic on one file system), so a reader sees the old
file or the complete new one and a failure leaves no partial file behind. Without `force` an
existing file is left untouched and OutputError says so. `write_all` writes several files the
same way after checking every target first, so a refusal writes nothing and a failure part-way
leaves the files already written complete and intact.
"""
from __future__ import annotations

import os
import tempfile
from collections.abc import Iterable, Mapping
from pathlib import Path

from tradeoff.errors import OutputError

__all__ = ["write_atomic", "write_all", "check_writable"]


def _reason(exc: OSError) -> str:
    return exc.strerror or exc.__class__.__name__


def check_writable(path: str | Path, force: bool) -> Path:
    """The target `path`, after checking it may be written: its directory exists, and it is not a
    directory nor (without `force`) an existing file. Raises OutputError."""
    target = Path(path)
    if target.is_dir():
        raise OutputError(f"{target}: is a directory; accepted: a file path")
    if not target.parent.is_dir():
        raise OutputError(f"{target}: the directory {target.parent} does not exist; accepted: a path in an "
                          "existing directory")
    if target.exists() and not force:
        raise OutputError(f"{target}: exists and was left untouched; accepted: a new file name, or --force to "
                          "replace it")
    return target


def write_atomic(path: str | Path, data: str | bytes, force: bool) -> Path:
    """Write `data` (text as UTF-8, or bytes) to `path` atomically; returns the path written.

    Raises OutputError when the file exists and `force` is False (the file is left untouched),
    or when writing fails (no partial or temporary file is left).
    """
    target = check_writable(path, force)
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    try:
        fd, temp_name = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".tmp")
    except OSError as exc:
        raise OutputError(f"{target}: cannot create a file in {target.parent} ({_reason(exc)})") from None
    temp = Path(temp_name)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(payload)
            handle.flush()
            os.fsync(handle.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temp, 0o666 & ~umask)  # mkstemp makes the file private; give it the usual mode
        if force:
            os.replace(temp, target)
        else:
            _place_new(temp, target)
    except OutputError:
        temp.unlink(missing_ok=True)
        raise
    except OSError as exc:
        temp.unlink(missing_ok=True)
        raise OutputError(f"{target}: writing failed ({_reason(exc)}); no partial file was left") from None
    except BaseException:
        temp.unlink(missing_ok=True)
        raise
    return target


def _place_new(temp: Path, target: Path) -> None:
    """Move `temp` to `target` only if `target` still does not exist (a hard link fails on an existing
    name, so a file created meanwhile is not overwritten); rename where links are not supported."""
    try:
        os.link(temp, target)
    except FileExistsError:
        raise OutputError(f"{target}: exists and was left untouched; accepted: a new file name, or --force to "
                          "replace it") from None
    except OSError:  # no hard links on this file system: the check above is the guard
        os.replace(temp, target)
    else:
        temp.unlink()


def write_all(files: Mapping[str | Path, str | bytes] | Iterable[tuple[str | Path, str | bytes]],
              force: bool) -> list[Path]:
    """Write several files, each atomically; returns the paths written, in order.

    Every target is checked before the first is written, so an existing file without `force`
    (or a missing directory) writes nothing. A failure part-way raises OutputError naming the
    files already written, which stay complete.
    """
    items = list(files.items() if isinstance(files, Mapping) else files)
    names = [Path(path) for path, _ in items]
    if len(set(names)) != len(names):
        raise OutputError("the same output file is named twice: " + ", ".join(
            str(n) for n in sorted({n for n in names if names.count(n) > 1})))
    for path in names:
        check_writable(path, force)
    written: list[Path] = []
    for path, data in items:
        try:
            written.append(write_atomic(path, data, force))
        except OutputError as exc:
            done = f"; written before the failure, complete: {', '.join(map(str, written))}" if written else ""
            raise OutputError(f"{exc}{done}") from None
    return written
