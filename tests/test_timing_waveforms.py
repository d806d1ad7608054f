"""Waveforms read back with an independent parser, and wear counts against them.

The dumps are written with pyvcd and read with vcdvcd (a separate VCD
parser from PyPI); both sides are compared with a plain trace of the
engine's observer events.
"""

import os
import random

import pytest
from vcdvcd import VCDVCD

from emu import Emulator, Observer, load_machine
from emu.timing import control_lines, count_wear, record_vcd, spread_source
from emu.timing import signal_name

MACHINES = {name: load_machine(name) for name in ("ref8", "tests/machines/acc12.toml", "tests/machines/wire8.toml")}
"""wire8 names its ring stages and its control lines, some of them gated."""


class Trace(Observer):
    """What the engine reports, with simulated times, and nothing more."""

    def __init__(self):
        self.clock, self.ring, self.pulses, self.pc = [], [], [], []
        self.rise = None

    def edge(self, emu, level):
        self.clock.append((emu.time_ns, level))
        if level:
            self.rise = emu.time_ns

    def phase(self, emu, index):
        self.ring.append((emu.time_ns, emu.machine.phases[index].ring))

    def hold(self, emu, frozen):
        self.ring.append((emu.time_ns, emu.machine.phases[emu.phase_index].ring))

    def microstep(self, emu, step, lines):
        self.pulses.append((self.rise, emu.time_ns, lines))
        self.pc.append((emu.time_ns, emu.pc))

    def panel(self, emu, action):
        self.pc.append((emu.time_ns, emu.pc))


def pause_words(machine):
    ins = next(i for i in machine.instructions if i.mnemonic == machine.pause and not i.operands)
    return ins.encode({})


def scenario(emu, kind, seed):
    """Drive the emulator: a random image run for a while, or a halt, steps and a resume."""
    machine = emu.machine
    rnd = random.Random(seed)
    if kind == "random":
        emu.load([(0, [rnd.randrange(1 << machine.data_bits) for _ in range(96)])])
        emu.run(max_cycles=150)
    else:
        emu.load([(0, [0] * 3 + pause_words(machine))])
        assert emu.run(max_cycles=500).kind == "halted"
        for _ in range(3):
            assert emu.press_step()
        emu.press_resume()
        emu.set_switch_run(False)
        emu.run(max_cycles=40)
        emu.press_step()
        emu.set_switch_run(True)
        emu.press_reset()
        emu.run(max_cycles=20)


def transitions(points):
    """(time, value) pairs with repeats of the same value dropped; value 0 before the first."""
    result, last = [], 0
    for time, value in points:
        if value != last:
            result.append((time, value))
            last = value
    return result


def from_vcd(vcd, name):
    """(time in ns, value) of every change after time 0; the dump's own ``$timescale`` read by vcdvcd."""
    unit = int(vcd.timescale["timescale"] * 10 ** 9)
    return [(t * unit, int(v, 2)) for t, v in vcd[name].tv if t > 0]


def record(name, kind, seed, tmp_path, spread=False):
    machine = MACHINES[name]
    emu = Emulator(machine)
    if spread:
        emu.clock_source = spread_source(machine, seed)
    trace = Trace()
    emu.observe(trace)
    path = tmp_path / "run.vcd"
    with record_vcd(emu, path), count_wear(emu) as wear:
        scenario(emu, kind, seed)
    return emu, trace, wear, VCDVCD(str(path)), path


CASES = [(name, kind, seed, spread) for name in MACHINES for kind, seed, spread in
         (("random", 1, False), ("random", 2, True), ("halt", 3, False), ("halt", 4, True))
         if not spread or MACHINES[name].timing is not None]
"""A spread clock needs the parts of the ring (``[timing]``): wire8 has none."""


@pytest.mark.parametrize("name, kind, seed, spread", CASES)
def test_the_clock_in_the_dump_has_the_traced_edges(name, kind, seed, spread, tmp_path):
    emu, trace, _wear, vcd, _path = record(name, kind, seed, tmp_path, spread)
    top = emu.machine.name
    assert len(trace.clock) > 20
    assert from_vcd(vcd, f"{top}.clock") == transitions(trace.clock)


@pytest.mark.parametrize("name, kind, seed, spread", CASES)
def test_ring_stages_and_control_lines_in_the_dump_follow_the_trace(name, kind, seed, spread, tmp_path):
    emu, trace, _wear, vcd, _path = record(name, kind, seed, tmp_path, spread)
    machine, top = emu.machine, emu.machine.name
    start_ring = machine.phases[Emulator(machine).phase_index].ring
    for stage in range(1, machine.ring_stages + 1):
        lit = [(0, int(stage in start_ring))] + [(t, int(stage in ring)) for t, ring in trace.ring]
        expected = transitions(lit)
        if expected and expected[0][0] == 0:
            expected = expected[1:]
        assert from_vcd(vcd, f"{top}.ring.{machine.stage_signal(stage)}") == expected
    for line in control_lines(machine):
        edges = []
        for rise, fall, lines in trace.pulses:
            if line in lines:
                edges += [(rise, 1), (fall, 0)]
        assert from_vcd(vcd, f"{top}.lines.{signal_name(line)}") == edges


@pytest.mark.parametrize("name, kind, seed, spread", CASES)
def test_registers_in_the_dump_follow_the_trace(name, kind, seed, spread, tmp_path):
    emu, trace, _wear, vcd, _path = record(name, kind, seed, tmp_path, spread)
    machine, top = emu.machine, emu.machine.name
    pc = machine.program_counter
    assert from_vcd(vcd, f"{top}.registers.{pc}") == transitions(trace.pc)
    for register in machine.registers:
        final = int(vcd[f"{top}.registers.{register}"].tv[-1][1], 2)
        assert final == emu.get(register)


def test_hold_latch_and_switch_are_in_the_dump(tmp_path):
    emu, trace, _wear, vcd, _path = record("ref8", "halt", 3, tmp_path)
    latch = from_vcd(vcd, "ref8.halt_latch")
    assert [v for _t, v in latch] == [1, 0, 1]  # halt, resume, halt again after the reset
    assert [v for _t, v in from_vcd(vcd, "ref8.run_switch")] == [0, 1]
    hold = [v for _t, v in from_vcd(vcd, "ref8.hold_line")]
    assert hold[0] == 1 and hold.count(1) >= 2
    assert int(vcd["ref8.step"].tv[-1][1], 2) == emu.sequencer[1]


@pytest.mark.parametrize("name, kind, seed, spread", CASES)
def test_wear_counts_equal_the_rising_edges_in_the_dump(name, kind, seed, spread, tmp_path):
    emu, trace, wear, vcd, _path = record(name, kind, seed, tmp_path, spread)
    machine, top = emu.machine, emu.machine.name
    for stage in range(1, machine.ring_stages + 1):
        rises = sum(1 for _t, v in from_vcd(vcd, f"{top}.ring.{machine.stage_signal(stage)}") if v == 1)
        assert wear.counts[machine.stage_relay(stage)] == rises
    for line in control_lines(machine):
        rises = sum(1 for _t, v in from_vcd(vcd, f"{top}.lines.{signal_name(line)}") if v == 1)
        assert wear.counts[line] == rises
    assert wear.pulses == sum(1 for _t, v in from_vcd(vcd, f"{top}.clock") if v == 1)
    assert sum(wear.counts.values()) > 0


@pytest.mark.parametrize("spread, unit, magnitude", [(False, "ms", 10), (True, "ns", 1)])
def test_the_dump_is_in_the_largest_unit_that_fits_the_clock(spread, unit, magnitude, tmp_path):
    """ref8's phases are whole tens of milliseconds (60, 40, 50, 50 in ref8.toml), so its times are
    whole units of 10 ms, a $timescale IEEE 1364-2005 §18.2.3.7 allows (1, 10 or 100 of s, ms, us,
    ns...); an irregular clock draws whole nanoseconds."""
    emu, trace, _wear, vcd, path = record("ref8", "random", 1, tmp_path, spread)
    assert (vcd.timescale["unit"], vcd.timescale["magnitude"]) == (unit, magnitude)
    rises = [t for t, v in from_vcd(vcd, "ref8.clock") if v == 1]
    if not spread:
        assert rises[1] - rises[0] == emu.machine.cycle_ns == 200_000_000
        assert f"\n#{rises[0] // 10_000_000}\n" in path.read_text()
    assert "$date" not in path.read_text()


def test_a_dump_appears_whole_or_not_at_all(tmp_path):
    emu = Emulator(MACHINES["ref8"])
    path = tmp_path / "stopped.vcd"
    with pytest.raises(KeyboardInterrupt):
        with record_vcd(emu, path):
            emu.run(max_cycles=5)
            raise KeyboardInterrupt
    assert VCDVCD(str(path)).endtime * 10_000_000 == emu.time_ns > 0
    assert os.listdir(tmp_path) == ["stopped.vcd"]
    assert not emu._observers

    with pytest.raises(FileNotFoundError):
        with record_vcd(emu, tmp_path / "no-such-folder" / "x.vcd"):
            emu.run(max_cycles=5)
    assert sorted(os.listdir(tmp_path)) == ["stopped.vcd"]


def _endless_loop(emu):
    """ref8 words of ``top: jmp top`` (encoding from `relaybench isa`): it never halts."""
    import asm
    program = asm.assemble_text("top: jmp top\n", emu.machine)
    emu.load(program.segments)
    emu.set_switch_run(True)


def test_a_window_records_exactly_its_cycles(tmp_path):
    emu = Emulator(MACHINES["ref8"])
    _endless_loop(emu)
    path = tmp_path / "window.vcd"
    with record_vcd(emu, path, start=100, cycles=40):
        emu.run(max_cycles=500)
    rises = [t for t, v in from_vcd(VCDVCD(str(path)), "ref8.clock") if v == 1]
    cycle = emu.machine.cycle_ns
    assert len(rises) == 40
    assert rises[0] // cycle == 100 and rises[-1] // cycle == 139   # one rise per cycle, cycles 100…139


def test_a_window_states_its_values_where_it_opens_and_ends_where_it_closes(tmp_path):
    """Read back by vcdvcd (PyPI): the initial values are dated at the window's first cycle, not
    at 0, and nothing is dated after its last cycle although the run went on."""
    emu = Emulator(MACHINES["ref8"])
    _endless_loop(emu)
    path = tmp_path / "window.vcd"
    with record_vcd(emu, path, start=100, cycles=40):
        emu.run(max_cycles=500)
    cycle = emu.machine.cycle_ns
    dump = VCDVCD(str(path))
    unit = round(dump.timescale["timescale"] * 10 ** 9)
    times = sorted({t * unit for signal in dump.signals for t, _v in dump[signal].tv})
    assert times[0] == 100 * cycle                  # $dumpvars at the window's start
    assert dump.endtime * unit <= 140 * cycle < emu.time_ns


def test_a_window_the_run_never_reaches_is_said_and_holds_the_end_state(tmp_path):
    emu = Emulator(MACHINES["ref8"])
    import asm
    emu.load(asm.assemble_text("  li r0, 7\n  halt\n", emu.machine).segments)
    said = []
    path = tmp_path / "late.vcd"
    with record_vcd(emu, path, start=10_000, cycles=40, warn=said.append):
        emu.run(max_cycles=500)
    assert said == [f"the run ended at cycle {emu.cycles:,}, before the waveform's window opened "
                    f"(cycle 10,000): the file holds only the state at the end"]
    dump = VCDVCD(str(path))
    unit = round(dump.timescale["timescale"] * 10 ** 9)
    assert [(t * unit, int(v, 2)) for t, v in dump["ref8.registers.r0"].tv] == [(emu.time_ns, 7)]   # not at 0


def test_a_large_window_is_announced_with_an_estimate(tmp_path, monkeypatch):
    """Before: no word before writing gigabytes (a full dump of a long program is 1.68 GB)."""
    from emu.timing import _vcd
    monkeypatch.setattr(_vcd, "LARGE_BYTES", 50_000)
    emu = Emulator(MACHINES["ref8"])
    _endless_loop(emu)
    said = []
    path = tmp_path / "big.vcd"
    with record_vcd(emu, path, cycles=3_000, warn=said.append):
        emu.run(max_cycles=3_000)
    [message] = said
    estimate_kb = float(message.split("about ")[1].split(" kB")[0])
    assert message.startswith("the waveform will be about ")
    assert estimate_kb == pytest.approx(path.stat().st_size / 1e3, rel=0.2)   # a loop: every cycle alike


def test_a_recording_without_a_window_warns_when_it_passes_the_size(tmp_path, monkeypatch):
    from emu.timing import _vcd
    monkeypatch.setattr(_vcd, "LARGE_BYTES", 20_000)
    emu = Emulator(MACHINES["ref8"])
    _endless_loop(emu)
    said = []
    with record_vcd(emu, tmp_path / "long.vcd", warn=said.append) as window:
        emu.run(max_cycles=2_000)
    assert len(said) == 1
    assert said[0].startswith("the waveform has passed 20 kB after ") and "--vcd-from and --vcd-cycles" in said[0]
    assert window.written > 20_000


def test_run_says_the_partial_waveform_was_kept_after_ctrl_c(tmp_path, capsys, monkeypatch):
    from cli_support import cli, write
    from emu.commands import run
    real = run.run_loaded

    def interrupted(program, machine, **kwargs):
        kwargs["emulator"].run(max_cycles=50)
        raise KeyboardInterrupt

    monkeypatch.setattr(run, "run_loaded", interrupted)
    prog = write(tmp_path, "loop.asm", "top: jmp top\n")
    code, _out, err = cli(capsys, "run", prog, "--vcd", tmp_path / "cut.vcd")
    assert code == 130
    assert err.splitlines()[-1] == f"relaybench: the waveform up to the interruption was kept in {tmp_path / 'cut.vcd'}"
    assert VCDVCD(str(tmp_path / "cut.vcd")).endtime > 0
    assert real is not interrupted


def test_vcd_window_options_need_vcd(capsys, tmp_path):
    from cli_support import cli, write
    prog = write(tmp_path, "p.asm", "halt\n")
    code, _out, err = cli(capsys, "run", prog, "--vcd-cycles", "10")
    assert code == 2 and "only with --vcd FILE" in err
