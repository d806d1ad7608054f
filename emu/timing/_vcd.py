"""Waveforms: an observer that writes a value change dump (IEEE 1364) of a run.

The dump is in simulated time (1 ns steps) and shows what a builder would
put a logic analyser on: the clock, each ring stage, the hold line, the
halt latch, the RUN/STOP switch, the sequencer step, every control line of
the machine (high while the pulse that drives it lasts) and every register
and flag. The file is written beside its final name and renamed into place
when the recording ends, so a failure never leaves half of one.
"""

from __future__ import annotations

import re
from contextlib import contextmanager

from vcd import VCDWriter

from .. import Emulator, Observer
from ..description import Machine
from ..files import atomic_output

__all__ = ["VcdRecorder", "record_vcd", "control_lines", "signal_name"]


def control_lines(machine: Machine) -> list[str]:
    """Every control line some micro-step of the machine drives, in first-use order."""
    return machine.control_lines()


def signal_name(text: str) -> str:
    """A control line name as a VCD identifier: ``load pc`` → ``load_pc``."""
    return re.sub(r"\W+", "_", text).strip("_")


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
        self.stages = [wire(f"{top}.ring", f"stage{s}", int(s in self.lit))
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
            self.driving = emu.current_step.control_lines
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


@contextmanager
def record_vcd(emu: Emulator, path):
    """Record a waveform of whatever the emulator does inside the ``with`` block.

    The file appears at ``path`` when the block ends, also when it ends by
    an exception such as Ctrl-C: the waveform up to there is sound.
    """
    with atomic_output(path, text=True, keep_on_error=True) as stream:
        recorder = VcdRecorder(emu, stream)
        emu.observe(recorder)
        try:
            yield recorder
        finally:
            emu.unobserve(recorder)
            recorder.close(emu)
