"""The waveform writer gives the same value changes at the same times as pyvcd did.

The reference is the recorder as it was before the dump was written by
hand: the same observer hooks feeding pyvcd's ``VCDWriter`` (a VCD library
from PyPI) one change at a time, in nanoseconds. Both dumps of one run are
read back with vcdvcd (another PyPI parser) and every signal compared in
nanoseconds, on ref8, acc12, wire8 (named stages, gated lines) and an
irregular clock.
"""

from __future__ import annotations

import random

import pytest
from vcd import VCDWriter
from vcdvcd import VCDVCD

from emu import Emulator, Observer, load_machine
from emu.timing import control_lines, record_vcd, signal_name, spread_source

MACHINES = {name: load_machine(name) for name in ("ref8", "tests/machines/acc12.toml", "tests/machines/wire8.toml")}


class PyvcdRecorder(Observer):
    """Every change the engine reports, through pyvcd, in 1 ns steps."""

    def __init__(self, emu, stream):
        m = self.machine = emu.machine
        # initial values dated where recording begins (pyvcd's init_timestamp), as a window's are
        self.writer = w = VCDWriter(stream, timescale="1 ns", date="", init_timestamp=emu.time_ns)
        top = m.name
        wire = lambda scope, name, init=0: w.register_var(scope, name, "wire", size=1, init=init)
        self.clock = wire(top, "clock")
        self.hold_line = wire(top, "hold_line", int(emu.hold_line))
        self.frozen = wire(top, "frozen", int(emu.frozen))
        self.halt_latch = wire(top, "halt_latch", int(emu.halt_latch))
        self.run_switch = wire(top, "run_switch", int(emu.switch_run))
        self.step = w.register_var(top, "step", "integer", size=8, init=emu.sequencer[1])
        self.lit = set(m.phases[emu.phase_index].ring)
        self.stages = [wire(f"{top}.ring", m.stage_signal(s), int(s in self.lit)) for s in range(1, m.ring_stages + 1)]
        self.lines = {line: wire(f"{top}.lines", signal_name(line)) for line in control_lines(m)}
        self.driving = ()
        self.registers = {n: w.register_var(f"{top}.registers", n, "wire", size=r.width, init=emu.get(n))
                          for n, r in m.registers.items()}
        self.flags = {n: wire(f"{top}.flags", n, emu.get(n)) for n in m.flags}

    def _ring(self, emu):
        lit = set(self.machine.phases[emu.phase_index].ring)
        for stage in self.lit ^ lit:
            self.writer.change(self.stages[stage - 1], emu.time_ns, int(stage in lit))
        self.lit = lit

    def _datapath(self, emu):
        for name, var in {**self.registers, **self.flags}.items():
            self.writer.change(var, emu.time_ns, emu.get(name))
        self.writer.change(self.step, emu.time_ns, emu.sequencer[1])

    def _hold(self, emu):
        self.writer.change(self.hold_line, emu.time_ns, int(emu.hold_line))
        self.writer.change(self.frozen, emu.time_ns, int(emu.frozen))

    def phase(self, emu, index):
        self._ring(emu)

    def edge(self, emu, level):
        self.writer.change(self.clock, emu.time_ns, level)
        if level:
            self.driving = emu.driven_lines()
            self.writer.change(self.step, emu.time_ns, emu.sequencer[1])
        for line in self.driving:
            self.writer.change(self.lines[line], emu.time_ns, level)

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


def changes(path) -> dict[str, list[tuple[int, int]]]:
    """Every signal's (time in ns, value), read by vcdvcd with the dump's own timescale."""
    dump = VCDVCD(str(path))
    unit = int(dump.timescale["timescale"] * 10 ** 9)
    return {name: [(t * unit, int(v, 2)) for t, v in dump[name].tv] for name in dump.signals}


def drive(emu, seed):
    """A random image run with halts resumed, a STEP, the switch thrown: every kind of event."""
    machine = emu.machine
    rnd = random.Random(seed)
    emu.load([(0, [rnd.randrange(1 << machine.data_bits) for _ in range(64)])])
    for _ in range(4):
        if emu.run(max_cycles=300).kind == "halted":
            emu.press_step()
            emu.press_resume()
    emu.set_switch_run(False)
    emu.run(max_cycles=20)
    emu.press_step()
    emu.set_switch_run(True)
    emu.run(max_cycles=50)


@pytest.mark.parametrize("seed", [1, 2, 3])
@pytest.mark.parametrize("name, spread", [(name, spread) for name in sorted(MACHINES) for spread in (False, True)
                                          if not spread or MACHINES[name].timing is not None])
def test_the_dump_holds_the_changes_pyvcd_wrote(name, seed, spread, tmp_path):
    machine = MACHINES[name]
    emu = Emulator(machine)
    if spread:
        emu.clock_source = spread_source(machine, seed)
    ours, theirs = tmp_path / "ours.vcd", tmp_path / "theirs.vcd"
    with open(theirs, "w") as stream:
        reference = PyvcdRecorder(emu, stream)
        emu.observe(reference)
        with record_vcd(emu, ours):
            drive(emu, seed)
        reference.writer.close(emu.time_ns)
    got, wanted = changes(ours), changes(theirs)
    assert len(wanted) > 20 and sum(len(v) for v in wanted.values()) > 500
    assert got == wanted


class PyvcdWindow(Observer):
    """The reference window: watching the whole run, it passes over events outside
    cycles ``start`` … ``end - 1`` and opens its recorder at the first event inside."""

    def __init__(self, emu, stream, start, end):
        self.stream, self.start, self.end, self.recorder = stream, start, end, None

    def _due(self, emu):
        if not self.start <= emu.cycles < self.end:
            return None
        if self.recorder is None:
            self.recorder = PyvcdRecorder(emu, self.stream)
        return self.recorder

    def close(self, emu):
        if self.recorder is None:
            self.recorder = PyvcdRecorder(emu, self.stream)
        self.recorder.writer.close(emu.time_ns)


for _hook in ("phase", "edge", "microstep", "hold", "latch", "panel"):
    def _forward(self, emu, *args, _hook=_hook):
        recorder = self._due(emu)
        if recorder is not None:
            getattr(recorder, _hook)(emu, *args)
    setattr(PyvcdWindow, _hook, _forward)


@pytest.mark.parametrize("name", sorted(MACHINES))
@pytest.mark.parametrize("seed", [4, 5, 6, 7])
def test_a_window_holds_the_changes_of_a_dump_watching_the_whole_run(name, seed, tmp_path):
    """The window's observer is attached only when its first cycle comes (the run before
    it keeps the fast path) and taken off after its last; the reference watches throughout."""
    machine = MACHINES[name]
    rnd = random.Random(seed)
    start, cycles = rnd.randrange(1, 600), rnd.randrange(1, 200)
    ours, theirs = tmp_path / "ours.vcd", tmp_path / "theirs.vcd"
    watched = Emulator(machine)
    with open(theirs, "w") as stream:
        reference = PyvcdWindow(watched, stream, start, start + cycles)
        watched.observe(reference)
        drive(watched, seed)
        reference.close(watched)
    emu = Emulator(machine)
    with record_vcd(emu, ours, start=start, cycles=cycles):
        drive(emu, seed)
    assert not emu._observers
    assert changes(ours) == changes(theirs)
