"""The irregular clock: reproducible turns, and a run that differs only in time."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from emu import Emulator, MachineError, load_machine
from emu.timing import spread_source, timing_model

MACHINES = {name: load_machine(name) for name in ("ref8", "tests/machines/acc12.toml")}


@pytest.mark.parametrize("name", MACHINES)
def test_turns_have_one_duration_per_phase_in_nanoseconds(name):
    machine = MACHINES[name]
    turns = spread_source(machine, seed=1).turns(50)
    assert turns.shape == (50, len(machine.phases)) and turns.dtype == np.int64
    nominal = np.array([p.duration_ns for p in machine.phases])
    assert np.all(np.abs(turns / nominal - 1) < 0.6)
    assert len({tuple(row) for row in turns}) == 50


@given(seed=st.integers(0, 2**32), sizes=st.lists(st.integers(0, 7), min_size=1, max_size=6))
def test_turns_depend_on_the_count_not_on_how_they_are_asked_for(seed, sizes):
    machine = MACHINES["ref8"]
    pieces = [spread_source(machine, seed).turns(0)]
    source = spread_source(machine, seed)
    pieces += [source.turns(k) for k in sizes]
    assert np.array_equal(np.concatenate(pieces), spread_source(machine, seed).turns(sum(sizes)))


def test_one_seed_is_one_build_whose_turns_vary_around_it():
    source = spread_source(MACHINES["ref8"], seed=8)
    turns = source.turns(20_000)
    built = source.built_phase_ns
    assert turns.mean(axis=0) == pytest.approx(built, rel=2e-3)
    assert not np.array_equal(built, spread_source(MACHINES["ref8"], seed=9).built_phase_ns)
    model = timing_model(MACHINES["ref8"])
    mechanical = model.mechanical_times(model.nominal_values)
    assert np.all(turns.std(axis=0) < mechanical * model.jitter * 1e9)


def test_a_machine_without_timing_cannot_spread():
    import dataclasses
    with pytest.raises(MachineError, match=r"no \[timing\] section"):
        spread_source(dataclasses.replace(MACHINES["ref8"], timing=None), seed=1)


def _state(emu):
    machine = emu.machine
    return ({name: emu.get(name) for name in machine.registers} | {name: emu.get(name) for name in machine.flags},
            bytes(emu.memory) if isinstance(emu.memory, bytearray) else tuple(emu.memory),
            emu.cycles, emu.instructions, bytes(emu.output), emu.halt_latch, emu.frozen)


@settings(max_examples=40, deadline=None)
@given(name=st.sampled_from(sorted(MACHINES)), seed=st.integers(0, 2**31),
       image=st.lists(st.integers(0, 4095), min_size=1, max_size=64), cycles=st.integers(1, 400),
       switches=st.integers(0, 255))
def test_a_spread_clock_changes_the_time_and_nothing_else(name, seed, image, cycles, switches):
    machine = MACHINES[name]
    words = [w & machine.data_mask for w in image]
    runs = []
    for source in (None, spread_source(machine, seed)):
        emu = Emulator(machine)
        emu.load([(0, words)])
        emu.switches = switches
        emu.clock_source = source
        reason = emu.run(max_cycles=cycles)
        runs.append((reason, _state(emu), emu.time_ns))
    (nominal_reason, nominal_state, nominal_time), (spread_reason, spread_state, spread_time) = runs
    assert spread_reason == nominal_reason
    assert spread_state == nominal_state
    if cycles > machine.pulses_per_turn:
        # the engine lets the turn in progress finish at nominal speed;
        # every turn after it comes from the source
        assert spread_time != nominal_time
    assert 0.5 < spread_time / nominal_time < 2
