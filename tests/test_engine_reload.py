"""Reloading an emulator, going back to a save point, and halts on the fast path.

A sweep builds one emulator and reloads it thousands of times, so a reloaded
emulator must be indistinguishable from a new one; and a halt that the fast
path runs one micro-step a cycle, without walking the phase table, must
freeze exactly where the phase-by-phase stepping path freezes. Every machine
file of the project is checked (engine_support discovers them).
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from emu import Emulator, MachineError, Observer
from emu.engine import Ring
from emu.testing import programs

from engine_support import MACHINES, boot, full_state, skip_unless_properties_run

SETTINGS = settings(max_examples=30, deadline=None)


def _run_and_record(emu: Emulator, budgets) -> list:
    """Run each budget in turn, pressing RESUME after a halt; the full state after each run."""
    seen = []
    for budget in budgets:
        reason = emu.run(max_cycles=budget)
        seen.append((reason, full_state(emu)))
        if reason.kind == "halted":
            emu.press_resume()
    return seen


budgets = st.lists(st.integers(1, 60), min_size=1, max_size=8)
toggles = st.integers(0, 255)
streams = st.binary(max_size=4)


@pytest.mark.parametrize("observed", [False, True], ids=["fast", "stepped"])
@pytest.mark.parametrize("machine_name", sorted(MACHINES))
def test_a_reloaded_emulator_behaves_as_a_new_one(machine_name, observed):
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)

    @SETTINGS
    @given(first=programs(machine), second=programs(machine), used=budgets, wanted=budgets,
           switches=toggles, data=streams)
    def check(first, second, used, wanted, switches, data):
        switches &= machine.data_mask
        new = boot(machine, second, switches, data)
        reused = boot(machine, first, 0x55 & machine.data_mask, b"old")
        if observed:
            new.observe(Observer())
            reused.observe(Observer())
        _run_and_record(reused, used)
        reused.reload([(0, second)], switches=switches, input_bytes=data)
        assert full_state(reused) == full_state(new)
        assert reused.warnings == new.warnings == []
        assert _run_and_record(reused, wanted) == _run_and_record(new, wanted)
        assert reused.warnings == new.warnings
    check()


@pytest.mark.parametrize("machine_name", sorted(MACHINES))
def test_rewinding_to_a_save_point_runs_the_same_again(machine_name):
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)

    @SETTINGS
    @given(words=programs(machine), before=budgets, after=budgets, data=streams)
    def check(words, before, after, data):
        emu = boot(machine, words, input_bytes=data)
        _run_and_record(emu, before)
        point = emu.save_point()
        there = full_state(emu)
        first = _run_and_record(emu, after)
        emu.rewind(point)
        assert full_state(emu) == there
        assert _run_and_record(emu, after) == first
        other = Emulator(machine)
        other.rewind(point)
        assert _run_and_record(other, after) == first
    check()


def test_a_save_point_of_another_machine_is_refused():
    ref8, acc12 = MACHINES["ref8"], MACHINES["acc12"]
    point = Emulator(acc12).save_point()
    with pytest.raises(MachineError, match="save point is of machine 'acc12', not 'ref8'"):
        Emulator(ref8).rewind(point)


def test_reload_refuses_an_image_past_the_end_of_memory():
    machine = MACHINES["ref8"]
    emu = Emulator(machine)
    with pytest.raises(MachineError, match="past the 65536 words"):
        emu.reload([(0xFFFF, [1, 2])])


@pytest.mark.parametrize("machine_name", sorted(MACHINES))
def test_a_halt_on_the_fast_path_freezes_where_stepping_freezes(machine_name):
    """The fast path's halts, cycle limits inside a halting instruction and chunk
    callbacks land on the same cycle, phase, time, sequencer and latch as the
    stepping path's (an attached observer forces that path)."""
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)

    @SETTINGS
    @given(words=programs(machine), runs=budgets, chunk_cycles=st.integers(1, 7))
    def check(words, runs, chunk_cycles):
        fast, stepped = boot(machine, words), boot(machine, words)
        stepped.observe(Observer())
        chunks = {id(fast): [], id(stepped): []}

        def note(emu):
            chunks[id(emu)].append((emu.cycles, emu.phase_index, emu.time_ns))

        for budget in runs:
            reasons = [emu.run(max_cycles=budget, chunk=note, chunk_cycles=chunk_cycles) for emu in (fast, stepped)]
            assert reasons[0] == reasons[1]
            assert full_state(fast) == full_state(stepped)
            if reasons[0].kind == "halted":
                fast.press_resume()
                stepped.press_resume()
        assert chunks[id(fast)] == chunks[id(stepped)]
    check()


def test_a_halt_walks_the_phase_table_only_from_its_last_cycle(monkeypatch):
    """ref8's halt: fetch and the halting step run as whole cycles; only the phases
    from the halt's falling edge to the hold point would be walked one by one, and
    on ref8 there are none: a hold point follows every falling edge (ref8.md,
    "Clock, halts and the panel")."""
    machine = MACHINES["ref8"]
    halt = next(ins for ins in machine.instructions if ins.mnemonic == "halt")
    walked = []
    real = Ring.run_phase
    monkeypatch.setattr(Ring, "run_phase", lambda ring: (walked.append(ring.index), real(ring)))
    emu = boot(machine, halt.encode({}))
    reason = emu.run(max_cycles=100)
    assert reason.kind == "halted" and emu.frozen
    assert emu.cycles == halt.cycles(machine).shortest
    assert walked == []
    assert machine.phases[emu.phase_index].hold
