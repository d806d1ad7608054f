"""Waveforms of free cycles written from a trace are the phase-by-phase waveforms, byte for byte.

A recording alone lets the run take free cycles as one trace (no hook per
phase); attaching a second, plain observer forces the phase-by-phase path.
The phase-by-phase dump is itself checked against pyvcd and vcdvcd (PyPI)
in test_vcd_as_before, so the traced one is held to the same reference.
Every machine file of the project, random programs from its own
instruction table, halts resumed, windows and a fixed time unit.
"""

from __future__ import annotations

from typing import NamedTuple

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from vcdvcd import VCDVCD

import asm
from emu import Observer, load_machine
from emu.testing import programs
from emu.timing import record_vcd

from engine_support import MACHINE_FILES, MACHINES, boot

SETTINGS = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                           HealthCheck.function_scoped_fixture])


def drive(emu, cycles: int) -> None:
    """Run, resuming after every halt, then the switch to stop and back: free cycles between halts."""
    for _ in range(5):
        if emu.run(max_cycles=cycles).kind == "halted":
            emu.press_resume()
    emu.set_switch_run(False)
    emu.run(max_cycles=10)
    emu.press_step()
    emu.set_switch_run(True)
    emu.run(max_cycles=cycles)


class Dumped(NamedTuple):
    text: str
    traced_cycles: int
    counters: tuple
    """Where the emulator ended: cycles, instructions, time, sequencer, instruction address."""


def dump(machine, words, path, *, stepping: bool, run_cycles: int, **window) -> Dumped:
    emu = boot(machine, words, switches=0x5A & machine.data_mask, input_bytes=b"\x03\x41")
    if stepping:
        emu.observe(Observer())
    with record_vcd(emu, path, **window) as recording:
        drive(emu, run_cycles)
    traces = recording.recorder.traces
    return Dumped(path.read_text(), 0 if traces is None else traces.cycles_written,
                  (emu.cycles, emu.instructions, emu.time_ns, emu.sequencer, emu.instruction_address))


def straight_program(machine) -> list[int]:
    """Every instruction that neither halts nor jumps, once, filling up to half the memory."""
    words = [w for ins in machine.instructions if not ins.drives_halt and not ins.has_jumps
             for w in ins.encode({n: 1 if f.kind.is_register else max(f.kind.low, 0) for n, f in ins.fields.items()})]
    return words[:machine.memory_words // 2]


@pytest.mark.parametrize("name", sorted(MACHINES))
@SETTINGS
@given(data=st.data())
def test_a_traced_dump_is_the_phase_by_phase_dump(name, data, tmp_path):
    machine = MACHINES[name]
    words = data.draw(programs(machine))
    cycles = data.draw(st.integers(1, 400))
    window = data.draw(st.one_of(st.just({}), st.fixed_dictionaries(
        {"start": st.integers(0, 300), "cycles": st.integers(1, 300)})))
    if data.draw(st.booleans()):
        window["unit_ns"] = 1
    traced = dump(machine, words, tmp_path / "traced.vcd", stepping=False, run_cycles=cycles, **window)
    stepped = dump(machine, words, tmp_path / "stepped.vcd", stepping=True, run_cycles=cycles, **window)
    assert (traced.text, traced.counters) == (stepped.text, stepped.counters)


@pytest.mark.parametrize("name", ["ref8", "wire8", "skep"])
def test_a_long_run_is_traced_and_reads_back(name, tmp_path):
    """A loop with no halt for thousands of cycles takes the traced path, and vcdvcd (PyPI)
    reads the same signals from it as from the phase-by-phase dump."""
    machine = MACHINES[name]
    words = straight_program(machine)
    traced = dump(machine, words, tmp_path / "traced.vcd", stepping=False, run_cycles=3000)
    stepped = dump(machine, words, tmp_path / "stepped.vcd", stepping=True, run_cycles=3000)
    assert traced.traced_cycles > 2000
    assert (traced.text, traced.counters) == (stepped.text, stepped.counters)
    ours, theirs = VCDVCD(str(tmp_path / "traced.vcd")), VCDVCD(str(tmp_path / "stepped.vcd"))
    assert sum(len(ours[s].tv) for s in ours.signals) > 10_000
    assert {s: ours[s].tv for s in ours.signals} == {s: theirs[s].tv for s in theirs.signals}


@pytest.mark.parametrize("name, window", [("ref8", {}), ("acc12", {"start": 7, "cycles": 9_000}),
                                          ("skep", {"cycles": 9_001})])
def test_a_trace_longer_than_the_writer_takes_at_once_is_the_phase_by_phase_dump(name, window, tmp_path):
    """Thousands of cycles in one trace are written a slice at a time: the values, the sequencer's
    count and the times carry over from slice to slice, and a window may end inside the last."""
    machine = MACHINES[name]
    words = straight_program(machine)
    traced = dump(machine, words, tmp_path / "traced.vcd", stepping=False, run_cycles=10_000, **window)
    stepped = dump(machine, words, tmp_path / "stepped.vcd", stepping=True, run_cycles=10_000, **window)
    assert traced.traced_cycles > 8_900
    assert (traced.text, traced.counters) == (stepped.text, stepped.counters)


def test_a_register_too_wide_to_list_its_values_is_traced_the_same(tmp_path):
    """The texts of changes are kept in a table by value while every register's values fit one;
    a 24-bit register does not, and its machine's dump is still the phase-by-phase one."""
    source = MACHINE_FILES["acc12"].read_text()
    assert "[internal]\nir = 12\n" in source
    path = tmp_path / "acc12_wide.toml"
    path.write_text(source.replace("[internal]\nir = 12\n", "[internal]\nir = 12\nscratch = 24\n"))
    machine = load_machine(path)
    words = straight_program(machine)
    traced = dump(machine, words, tmp_path / "traced.vcd", stepping=False, run_cycles=2_000)
    stepped = dump(machine, words, tmp_path / "stepped.vcd", stepping=True, run_cycles=2_000)
    assert traced.traced_cycles > 1_500
    assert "$var wire 24" in traced.text
    assert (traced.text, traced.counters) == (stepped.text, stepped.counters)


def test_a_trace_cut_by_ctrl_c_is_in_the_dump_up_to_the_last_cycle_counted(tmp_path):
    """Ctrl-C lands inside a traced stretch (here: a port read raises it, as a signal would
    between two statements); the cycles it had counted are still written, so the dump ends
    at the emulator's time with one rising clock edge for each of its cycles."""
    machine = MACHINES["ref8"]
    program = asm.assemble_text("top: in r0, 1\n  inc r1\n  add r2, r0\n  jmp top\n", machine)
    emu = boot(machine, program.flat(), input_bytes=bytes(range(256)) * 8)
    reads = []

    def interrupt_at_the_thousandth(port, device):
        reads.append(port)
        if len(reads) == 1_000:
            raise KeyboardInterrupt

    emu.ports.listen(interrupt_at_the_thousandth)
    path = tmp_path / "cut.vcd"
    with pytest.raises(KeyboardInterrupt), record_vcd(emu, path) as recording:
        emu.run(max_cycles=100_000)
    assert recording.recorder.traces.cycles_written > 5_000
    waves = VCDVCD(str(path))
    rises = [t for t, level in waves["ref8.clock"].tv if level == "1"]
    assert waves.endtime * 10_000_000 == emu.time_ns   # the unit: 10 ms
    assert len(rises) == emu.cycles
