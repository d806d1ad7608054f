"""Observers: the hooks traces, waveforms and the panel's scope listen on, and when they listen.

An observer attached for good makes every run take the stepping path. One
attached for a window of cycles (``observe(obs, start=, end=)``, the
waveform window) is held back until the cycle count reaches ``start``: the
run keeps the fast path up to there, stopping short of it (``_Running``
reads ``_next_scheduled`` for its budget), and the observer is taken off
again at ``end``.
"""

from __future__ import annotations

from ..description import Step
from ._cycle_trace import CycleTrace, trace_cycles

__all__ = ["Observer"]


class Observer:
    """Hooks for traces, waveforms and the debugger's scope; override what you need.

    Attaching any observer makes the engine take the stepping path, so a
    run that nobody watches pays nothing for this; one that accepts traces
    (``accepts_trace``) gets free cycles micro-step by micro-step instead.
    """

    def phase(self, emu: "Emulator", index: int) -> None: ...
    def edge(self, emu: "Emulator", level: int) -> None: ...
    def microstep(self, emu: "Emulator", step: Step, lines: tuple[str, ...]) -> None: ...
    def hold(self, emu: "Emulator", frozen: bool) -> None: ...
    def latch(self, emu: "Emulator", is_set: bool) -> None: ...
    def panel(self, emu: "Emulator", action: str) -> None: ...
    def instruction(self, emu: "Emulator") -> None: ...

    def accepts_trace(self, emu: "Emulator") -> bool:
        """True when this observer would rather take the next free cycles as one ``CycleTrace``
        (``traced``) than phase by phase; asked at a cycle boundary with the hold line low."""
        return False

    def traced(self, emu: "Emulator", trace: "CycleTrace") -> None: ...


class _Observing:
    """Attaching, scheduling and notifying observers; the ``Emulator`` holds ``_observers``,
    ``_scheduled`` (cycle, attach or detach, observer), ``_next_scheduled`` and ``cycles``."""

    def observe(self, observer: Observer, *, start: int | None = None, end: int | None = None) -> None:
        """Attach ``observer``; with ``start`` only once the cycle count reaches it, with ``end``
        until it does. Until then (and after) the run keeps the fast path, which stops short of
        ``start`` so that the observer sees every event from the moment the count reaches it."""
        if start is not None and start > self.cycles:
            self._schedule(start, True, observer)
        else:
            self._observers.append(observer)
        if end is not None:
            self._schedule(max(end, self.cycles), False, observer)
        self._attend()

    def unobserve(self, observer: Observer) -> None:
        self._scheduled = [entry for entry in self._scheduled if entry[2] is not observer]
        self._next_scheduled = self._scheduled[0][0] if self._scheduled else None
        if observer in self._observers:
            self._observers.remove(observer)

    def _schedule(self, cycle: int, attach: bool, observer: Observer) -> None:
        self._scheduled.append((cycle, attach, observer))
        self._scheduled.sort(key=lambda entry: (entry[0], entry[1]))
        self._next_scheduled = self._scheduled[0][0]

    def _attend(self) -> None:
        """Attach and detach the observers whose cycle has come."""
        while self._scheduled and self._scheduled[0][0] <= self.cycles:
            _cycle, attach, observer = self._scheduled.pop(0)
            if attach:
                self._observers.append(observer)
            elif observer in self._observers:
                self._observers.remove(observer)
        self._next_scheduled = self._scheduled[0][0] if self._scheduled else None

    def _run_traced(self, budget: int) -> bool:
        """Run up to ``budget`` free cycles as one trace when every observer accepts one (see
        ``_cycle_trace``); False when that is not possible here, or no cycle could run."""
        observers = self._observers
        if (budget <= 0 or self.frozen or self.hold_line or self.ring.source is not None or self._tally is not None
                or not self.ring.at_boundary or not all(o.accepts_trace(self) for o in observers)):
            return False
        trace = CycleTrace(self.cycles, self.ring.time_ns, self.ring.index)
        try:
            trace_cycles(self, budget, trace)
        finally:   # interrupted too: what ran is reported
            if trace.places:
                for observer in list(observers):
                    observer.traced(self, trace)
        if not trace.places:
            return False
        self._attend()
        return True

    def _notify(self, event: str, *args) -> None:
        for observer in self._observers:
            getattr(observer, event)(self, *args)
