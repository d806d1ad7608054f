"""Waveforms: an observer that writes a value change dump (IEEE 1364) of a run.

The dump is in simulated time, in the largest unit the standard allows
(1, 10 or 100 of s, ms, us, ns) that every time of the run is a whole
number of (``fitted_unit_ns``), and shows what a builder would
put a logic analyser on: the clock, each ring stage, the hold line, the
halt latch, the RUN/STOP switch, the sequencer step, every control line of
the machine (high while the pulse that drives it lasts; a gated line only
on a pulse where its condition let it through) and every register and
flag, named as the machine file names them. The file is written beside its final name and renamed into place
when the recording ends, so a failure never leaves half of one.

A full dump of a long program runs to gigabytes, so a recording can be a
window (from a cycle, for a number of cycles), and it warns, with an
estimate, before it grows past ``LARGE_BYTES``.
"""

from __future__ import annotations

import math
import re
from contextlib import contextmanager

from .. import Emulator, Observer
from ..description import Machine
from ..files import atomic_output
from ..formatting import size_text
from ._vcd_trace import TracedCycles

__all__ = ["LARGE_BYTES", "VcdRecorder", "VcdWindow", "record_vcd", "control_lines", "fitted_unit_ns", "signal_name"]

LARGE_BYTES = 100_000_000
"""Past about this size a waveform is more than a viewer opens comfortably: say so."""
_SAMPLE_CYCLES = 1_000
"""Cycles recorded before the size of a whole window is estimated from them."""


def control_lines(machine: Machine) -> list[str]:
    """Every control line some micro-step of the machine drives, in first-use order."""
    return machine.control_lines()


_UNITS = ((10 ** 9, "s"), (10 ** 6, "ms"), (10 ** 3, "us"), (1, "ns"))


def fitted_unit_ns(emu: Emulator) -> int:
    """The time unit of a dump starting now: 1, 10 or 100 of a unit of IEEE 1364-2005
    §18.2.3.7 (``$timescale``), the largest that divides the present time and every phase
    of the nominal clock, and so every time the run reaches. 1 ns on an irregular clock,
    whose draws are whole nanoseconds of any size."""
    if emu.clock_source is not None:
        return 1
    common = math.gcd(emu.time_ns, emu.ring.manual_pulse_ns, *(p.duration_ns for p in emu.machine.phases))
    for size, _name in _UNITS:
        for number in (100, 10, 1):
            if common % (number * size) == 0:
                return number * size
    return 1


def _timescale_text(unit_ns: int) -> str:
    for size, name in _UNITS:
        if unit_ns % size == 0:
            return f"{unit_ns // size} {name}"
    raise ValueError(unit_ns)


class _DumpWriter:
    """Value changes as VCD text (IEEE 1364-2005 §18.2), written straight to a stream.

    As a dump is read: the header (``$timescale``, nested ``$scope module``
    with their ``$var``s, ``$enddefinitions``), then ``#0`` and ``$dumpvars``
    with every initial value, then each later time ``#t`` followed by the
    values that changed at it: ``0!``/``1!`` for a 1-bit wire, ``b1010 !``
    for a wider one. A change to the value a variable already has is left
    out; changes made at the first time before any later one set the initial
    values (as pyvcd, which wrote the dumps before, does). The first time is
    when recording began: 0 from power-on, later for a window.
    """

    def __init__(self, stream, unit_ns: int, comment: str, start_ns: int = 0):
        self.stream, self.unit, self.comment = stream, unit_ns, comment
        self.first = start_ns // unit_ns
        """The time the dump starts at: its initial values are stated there, not at 0."""
        self.declared: list[tuple[str, str, str, int, str]] = []
        self.values: list[int] = []
        self.wide: list[bool] = []
        self.codes: list[str] = []
        self.scalars: list[tuple[str, str]] = []
        self.now = self.first
        self.written_now: int | None = None
        self.started = False
        self.out: list[str] = []

    def var(self, scope: str, name: str, kind: str, size: int, init: int) -> int:
        index = len(self.values)
        code, number = "", index
        while True:
            code += chr(33 + number % 94)
            number //= 94
            if not number:
                break
        self.declared.append((scope, name, kind, size, code))
        self.values.append(int(init))
        self.wide.append(size > 1)
        self.codes.append(code)
        self.scalars.append((f"0{code}", f"1{code}"))
        return index

    def _text(self, var: int, value: int) -> str:
        if self.wide[var]:
            return f"b{value:b} {self.codes[var]}"
        return self.scalars[var][value]

    def _start(self) -> None:
        self.started = True
        lines = [f"$comment {self.comment} $end", f"$timescale {_timescale_text(self.unit)} $end"]
        by_scope: dict[tuple[str, ...], list[str]] = {}
        for scope, name, kind, size, code in self.declared:
            by_scope.setdefault(tuple(scope.split(".")), []).append(f"$var {kind} {size} {code} {name} $end")
        open_scope: tuple[str, ...] = ()
        for scope in sorted(by_scope):
            shared = 0
            while shared < min(len(open_scope), len(scope)) and open_scope[shared] == scope[shared]:
                shared += 1
            lines += ["$upscope $end"] * (len(open_scope) - shared)
            lines += [f"$scope module {part} $end" for part in scope[shared:]]
            lines += by_scope[scope]
            open_scope = scope
        lines += ["$upscope $end"] * len(open_scope)
        lines += ["$enddefinitions $end", f"#{self.first}", "$dumpvars"]
        lines += [self._text(var, value) for var, value in enumerate(self.values)]
        lines.append("$end")
        self.written_now = self.first
        self.stream.write("\n".join(lines) + "\n")

    def change(self, var: int, time_ns: int, value: int) -> None:
        t = time_ns // self.unit
        if t > self.now:
            if not self.started:
                self._start()
            self.now = t
        if value == self.values[var]:
            return
        self.values[var] = value
        if not self.started:
            return
        if self.written_now != t:
            self.written_now = t
            self.out.append(f"#{t}")
        self.out.append(self._text(var, value))
        if len(self.out) > 4096:
            self.flush()

    def flush(self) -> None:
        if self.out:
            self.out.append("")
            self.stream.write("\n".join(self.out))
            self.out.clear()

    def close(self, time_ns: int | None) -> None:
        """Everything written, ending with the time the recording ended at (None: the last
        time a change came, for a window that closed before the run ended)."""
        t = self.now if time_ns is None else time_ns // self.unit
        if not self.started:
            self._start()
        if t > self.now:
            self.now = t
        if self.written_now != self.now:
            self.out.append(f"#{self.now}")
        self.flush()
        self.stream.flush()


def signal_name(text: str) -> str:
    """A control line name as a VCD identifier: ``load pc`` → ``load_pc``; a builder's name
    (letters, digits, ``-``, ``_``: ``ld-a``) stays as it is."""
    return re.sub(r"[^\w-]+", "_", text).strip("_")


class VcdRecorder(Observer):
    """Writes every change the engine reports to an open text stream.

    Built from the emulator so that the dump starts from its present state;
    attach it with ``emulator.observe`` (``record_vcd`` does all of that).
    """

    def __init__(self, emu: Emulator, stream, unit_ns: int | None = None):
        machine = emu.machine
        self.machine = machine
        self.unit_ns = fitted_unit_ns(emu) if unit_ns is None else unit_ns
        self.writer = writer = _DumpWriter(stream, self.unit_ns, f"relaybench waveform of machine {machine.name}",
                                           emu.time_ns)
        top = machine.name
        wire = lambda scope, name, init=0: writer.var(scope, name, "wire", 1, init)
        self.clock = wire(top, "clock")
        self.hold_line = wire(top, "hold_line", int(emu.hold_line))
        self.frozen = wire(top, "frozen", int(emu.frozen))
        self.halt_latch = wire(top, "halt_latch", int(emu.halt_latch))
        self.run_switch = wire(top, "run_switch", int(emu.switch_run))
        self.step = writer.var(top, "step", "integer", 8, emu.sequencer[1])
        self.lit = set(machine.phases[emu.phase_index].ring)
        self.stages = [wire(f"{top}.ring", machine.stage_signal(s), int(s in self.lit))
                       for s in range(1, machine.ring_stages + 1)]
        self.lines = {line: wire(f"{top}.lines", signal_name(line)) for line in control_lines(machine)}
        self.driving: tuple[str, ...] = ()
        self.registers = {name: writer.var(f"{top}.registers", name, "wire", reg.width, emu.get(name))
                          for name, reg in machine.registers.items()}
        self.flags = {name: wire(f"{top}.flags", name, emu.get(name)) for name in machine.flags}
        self.read = emu.reader([*machine.registers, *machine.flags])
        self.datapath_vars = [*self.registers.values(), *self.flags.values()]
        self.seen = self.read()
        self.phase_lit = [frozenset(p.ring) for p in machine.phases]
        self.traces: TracedCycles | None = None

    def close(self, emu: Emulator, ended: bool = True) -> None:
        """The dump ends at the emulator's time now, or (``ended`` False: a window that closed
        earlier) at the last change it saw."""
        self.writer.close(emu.time_ns if ended else None)

    # -- what changed

    def _ring(self, emu: Emulator) -> None:
        lit = self.phase_lit[emu.phase_index]
        if lit != self.lit:
            t = emu.time_ns
            for stage in self.lit ^ lit:
                self.writer.change(self.stages[stage - 1], t, int(stage in lit))
            self.lit = lit

    def _datapath(self, emu: Emulator) -> None:
        t, change = emu.time_ns, self.writer.change
        values = self.read()
        if values != self.seen:
            for var, old, new in zip(self.datapath_vars, self.seen, values):
                if old != new:
                    change(var, t, new)
            self.seen = values
        change(self.step, t, emu.sequencer[1])

    def _hold(self, emu: Emulator) -> None:
        t = emu.time_ns
        self.writer.change(self.hold_line, t, int(emu.hold_line))
        self.writer.change(self.frozen, t, int(emu.frozen))

    # -- the observer hooks

    def phase(self, emu, index):
        self._ring(emu)

    def edge(self, emu, level):
        t = emu.time_ns
        self.writer.change(self.clock, t, level)
        if level:
            self.driving = emu.driven_lines()
            self.writer.change(self.step, t, emu.sequencer[1])
        for line in self.driving:
            self.writer.change(self.lines[line], t, level)

    def microstep(self, emu, step, lines):
        self._datapath(emu)

    def hold(self, emu, frozen):
        self._ring(emu)
        self._hold(emu)

    def latch(self, emu, is_set):
        self.writer.change(self.halt_latch, emu.time_ns, int(is_set))
        self._hold(emu)

    def panel(self, emu, action):
        self.writer.change(self.run_switch, emu.time_ns, int(emu.switch_run))
        self._hold(emu)
        self._datapath(emu)

    def accepts_trace(self, emu):
        if self.traces is None:
            self.traces = TracedCycles(self, emu)
        return self.traces.accepts(emu)

    def traced(self, emu, trace, last_datapath=True):
        self.traces.write(emu, trace, last_datapath)


class _CountingStream:
    """A text stream that counts what is written through it."""

    def __init__(self, stream):
        self.stream, self.written = stream, 0

    def write(self, text: str) -> int:
        self.written += len(text)
        return self.stream.write(text)

    def __getattr__(self, name):
        return getattr(self.stream, name)


class VcdWindow(Observer):
    """Records cycles ``start`` … ``start + cycles - 1`` of a run (``cycles=None``: to the end).

    The dump begins with the machine's state as the window opens; before
    that, events are passed over. ``warn(message)`` is told once when the
    file will pass ``LARGE_BYTES``: with a window, as soon as its first
    cycles give an estimate of the whole; without one, when it gets there.
    """

    def __init__(self, emu: Emulator, stream, *, start: int = 0, cycles: int | None = None, warn=None,
                 unit_ns: int | None = None):
        self.stream = _CountingStream(stream)
        self.unit_ns = unit_ns
        self.start = emu.cycles + start
        self.end = None if cycles is None else self.start + cycles
        self.warn = warn
        self.recorder: VcdRecorder | None = None
        self.warned = False
        self._open_if_due(emu)

    @property
    def written(self) -> int:
        return self.stream.written

    def _open_if_due(self, emu) -> bool:
        """True while the window is open (opening it when its first cycle comes)."""
        cycle = emu.cycles
        if cycle < self.start or (self.end is not None and cycle >= self.end):
            return False
        if self.recorder is None:
            self.recorder = VcdRecorder(emu, self.stream, self.unit_ns)
        return True

    def _watch_size(self, emu) -> None:
        if self.warned or self.warn is None:
            return
        done = emu.cycles - self.start
        if self.end is not None and done >= _SAMPLE_CYCLES:
            estimate = self.written / done * (self.end - self.start)
            if estimate > LARGE_BYTES:
                self.warned = True
                self.warn(f"the waveform will be about {size_text(estimate)} "
                          f"({self.end - self.start:,} cycles at about {self.written / done:,.0f} bytes each)")
        elif self.end is None and self.written > LARGE_BYTES:
            self.warned = True
            self.warn(f"the waveform has passed {size_text(LARGE_BYTES)} after {done:,} cycles "
                      f"(about {self.written / max(done, 1):,.0f} bytes a cycle) and grows while the run "
                      f"goes on; --vcd-from and --vcd-cycles record a window")

    def close(self, emu: Emulator) -> None:
        if self.recorder is None:       # a window the run never reached: the state at the end, said so
            if self.warn is not None:
                self.warn(f"the run ended at cycle {emu.cycles:,}, before the waveform's window opened "
                          f"(cycle {self.start:,}): the file holds only the state at the end")
            self.recorder = VcdRecorder(emu, self.stream, self.unit_ns)
        self.recorder.close(emu, ended=self.end is None or emu.cycles <= self.end)

    def phase(self, emu, index):
        if self._open_if_due(emu):
            self.recorder.phase(emu, index)

    def edge(self, emu, level):
        if self._open_if_due(emu):
            self.recorder.edge(emu, level)
            if level:
                self._watch_size(emu)

    def microstep(self, emu, step, lines):
        if self._open_if_due(emu):
            self.recorder.microstep(emu, step, lines)

    def hold(self, emu, frozen):
        if self._open_if_due(emu):
            self.recorder.hold(emu, frozen)

    def latch(self, emu, is_set):
        if self._open_if_due(emu):
            self.recorder.latch(emu, is_set)

    def panel(self, emu, action):
        if self._open_if_due(emu):
            self.recorder.panel(emu, action)

    def accepts_trace(self, emu):
        return self._open_if_due(emu) and self.recorder.accepts_trace(emu)

    def traced(self, emu, trace):
        """The trace's last cycle may be the window's last: the stepping path reports its clock
        and lines falling but closes the window before the step's changes."""
        self.recorder.traced(emu, trace, self.end is None or emu.cycles < self.end)
        self._watch_size(emu)


@contextmanager
def record_vcd(emu: Emulator, path, *, start: int = 0, cycles: int | None = None, warn=None,
               unit_ns: int | None = None):
    """Record a waveform of whatever the emulator does inside the ``with`` block.

    ``start`` and ``cycles`` choose a window, counted from now (see
    ``VcdWindow``). The file appears at ``path`` when the block ends, also
    when it ends by an exception such as Ctrl-C: the waveform up to there
    is sound. ``unit_ns`` fixes the time unit (1 for a clock whose beat may change
    while recording); by default it fits the clock (``fitted_unit_ns``).
    """
    with atomic_output(path, text=True, keep_on_error=True) as stream:
        window = VcdWindow(emu, stream, start=start, cycles=cycles, warn=warn, unit_ns=unit_ns)
        emu.observe(window, start=window.start, end=window.end)
        try:
            yield window
        finally:
            emu.unobserve(window)
            window.close(emu)
