"""A stretch of free cycles (``CycleTrace``) written into a waveform as the stepping path would.

On a nominal clock the phases of a cycle, and so the clock, the ring
stages and the times at which each changes, repeat from one cycle boundary
to the same boundary of the next turn. Per (boundary, micro-step) the text
of one cycle is therefore fixed but for its times, the gated lines that
fired and the registers and flags after the step: it becomes one format
string, filled with the cycle's times, followed by the datapath's changes
and the sequencer's count. The order of the changes at one time is the
order in which the stepping path's hooks report them (``VcdRecorder``), so
the two give the same file byte for byte.
"""

from __future__ import annotations

import numpy as np

from ..engine import CycleTrace, step_places
from ._vcd_changes import TracedChanges

__all__ = ["TracedCycles"]

SLICE_CYCLES = 4096
"""Cycles of a trace written at once."""


class TracedCycles:
    """Writes traces into one ``VcdRecorder``'s dump; built once per recorder."""

    def __init__(self, recorder, emu):
        machine = recorder.machine
        self.recorder = recorder
        self.places = step_places(machine)
        unit = recorder.unit_ns
        phases = machine.phases
        self.exact = all(p.duration_ns % unit == 0 for p in phases)
        """Times of the stepping path are floored to the unit phase by phase; a trace adds whole
        units, so it is taken only when every phase lasts a whole number of them."""
        writer = recorder.writer
        self.clock_rise, self.clock_fall = (f"{text}\n" for text in reversed(writer.scalars[recorder.clock]))
        self.line_text = {line: tuple(f"{text}\n" for text in writer.scalars[var])
                          for line, var in recorder.lines.items()}
        self.cycles = {b: self._cycle(b, unit) for b in emu.ring.boundaries}
        self.offsets = {b: self._offsets(b) for b in self.cycles}
        self.most = max(len(offsets) for offsets in self.offsets.values())
        size = len(phases)
        self.length_of = np.array([self.cycles[b][1] if b in self.cycles else 0 for b in range(size)])
        self.offset_table = np.array([self.offsets[b] + (0,) * (self.most - len(self.offsets[b]))
                                      if b in self.cycles else (0,) * self.most for b in range(size)],
                                     dtype=np.int64).reshape(size, self.most)
        self.cycles_written = 0
        """Cycles written from traces so far."""
        self.template_table = np.empty((size, len(self.places.steps)), dtype=object)
        """[boundary, step number] → the template of a cycle with no gated line fired."""
        for boundary in self.cycles:
            self.template_table[boundary] = [self._template(boundary, n, ()) for n in range(len(self.places.steps))]
        self.changes = TracedChanges(recorder, self.places)

    def _cycle(self, boundary: int, unit: int):
        """(the next boundary, the cycle's length in units, [(offset in units, what happens)])
        for a cycle from ``boundary``; what happens is "rise", "fall" or the ring's text."""
        recorder, phases = self.recorder, self.recorder.machine.phases
        scalars, lit_of = recorder.writer.scalars, recorder.phase_lit
        events, offset, i = [], 0, boundary
        while True:
            phase, following = phases[i], (i + 1) % len(phases)
            if phase.level == 1 and phases[i - 1].level == 0:
                events.append((offset // unit, "rise"))
            lit = lit_of[i]
            ring = "".join(f"{scalars[recorder.stages[s - 1]][int(s in lit)]}\n" for s in lit_of[i - 1] ^ lit)
            events.append((offset // unit, ring))
            offset += phase.duration_ns
            if phase.level == 1 and phases[following].level == 0:
                events.append((offset // unit, "fall"))
                return following, offset // unit, events
            i = following

    def _template(self, boundary: int, place: int, fired: tuple[str, ...]) -> str:
        """The cycle's text but for its datapath, with ``%d`` for each time written (``%.0s`` filling
        up to the most any cycle writes); other ``%`` doubled."""
        lines = list(dict.fromkeys(self.places.steps[place].control_lines + fired))
        rise = self.clock_rise + "".join(self.line_text[line][1] for line in lines)
        fall = self.clock_fall + "".join(self.line_text[line][0] for line in lines)
        by_time: dict[int, str] = {}
        for offset, what in self.cycles[boundary][2]:
            by_time[offset] = by_time.get(offset, "") + {"rise": rise, "fall": fall}.get(what, what)
        text = "".join(("#%d\n" if offset else "") + text.replace("%", "%%")
                       for offset, text in by_time.items() if text)
        return text + "%.0s" * (self.most - len(self.offsets[boundary]))

    def _offsets(self, boundary: int) -> tuple[int, ...]:
        """The times written in a cycle from ``boundary`` (all but the boundary's own)."""
        by_time: dict[int, str] = {}
        for offset, what in self.cycles[boundary][2]:
            by_time[offset] = by_time.get(offset, "") + what
        return tuple(offset for offset, text in by_time.items() if text and offset)

    def accepts(self, emu) -> bool:
        """True when the dump stands as the stepping path leaves it at a cycle boundary."""
        recorder = self.recorder
        writer, values = recorder.writer, recorder.writer.values
        return (self.exact and writer.started and emu.time_ns % recorder.unit_ns == 0
                and writer.written_now == emu.time_ns // recorder.unit_ns
                and values[recorder.clock] == 0 and values[recorder.step] == emu.sequencer[1]
                and recorder.lit == recorder.phase_lit[emu.phase_index - 1]
                and not any(values[var] for var in recorder.lines.values())
                and recorder.read() == recorder.seen)

    def write(self, emu, trace: CycleTrace, last_datapath: bool = True) -> None:
        """Write ``trace``; ``last_datapath`` False: without the changes its last step made
        (a window that ends there closes before the stepping path reports them).

        The text of ``SLICE_CYCLES`` cycles at a time is one format string (each cycle's
        template followed by its datapath's changes, ``TracedChanges``) filled at once with
        their times, computed by numpy from the cycle lengths; slices keep numpy's arrays
        small enough to stay in the processor's cache."""
        recorder = self.recorder
        writer = recorder.writer
        places = np.array(trace.places, dtype=np.intp)
        count = len(places)
        turn = self._turn_from(trace.start_phase)
        boundaries = np.array(turn)[np.arange(count) % len(turn)]
        lengths = self.length_of[boundaries]
        starts = np.empty(count + 1, dtype=np.int64)
        starts[0] = trace.start_time_ns // recorder.unit_ns
        np.cumsum(lengths, out=starts[1:])
        starts[1:] += starts[0]
        templates = self.template_table[boundaries, places]
        for k, lines in trace.fired.items():
            if k < count:   # not a step cut short by an interruption
                templates[k] = self._template(int(boundaries[k]), int(places[k]), lines)
        value_ends = np.cumsum(self.changes.write_counts[places]).tolist()
        shown = self.places.shown
        seen, step = recorder.seen, writer.values[recorder.step]
        writer.flush()
        for first in range(0, count, SLICE_CYCLES):
            end = min(first + SLICE_CYCLES, count)
            values = trace.values[value_ends[first - 1] if first else 0:value_ends[end - 1]]
            after = shown[trace.places[end]] if end < count else trace.after
            text, seen, step = self.changes.text(values, places[first:end], templates[first:end], seen, step,
                                                 after, last_datapath or end < count)
            times = (starts[first:end, None] + self.offset_table[boundaries[first:end]]).ravel().tolist()
            writer.stream.write(text % tuple(times))
        self._settle(emu, seen, step, int(starts[-1]))
        self.cycles_written += count

    def _turn_from(self, boundary: int) -> list[int]:
        """The boundaries of a turn of the ring, in order from ``boundary``."""
        order = [boundary]
        while self.cycles[order[-1]][0] != boundary:
            order.append(self.cycles[order[-1]][0])
        return order

    def _settle(self, emu, seen: tuple, step: int, now: int) -> None:
        """The recorder's and writer's state as the stepping path would have left it."""
        recorder = self.recorder
        values = recorder.writer.values
        for var, value in zip(recorder.datapath_vars, seen):
            values[var] = value
        recorder.seen = seen
        values[recorder.step] = step
        recorder.lit = lit = recorder.phase_lit[emu.phase_index - 1]
        for stage, var in enumerate(recorder.stages, start=1):
            values[var] = int(stage in lit)
        recorder.writer.now = recorder.writer.written_now = now

