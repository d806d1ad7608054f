"""The two execution paths agree (P6), snapshots continue exactly (P7), and the
halt, reset and freeze behaviour of each machine's phase table is as "Clock, halts
and the panel" in emu/machines/ref8.md says."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from emu import Emulator, MachineError, Observer
from emu.testing import programs, run_resuming

from engine_support import (MACHINES, after_step_press, boot, encode, full_state, plain_words,
                            skip_unless_properties_run)

EVERY_MACHINE = pytest.mark.parametrize("machine_name", MACHINES)
"""Every machine file under emu/machines/ and tests/machines/, as engine_support finds them."""


@EVERY_MACHINE
def test_fused_and_stepping_agree_on_state_cycles_and_time(machine_name):
    """P6: with an observer attached the engine steps phase by phase; without, it fuses."""
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    _fused_and_stepping_agree(machine)


@settings(max_examples=60, deadline=None)
@given(data=st.data(), cycles=st.integers(1, 3000))
def _fused_and_stepping_agree(machine, data, cycles):
    words = data.draw(programs(machine))
    fast, stepped = boot(machine, words), boot(machine, words)
    stepped.observe(Observer())
    assert run_resuming(fast, cycles) == run_resuming(stepped, cycles)
    assert full_state(fast) == full_state(stepped)


@EVERY_MACHINE
def test_snapshot_restore_continues_like_an_uninterrupted_run(machine_name, tmp_path_factory):
    """P7: snapshot, restore, run equals one uninterrupted run, frozen or not."""
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    _snapshot_restore_continues(machine, tmp_path_factory)


@settings(max_examples=40, deadline=None)
@given(data=st.data(), before=st.integers(0, 1500), after=st.integers(1, 1500), stop=st.booleans())
def _snapshot_restore_continues(machine, tmp_path_factory, data, before, after, stop):
    words = data.draw(programs(machine))
    whole, first = boot(machine, words), boot(machine, words)
    for emu in (whole, first):
        run_resuming(emu, before)
        if stop:
            emu.set_switch_run(False)
            emu.run(max_cycles=50)
    path = tmp_path_factory.mktemp("snap") / "state.json"
    first.snapshot(path)
    second = Emulator.restore(path, machine)
    assert full_state(second) == full_state(first)
    for emu in (whole, second):
        if stop:
            emu.press_step()
            emu.set_switch_run(True)
        run_resuming(emu, after)
    assert full_state(second) == full_state(whole)


def test_ref8_halt_freezes_at_the_boundary_right_after_it():
    machine = MACHINES["ref8"]
    emu = boot(machine, encode(machine, "nop") + encode(machine, "halt") + encode(machine, "inc rd", rd=0))
    reason = emu.run(max_cycles=100)
    assert reason.kind == "halted" and reason.address == 1
    assert emu.frozen and emu.halt_latch and emu.at_instruction_boundary
    assert emu.pc == 2 and emu.cycles == 3 and emu.get("r0") == 0
    assert emu.phase_index == 2           # phase C, the hold point after the pulse


def test_acc12_halt_on_the_second_pulse_freezes_one_cycle_into_the_next_instruction():
    """The table holds only after its first pulse: the next fetch runs before the freeze.

    Power-on leaves the ring at the hold point G1, so pulse P2 comes first:
    skip (P2), stop's fetch (P1), stop's halt step (P2), bump's fetch (P1), freeze.
    """
    machine = MACHINES["acc12"]
    emu = boot(machine, encode(machine, "skip") + encode(machine, "stop") + encode(machine, "bump"))
    reason = emu.run(max_cycles=100)
    assert reason.kind == "halted" and reason.address == 1
    assert emu.cycles == 4
    instruction, step = emu.sequencer
    assert instruction.display == "bump" and step == 1
    assert emu.pc == 3 and emu.get("acc") == 0
    emu.press_resume()
    emu.run(max_cycles=2)
    assert emu.get("acc") == 1


def test_acc12_halt_on_the_first_pulse_freezes_at_the_boundary():
    machine = MACHINES["acc12"]
    emu = boot(machine, encode(machine, "stop") + encode(machine, "bump"))
    emu.run(max_cycles=100)
    assert emu.at_instruction_boundary and emu.cycles == 2 and emu.pc == 1


@EVERY_MACHINE
def test_steps_work_while_halted_and_the_latch_stays_set(machine_name):
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    after = next(i for i in machine.instructions if not i.drives_halt)
    emu = boot(machine, encode(machine, machine.pause) + plain_words(after))
    emu.run(max_cycles=100)
    cycles, index = emu.cycles, emu.phase_index
    first, middle = after_step_press(machine, index)
    second, last = after_step_press(machine, middle)
    assert emu.press_step() and emu.press_step()
    assert emu.halt_latch and emu.frozen
    assert emu.cycles == cycles + first + second and emu.phase_index == last
    emu.set_switch_run(False)
    emu.press_resume()
    assert emu.frozen and not emu.halt_latch, "RESUME at stop stays frozen"
    emu.set_switch_run(True)
    assert not emu.frozen


def test_step_while_running_does_nothing():
    machine = MACHINES["ref8"]
    emu = boot(machine, encode(machine, "inc rd", rd=0) * 4)
    emu.advance_phase()
    before = full_state(emu)
    assert emu.press_step() is False
    assert full_state(emu) == before


def test_reset_clears_pc_sequencer_flags_and_latch_but_keeps_registers_and_memory():
    machine = MACHINES["ref8"]
    words = (encode(machine, "li rd, imm", rd=3, imm=0x80) + encode(machine, "li sp, addr", addr=0x1234)
             + encode(machine, "add rd, rs", rd=3, rs=3) + encode(machine, "halt"))
    emu = boot(machine, words)
    emu.run(max_cycles=100)
    assert emu.get("c") == 1 and emu.get("z") == 1 and emu.halt_latch
    emu.set_switch_run(False)
    emu.press_reset()
    assert emu.pc == 0 and emu.at_instruction_boundary
    assert (emu.get("z"), emu.get("n"), emu.get("c"), emu.get("v")) == (0, 0, 0, 0)
    assert not emu.halt_latch and emu.frozen, "switch at stop: still frozen after reset"
    assert emu.get("r3") == 0 and emu.get("sp") == 0x1234 and emu.memory[0] == words[0]


def test_undefined_opcode_runs_as_a_no_op_with_a_warning():
    machine = MACHINES["ref8"]
    undefined = next(word for word, index in enumerate(machine.decode_table) if index < 0)
    emu = boot(machine, [undefined] + encode(machine, "halt"))
    assert emu.run(max_cycles=100).kind == "halted"
    assert emu.pc == 2 and emu.cycles == 1 + 2
    assert emu.warnings == ["undefined opcode at 0x0000 ran as a no-op"]


def test_breakpoints_and_conditions_stop_at_instruction_boundaries():
    machine = MACHINES["ref8"]
    loop = encode(machine, "inc rd", rd=0) + encode(machine, "jmp addr", addr=0)
    emu = boot(machine, loop)
    reason = emu.run(max_cycles=10_000, breakpoints={1})
    assert reason.kind == "breakpoint" and emu.pc == 1 and emu.get("r0") == 1
    reason = emu.run(max_cycles=10_000, until=lambda e: e.get("r0") == 200)
    assert reason.kind == "condition" and emu.get("r0") == 200 and emu.at_instruction_boundary


def test_cycle_limit_is_exact_even_mid_instruction():
    machine = MACHINES["ref8"]
    emu = boot(machine, encode(machine, "call addr", addr=0))
    reason = emu.run(max_cycles=12_345)
    assert reason.kind == "cycle_limit" and emu.cycles == 12_345


def test_image_larger_than_memory_is_refused():
    machine = MACHINES["acc12"]
    emu = Emulator(machine)
    with pytest.raises(MachineError, match="past the 256 words of memory"):
        emu.load([(250, [0] * 10)])


def test_restore_refuses_another_machines_snapshot(tmp_path):
    path = tmp_path / "s.json"
    Emulator(MACHINES["ref8"]).snapshot(path)
    with pytest.raises(MachineError, match="machine 'ref8', not 'acc12'"):
        Emulator.restore(path, MACHINES["acc12"])
    path.write_text("{not json")
    with pytest.raises(MachineError, match="not a relaybench snapshot"):
        Emulator.restore(path, MACHINES["ref8"])


def test_a_released_generator_obeys_the_next_hold_point_after_a_fast_run():
    """Let go from a hold point, run fused to a boundary, stop: freeze right there."""
    machine = MACHINES["ref8"]
    emu = boot(machine, encode(machine, "inc rd", rd=0) * 50 + encode(machine, "jmp addr", addr=0))
    emu.set_switch_run(False)
    emu.run(max_cycles=100)
    emu.set_switch_run(True)
    assert emu.run(max_cycles=100, until=lambda e: e.get("r0") == 3).kind == "condition"
    emu.set_switch_run(False)
    assert emu.advance_phase() is False and emu.frozen


@pytest.mark.parametrize("damage", [
    lambda s: s["slots"].update(r0=300),
    lambda s: s["slots"].update(r0="7"),
    lambda s: s["slots"].pop("r1"),
    lambda s: s.update(memory="AAAA"),
    lambda s: s.update(memory="!!"),
    lambda s: s.update(sequencer=[999, 0]),
    lambda s: s.update(sequencer=[-1, 5]),
    lambda s: s["ring"].update(index=17),
    lambda s: s["ring"].update(turn=[1, 2]),
    lambda s: s.update(frozen="yes"),
    lambda s: s.update(cycles=-1),
    lambda s: s["ports"].update(input_position=99),
    lambda s: s.pop("ring"),
], ids=["wide register", "text register", "missing register", "short memory", "bad base64",
        "sequencer past the table", "fetch step past the fetch", "ring index", "ring turn",
        "frozen not bool", "negative cycles", "input position", "no ring"])
def test_a_damaged_snapshot_is_refused_and_changes_nothing(damage, tmp_path):
    import json
    machine = MACHINES["ref8"]
    emu = boot(machine, encode(machine, "inc rd", rd=0) * 3 + encode(machine, "halt"))
    emu.run(max_cycles=100)
    state = emu.snapshot_state()
    damage(state)
    path = tmp_path / "damaged.json"
    path.write_text(json.dumps(state))
    before = full_state(emu)
    with pytest.raises(MachineError, match="damaged snapshot"):
        emu.restore_state(json.loads(path.read_text()), str(path))
    assert full_state(emu) == before
