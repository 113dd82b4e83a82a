"""Progress of a long command on the terminal: a bar on stderr for a study or sweep that runs longer
than about a second, nothing at all when stderr is not a terminal (a pipe, a file, a test runner).

The library reports progress only through a hook it is given (`study(progress=...)`,
`sweep(progress=...)`); this display is what the command shell hands it. The bar appears once
SHOW_AFTER_S has passed, showing the latest step, so a quick command draws nothing, and it is
erased when the command ends, before the report is written.
"""
from __future__ import annotations

import sys
import threading
from typing import TextIO

__all__ = ["TerminalProgress", "SHOW_AFTER_S"]

SHOW_AFTER_S = 1.0
"""Seconds a command runs before its progress bar appears [s] (read when a display is created)."""


class TerminalProgress:
    """Context manager showing `label` with a bar of done/total and the current step on `stream`
    (stderr by default), only when `stream` is a terminal; `update(done, total, step)` is the hook
    to hand the library."""

    def __init__(self, label: str, stream: TextIO | None = None):
        self.label = label
        self.stream = stream if stream is not None else sys.stderr
        self.enabled = self.stream.isatty()
        self._state: tuple[int, int | None, str] = (0, None, "")
        self._lock = threading.Lock()
        self._timer: threading.Timer | None = None
        self._bar = None
        self._task = None

    def __enter__(self) -> "TerminalProgress":
        if self.enabled:
            self._timer = threading.Timer(SHOW_AFTER_S, self._show)
            self._timer.daemon = True
            self._timer.start()
        return self

    def __exit__(self, *exc) -> None:
        if self._timer is not None:
            self._timer.cancel()
        with self._lock:
            if self._bar is not None:
                self._bar.stop()
                self._bar = None
            self.enabled = False  # a late timer shows nothing

    def update(self, done: int, total: int | None, step: str = "") -> None:
        """Record progress: `done` of `total` items (None: not known yet), `step` what runs now."""
        if not self.enabled:
            return
        with self._lock:
            self._state = (done, total, step)
            if self._bar is not None:
                self._bar.update(self._task, completed=done, total=total, step=step)

    def _show(self) -> None:
        """Start the bar with the latest state (called once, SHOW_AFTER_S after entering)."""
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

        with self._lock:
            if not self.enabled:
                return
            done, total, step = self._state
            console = Console(file=self.stream, force_terminal=True)
            self._bar = Progress(TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
                                 TimeElapsedColumn(), TextColumn("{task.fields[step]}"), console=console,
                                 transient=True)
            self._task = self._bar.add_task(self.label, total=total, completed=done, step=step)
            self._bar.start()
