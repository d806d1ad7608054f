"""Waveforms: an observer that writes a value change dump (IEEE 1364) of a run.

The dump is in simulated time (1 ns steps) and shows what a builder would
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

import re
from contextlib import contextmanager

from vcd import VCDWriter

from .. import Emulator, Observer
from ..description import Machine
from ..files import atomic_output
from ..formatting import size_text

__all__ = ["LARGE_BYTES", "VcdRecorder", "VcdWindow", "record_vcd", "control_lines", "signal_name"]

LARGE_BYTES = 100_000_000
"""Past about this size a waveform is more than a viewer opens comfortably: say so."""
_SAMPLE_CYCLES = 1_000
"""Cycles recorded before the size of a whole window is estimated from them."""


def control_lines(machine: Machine) -> list[str]:
    """Every control line some micro-step of the machine drives, in first-use order."""
    return machine.control_lines()


def signal_name(text: str) -> str:
    """A control line name as a VCD identifier: ``load pc`` → ``load_pc``; a builder's name
    (letters, digits, ``-``, ``_``: ``ld-a``) stays as it is."""
    return re.sub(r"[^\w-]+", "_", text).strip("_")


class VcdRecorder(Observer):
    """Writes every change the engine reports to an open text stream.

    Built from the emulator so that the dump starts from its present state;
    attach it with ``emulator.observe`` (``record_vcd`` does all of that).
    """

    def __init__(self, emu: Emulator, stream):
        machine = emu.machine
        self.machine = machine
        self.writer = writer = VCDWriter(stream, timescale="1 ns", date="",
                                         comment=f"relaybench waveform of machine {machine.name}")
        top = machine.name
        wire = lambda scope, name, init=0: writer.register_var(scope, name, "wire", size=1, init=init)
        self.clock = wire(top, "clock")
        self.hold_line = wire(top, "hold_line", int(emu.hold_line))
        self.frozen = wire(top, "frozen", int(emu.frozen))
        self.halt_latch = wire(top, "halt_latch", int(emu.halt_latch))
        self.run_switch = wire(top, "run_switch", int(emu.switch_run))
        self.step = writer.register_var(top, "step", "integer", size=8, init=emu.sequencer[1])
        self.lit = set(machine.phases[emu.phase_index].ring)
        self.stages = [wire(f"{top}.ring", machine.stage_signal(s), int(s in self.lit))
                       for s in range(1, machine.ring_stages + 1)]
        self.lines = {line: wire(f"{top}.lines", signal_name(line)) for line in control_lines(machine)}
        self.driving: tuple[str, ...] = ()
        self.registers = {name: writer.register_var(f"{top}.registers", name, "wire", size=reg.width,
                                                    init=emu.get(name))
                          for name, reg in machine.registers.items()}
        self.flags = {name: wire(f"{top}.flags", name, emu.get(name)) for name in machine.flags}

    def close(self, emu: Emulator) -> None:
        self.writer.close(emu.time_ns)

    # -- what changed

    def _ring(self, emu: Emulator) -> None:
        lit = set(self.machine.phases[emu.phase_index].ring)
        t = emu.time_ns
        for stage in self.lit ^ lit:
            self.writer.change(self.stages[stage - 1], t, int(stage in lit))
        self.lit = lit

    def _datapath(self, emu: Emulator) -> None:
        t, change = emu.time_ns, self.writer.change
        for name, var in self.registers.items():
            change(var, t, emu.get(name))
        for name, var in self.flags.items():
            change(var, t, emu.get(name))
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

    def __init__(self, emu: Emulator, stream, *, start: int = 0, cycles: int | None = None, warn=None):
        self.stream = _CountingStream(stream)
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
            self.recorder = VcdRecorder(emu, self.stream)
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
        if self.recorder is None:
            self.recorder = VcdRecorder(emu, self.stream)   # a window the run never reached: an empty dump
        self.recorder.close(emu)

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


@contextmanager
def record_vcd(emu: Emulator, path, *, start: int = 0, cycles: int | None = None, warn=None):
    """Record a waveform of whatever the emulator does inside the ``with`` block.

    ``start`` and ``cycles`` choose a window, counted from now (see
    ``VcdWindow``). The file appears at ``path`` when the block ends, also
    when it ends by an exception such as Ctrl-C: the waveform up to there
    is sound.
    """
    with atomic_output(path, text=True, keep_on_error=True) as stream:
        window = VcdWindow(emu, stream, start=start, cycles=cycles, warn=warn)
        emu.observe(window)
        try:
            yield window
        finally:
            emu.unobserve(window)
            window.close(emu)
