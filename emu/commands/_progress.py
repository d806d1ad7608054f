"""Progress bars for long headless runs and test batches.

Most runs end in a blink, and a bar that flashes up for them is noise, so
nothing is drawn until the work has taken about a second. Nothing at all is
drawn when the output is not a terminal: scripts and CI read clean text.
The bar goes to stderr; while it is up, lines printed to stdout appear
above it instead of tearing it.

A run's end is not known in advance (the cycle limit is a guard, not a
goal), so a line without a total shows the cycles done and the rate, never
a percentage of the limit; a batch of programs has a total and a bar.
"""

from __future__ import annotations

import datetime
import signal
import sys
import threading
import time
from contextlib import contextmanager

from ..formatting import count_text

__all__ = ["Progress", "amount_text", "rate_text_per_second", "terminal_attached"]


def terminal_attached() -> bool:
    """True when both stdout and stderr are a terminal (a person is watching)."""
    return sys.stdout.isatty() and sys.stderr.isatty()


def amount_text(done: int, total: int | None, unit: str) -> str:
    """``3/8 programs`` with a known total, ``1,234,567 cycles`` without one."""
    if total is None:
        return count_text(done, unit.rstrip("s"))
    return f"{count_text(done)}/{count_text(total)} {unit}"


def rate_text_per_second(done: int, seconds: float, unit: str) -> str:
    """``12,345 cycles/s``; nothing until some time has passed."""
    if seconds <= 0:
        return ""
    return f"{count_text(round(done / seconds))} {unit}/s"


class _Line:
    """One line: a label and a count, towards a total if there is one."""

    def __init__(self, owner: "Progress", label: str, total: int | None, unit: str, remove_when_done: bool):
        self.owner, self.label, self.total, self.unit = owner, label, total, unit
        self.remove_when_done = remove_when_done
        self.done = 0
        self.finished = False
        self.counter = None
        self.started = time.perf_counter()
        """The rate counts from here, not from when the line is first drawn a second later."""

    def update(self, done: int) -> None:
        self.done = done
        if self.counter is not None:
            self.counter.items_completed = done if self.total is None else min(done, self.total)
        self.owner.tick()

    def finish(self) -> None:
        self.finished = True
        self.update(self.done if self.total is None else self.total)
        if self.counter is not None:
            self.counter.done = True


class Progress:
    """A set of bars drawn with prompt_toolkit once ``delay`` seconds have passed.

    Use as a context manager; ``line(label, total, unit)`` adds a line and
    returns it (``total=None`` when the end is not known), ``line.update(n)``
    moves it. The engine's ``chunk`` callback is where a run calls ``update``.
    """

    def __init__(self, enabled: bool, delay: float = 1.0):
        self.enabled = enabled
        self.delay = delay
        self.started = time.perf_counter()
        self.lines: list[_Line] = []
        self.bar = None

    def __enter__(self) -> "Progress":
        return self

    def __exit__(self, kind, *exc) -> None:
        if kind is KeyboardInterrupt:
            self.clear()
        else:
            self.close()

    def line(self, label: str, total: int | None = None, unit: str = "cycles",
             remove_when_done: bool = False) -> _Line:
        line = _Line(self, label, total, unit, remove_when_done)
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
        self.bar = ProgressBar(output=create_output(stdout=sys.stderr), formatters=_formatters(self))
        self.bar.__enter__()
        self.printing = patch_stdout(raw=True)
        self.printing.__enter__()
        for line in self.lines:
            if not (line.finished and line.remove_when_done):
                self._attach(line)

    def _attach(self, line: _Line) -> None:
        line.counter = self.bar(label=line.label, total=line.total,
                                remove_when_done=line.remove_when_done)
        # its clock shows the time since the work began, not since the bar was first drawn
        line.counter.start_time -= datetime.timedelta(seconds=time.perf_counter() - line.started)
        line.counter.items_completed = line.done if line.total is None else min(line.done, line.total)

    def close(self) -> None:
        """Take the bar down; a Ctrl-C in these few milliseconds must not tear it half down."""
        if self.bar is not None:
            bar, self.bar = self.bar, None
            with _sigint_held():
                self.printing.__exit__(None, None, None)
                bar.__exit__(None, None, None)

    def clear(self) -> None:
        """Take the bar down with every line on it, finished or not: after a Ctrl-C the message
        that says where the work stopped is the last thing on the screen, with no bar below it."""
        if self.bar is not None:
            with _sigint_held():
                self.bar.counters.clear()
            self.close()


def _formatters(progress: Progress):
    """Label, amount, bar (or rate for an open-ended line), time taken."""
    from prompt_toolkit.shortcuts.progress_bar import formatters

    def line_of(counter) -> _Line:
        return next(line for line in progress.lines if line.counter is counter)

    class Amount(formatters.Formatter):
        def format(self, progress_bar, counter, width):
            line = line_of(counter)
            return amount_text(line.done, line.total, line.unit)

        def get_width(self, progress_bar):
            return max((len(amount_text(line.done, line.total, line.unit)) for line in progress.lines), default=1)

    class BarOrRate(formatters.Bar):
        def format(self, progress_bar, counter, width):
            line = line_of(counter)
            if line.total is not None:
                return super().format(progress_bar, counter, width)
            seconds = time.perf_counter() - line.started
            return rate_text_per_second(line.done, seconds, line.unit).rjust(width)

    return [formatters.Label(), formatters.Text("  "), Amount(), formatters.Text("  "), BarOrRate(),
            formatters.Text("  "), formatters.TimeElapsed()]


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
