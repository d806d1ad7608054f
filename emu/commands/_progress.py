"""Progress bars for long headless runs and test batches.

Most runs end in a blink, and a bar that flashes up for them is noise, so
nothing is drawn until the work has taken about a second. Nothing at all is
drawn when the output is not a terminal: scripts and CI read clean text.
The bar goes to stderr; while it is up, lines printed to stdout appear
above it instead of tearing it.
"""

from __future__ import annotations

import signal
import sys
import threading
import time
from contextlib import contextmanager

__all__ = ["Progress", "terminal_attached"]


def terminal_attached() -> bool:
    """True when both stdout and stderr are a terminal (a person is watching)."""
    return sys.stdout.isatty() and sys.stderr.isatty()


class _Line:
    """One bar: a label and a count towards a total."""

    def __init__(self, owner: "Progress", label: str, total: int, remove_when_done: bool):
        self.owner, self.label, self.total = owner, label, total
        self.remove_when_done = remove_when_done
        self.done = 0
        self.finished = False
        self.counter = None

    def update(self, done: int) -> None:
        self.done = done
        if self.counter is not None:
            self.counter.items_completed = min(done, self.total)
        self.owner.tick()

    def finish(self) -> None:
        self.finished = True
        self.update(self.total)
        if self.counter is not None:
            self.counter.done = True


class Progress:
    """A set of bars drawn with prompt_toolkit once ``delay`` seconds have passed.

    Use as a context manager; ``line(label, total)`` adds a bar and returns
    it, ``bar.update(n)`` moves it. The engine's ``chunk`` callback is where
    a run calls ``update``.
    """

    def __init__(self, enabled: bool, delay: float = 1.0):
        self.enabled = enabled
        self.delay = delay
        self.started = time.perf_counter()
        self.lines: list[_Line] = []
        self.bar = None

    def __enter__(self) -> "Progress":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def line(self, label: str, total: int, remove_when_done: bool = False) -> _Line:
        line = _Line(self, label, total, remove_when_done)
        self.lines.append(line)
        if self.bar is not None:
            self._attach(line)
        return line

    def tick(self) -> None:
        if self.bar is None:
            if not self.enabled or time.perf_counter() - self.started < self.delay:
                return
            self._open()
        self.bar.invalidate()

    def _open(self) -> None:
        from prompt_toolkit.output import create_output
        from prompt_toolkit.patch_stdout import patch_stdout
        from prompt_toolkit.shortcuts import ProgressBar
        self.bar = ProgressBar(output=create_output(stdout=sys.stderr))
        self.bar.__enter__()
        self.printing = patch_stdout(raw=True)
        self.printing.__enter__()
        for line in self.lines:
            if not (line.finished and line.remove_when_done):
                self._attach(line)

    def _attach(self, line: _Line) -> None:
        line.counter = self.bar(label=line.label, total=line.total,
                                remove_when_done=line.remove_when_done)
        line.counter.items_completed = min(line.done, line.total)

    def close(self) -> None:
        """Take the bar down; a Ctrl-C in these few milliseconds must not tear it half down."""
        if self.bar is not None:
            bar, self.bar = self.bar, None
            with _sigint_held():
                self.printing.__exit__(None, None, None)
                bar.__exit__(None, None, None)


@contextmanager
def _sigint_held():
    """Ignore SIGINT for the duration (main thread only; elsewhere signals cannot be set)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous)
