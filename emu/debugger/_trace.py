"""A recording of the last clock cycles, for the timing diagram.

The recorder is an engine observer. Each *column* is one thing the clock
did: a phase the generator ran, a STEP pulse from the panel, or a freeze at
a hold point. Columns keep what a person would see on a logic analyser at
that moment (clock level, lit ring stages, hold line, halt latch) plus the
control lines driven while the clock was high and the panel actions taken,
so the diagram can show where a halt or a stop took effect.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass, field

from emu import Observer

__all__ = ["Column", "Recorder"]

CAPACITY = 4096
"""Columns kept: with ref8's four phases a cycle, about a thousand cycles."""


@dataclass
class Column:
    kind: str
    """``"phase"``, ``"pulse"`` (a STEP press) or ``"frozen"`` (the generator held)."""
    cycle: int
    """Number of the cycle this column belongs to (the engine's count when it began)."""
    level: int
    ring: tuple[int, ...]
    hold: bool
    latch: bool
    lines: set[str] = field(default_factory=set)
    actions: list[str] = field(default_factory=list)
    """Panel actions taken just before this column, and the latch being set."""
    idle: bool = False
    """True for the high columns of an idle cycle: its micro-step drives no control line."""


class Recorder(Observer):
    def __init__(self, machine, capacity: int = CAPACITY):
        self.machine = machine
        self.columns: deque[Column] = deque(maxlen=capacity)
        self._pending: list[str] = []
        self._high: list[Column] = []
        self.gap = False
        """True when the columns do not reach back to the start of the recording
        (a long run was replayed only for its last cycles)."""

    def clear(self) -> None:
        self.columns.clear()
        self._pending.clear()
        self._high.clear()
        self.gap = False

    def _add(self, emu, kind: str, level: int, ring) -> Column:
        column = Column(kind, emu.cycles + 1 if level else emu.cycles, level, tuple(ring),
                        emu.hold_line, emu.halt_latch, actions=self._pending)
        self._pending = []
        self.columns.append(column)
        if level:
            self._high.append(column)
        return column

    def phase(self, emu, index: int) -> None:
        phase = self.machine.phases[index]
        if phase.level and (not self.columns or not self.columns[-1].level):
            self._high = []
        self._add(emu, "phase", phase.level, phase.ring)

    def edge(self, emu, level: int) -> None:
        if level == 1 and emu.frozen:
            self._high = []
            self._add(emu, "pulse", 1, self.machine.phases[emu.phase_index].ring)

    def microstep(self, emu, step, lines) -> None:
        for column in self._high:
            column.lines.update(lines)
            column.idle = not lines
        self._high = []
        if emu.frozen:
            self._add(emu, "frozen", 0, self.machine.phases[emu.phase_index].ring)

    def hold(self, emu, frozen: bool) -> None:
        if frozen:
            self._add(emu, "frozen", 0, self.machine.phases[emu.phase_index].ring)

    def latch(self, emu, is_set: bool) -> None:
        self._pending.append("latch set" if is_set else "latch clear")

    def panel(self, emu, action: str) -> None:
        if action != "step":
            self._pending.append(action)

    def last_cycles(self, count: int) -> list[Column]:
        """The columns of the last ``count`` cycles (a cycle starts at a rising edge)."""
        columns = list(self.columns)
        starts = [i for i, c in enumerate(columns)
                  if c.level and (i == 0 or not columns[i - 1].level)]
        if len(starts) <= count:
            return columns
        return columns[starts[-count]:]
