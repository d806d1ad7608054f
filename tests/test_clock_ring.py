"""The clock generator's phase table, simulated time and the ring's skip-ahead.

Clock arithmetic here is common practice (no source): period = sum of the
phase durations of one turn, frequency = pulses per turn / period, duty
cycle = time high / period.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu
from emu.engine import Ring

MACHINES = {
    "ref8": emu.load_machine("ref8"),
    "acc12": emu.load_machine(Path(__file__).parent / "machines" / "acc12.toml"),
}

SIX_HERTZ = """
[machine]
name = "six"
data_bits = 4
address_bits = 4

[registers]
pc = 4

[internal]
ir = 4

[flags]
z = "zero"

[operands]

[assembler]
pause = "stop"

[clock]
stages = 2

[[clock.phase]]
name = "high"
level = 1
ms = 83
ring = [1]

[[clock.phase]]
name = "low"
level = 0
ms = 83
ring = [2]
hold = true

[fetch]
steps = ["ir <- mem[pc]; pc <- pc + 1"]

[[instruction]]
syntax = "idle"
encoding = ["0000"]
steps = []

[[instruction]]
syntax = "stop"
encoding = ["1111"]
steps = ["halt"]
"""


class EdgeTimes(emu.Observer):
    """Records the simulated time of every clock edge the generator makes."""

    def __init__(self):
        self.rising: list[int] = []
        self.falling: list[int] = []

    def edge(self, emu_, level):
        (self.rising if level else self.falling).append(emu_.time_ns)


def measured_edges(machine, cycles: int) -> EdgeTimes:
    emulator = emu.Emulator(machine)
    edges = EdgeTimes()
    emulator.observe(edges)
    emulator.run(max_cycles=cycles)
    assert emulator.cycles == cycles
    return edges


# ----- 83 ms high, 83 ms low ---------------------------------------------------------------

@pytest.mark.parametrize("watched", [False, True])
def test_83_ms_high_and_low_is_about_6_hz_and_6_cycles_take_about_a_second(watched):
    machine = emu.machine_from_text(SIX_HERTZ, "six.toml")
    assert machine.cycle_ns == 166_000_000  # about 167 ms
    assert machine.nominal_hz == pytest.approx(6.0, rel=0.01)
    emulator = emu.Emulator(machine)
    if watched:
        emulator.observe(emu.Observer())
    stop = emulator.run(max_cycles=6)
    assert (stop.kind, emulator.cycles, emulator.instructions) == ("cycle_limit", 6, 6)
    assert emulator.sim_seconds == pytest.approx(1.0, rel=0.01)


def test_83_ms_pulses_are_83_ms_high_every_166_ms():
    edges = measured_edges(emu.machine_from_text(SIX_HERTZ, "six.toml"), 6)
    assert [f - r for r, f in zip(edges.rising, edges.falling)] == [83_000_000] * 6
    assert np.diff(edges.rising).tolist() == [166_000_000] * 5


# ----- the two machines' clocks ----------------------------------------------------------------

def test_ref8_clock_is_5_hz_with_a_50_percent_duty_cycle():
    machine = MACHINES["ref8"]
    assert machine.nominal_hz == pytest.approx(5.0)
    high = sum(p.duration_ns for p in machine.phases if p.level == 1)
    assert high / machine.cycle_ns == pytest.approx(0.5)
    # ref8 reference, "Clock, halts and the panel": a hold point in every low interval
    assert machine.pulses_per_turn == 1 and any(p.hold for p in machine.phases if p.level == 0)
    edges = measured_edges(machine, 10)
    assert [f - r for r, f in zip(edges.rising, edges.falling)] == [100_000_000] * 10
    assert np.diff(edges.rising).tolist() == [200_000_000] * 9
    assert edges.falling[-1] == pytest.approx(2.0e9)  # 10 cycles at 5 Hz


def test_acc12_clock_is_10_hz_with_two_pulses_per_turn():
    machine = MACHINES["acc12"]
    assert machine.pulses_per_turn == 2
    assert machine.nominal_hz == pytest.approx(10.0)
    edges = measured_edges(machine, 20)
    assert len(edges.rising) == len(edges.falling) == 20
    assert set(f - r for r, f in zip(edges.rising, edges.falling)) == {40_000_000}
    assert edges.falling[-1] == pytest.approx(2.0e9)  # 20 cycles at 10 Hz


@pytest.mark.parametrize("name", list(MACHINES))
@settings(max_examples=25, deadline=None)
@given(cycles=st.integers(1, 3000))
def test_fast_and_watched_runs_reach_the_same_time(name, cycles):
    machine = MACHINES[name]
    fast, watched = emu.Emulator(machine), emu.Emulator(machine)
    watched.observe(emu.Observer())
    fast.run(max_cycles=cycles)
    watched.run(max_cycles=cycles)
    assert fast.cycles == watched.cycles == cycles
    assert (fast.time_ns, fast.phase_index) == (watched.time_ns, watched.phase_index)


# ----- Ring.skip_cycles ----------------------------------------------------------------------------

class TableSource:
    """An irregular clock: each turn's durations from a fixed table, in order."""

    def __init__(self, phases: int, seed: int):
        rng = np.random.default_rng(seed)
        self.rows = rng.integers(1_000_000, 90_000_000, size=(5000, phases), dtype=np.int64)
        self.next = 0

    def turns(self, k: int):
        rows = self.rows[self.next:self.next + k]
        self.next += k
        return rows


def ring_at(machine, boundary: int, seed: int | None) -> Ring:
    ring = Ring(machine)
    if seed is not None:
        ring.set_source(TableSource(len(machine.phases), seed))
    phases = machine.phases
    while ring.index != ring.boundaries[boundary]:  # run to the wanted boundary
        ring.run_phase()
    assert phases[ring.index - 1].level == 1 and phases[ring.index].level == 0
    return ring


def run_cycles_phase_by_phase(ring: Ring, cycles: int) -> None:
    phases = ring.phases
    while cycles:
        level = phases[ring.index].level
        ring.run_phase()
        if level == 1 and phases[ring.index].level == 0:
            cycles -= 1


@pytest.mark.parametrize("name", list(MACHINES))
@settings(max_examples=80, deadline=None)
@given(data=st.data(), cycles=st.integers(0, 2000), seed=st.one_of(st.none(), st.integers(0, 2**16)))
def test_skip_cycles_equals_running_phase_by_phase(name, data, cycles, seed):
    machine = MACHINES[name]
    boundary = data.draw(st.integers(0, len(Ring(machine).boundaries) - 1), label="boundary")
    skipped, stepped = ring_at(machine, boundary, seed), ring_at(machine, boundary, seed)
    skipped.skip_cycles(cycles)
    run_cycles_phase_by_phase(stepped, cycles)
    assert skipped.state() == stepped.state()
    if seed is not None:
        assert skipped.source.next == stepped.source.next  # same turns drawn


@pytest.mark.parametrize("name", list(MACHINES))
def test_nominal_time_is_whole_turns_of_the_table(name):
    machine = MACHINES[name]
    ring = Ring(machine)
    start = ring.time_ns
    ring.skip_cycles(machine.pulses_per_turn * 1000)
    assert ring.time_ns - start == 1000 * machine.cycle_ns
    assert ring.index == Ring(machine).index


def test_ring_boundaries_follow_the_falling_edges():
    assert Ring(MACHINES["ref8"]).boundaries == (2,)  # phase C, after A and B high
    assert Ring(MACHINES["acc12"]).boundaries == (1, 4)  # G1 and G2
