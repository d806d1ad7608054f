"""Property: debugger commands leave the machine exactly as the same panel
actions applied through the emulator API do (spec §3 semantics), on ref8
and acc12.

The model below restates each command in engine calls: what the panel
would do, plus the debugger's rules: a clock released from a hold point
runs until something stops it; a stop of the debugger's own throws the
switch to STOP there; STEP pulses stop right after one that drives halt.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from emu import Emulator

from debugger_programs import ACC12, GAUGE, KILN, REF8, session_for

LIMIT = 400


def _settle(e):
    e.run(max_cycles=2 * len(e.machine.phases) + 2)


def _let_run(e, limit=LIMIT, until=None):
    e.run(max_cycles=limit, until=until)
    if not e.frozen and not e.halt_latch:
        e.set_switch_run(False)
    if not e.frozen:
        _settle(e)


def _pulses(e, n=None, instructions=None):
    """STEP pulses: n of them, or until ``instructions`` have ended; a halt stops them."""
    given = done = 0
    while (n is None or given < n) and given < LIMIT:
        halting = e.current_step.drives_halt
        e.press_step()
        given += 1
        if halting:
            return
        if e.at_instruction_boundary and n is None:
            done += 1
            if done == instructions:
                return


def _after_release(e, was_frozen):
    if was_frozen and not e.frozen:
        e.advance_phase()
        _let_run(e)


def _counting(n):
    left = [n]

    def until(_e):
        left[0] -= 1
        return left[0] <= 0
    return until


def apply(e: Emulator, command: str) -> None:
    name, *args = command.split()
    if name == "pulse" and e.frozen:
        _pulses(e, n=int(args[0]))
    elif name == "throw" and args == ["stop"] and e.switch_run:
        e.set_switch_run(False)
        if not e.frozen:
            _settle(e)
    elif name == "throw" and args == ["run"] and not e.switch_run:
        was_frozen = e.frozen
        e.set_switch_run(True)
        if not e.frozen:
            if was_frozen:
                _after_release(e, True)
            else:
                _let_run(e)
    elif name in ("resume", "reset"):
        was_frozen = e.frozen
        e.press_resume() if name == "resume" else e.press_reset()
        _after_release(e, was_frozen)
    elif name == "toggles":
        e.switches = int(args[0])
    elif name == "put":
        e.set(args[0], int(args[1]))
    elif name == "go" and not (e.frozen and e.halt_latch):
        if e.frozen:
            e.set_switch_run(True)
            e.advance_phase()
        elif not e.switch_run:
            e.set_switch_run(True)
        _let_run(e, int(args[0]))
    elif name == "instr":
        if e.frozen:
            _pulses(e, instructions=int(args[0]))
        else:
            _let_run(e, until=_counting(int(args[0])))


def commands(register: str):
    return st.lists(st.one_of(
        st.integers(1, 3).map(lambda n: f"pulse {n}"),
        st.sampled_from(["throw run", "throw stop", "resume", "reset"]),
        st.integers(0, 255).map(lambda v: f"toggles {v}"),
        st.integers(1, 3).map(lambda n: f"instr {n}"),
        st.integers(1, 120).map(lambda n: f"go {n}"),
        st.integers(0, 255).map(lambda v: f"put {register} {v}"),
    ), max_size=14)


CASES = {"ref8": (REF8, KILN, "r0"), "acc12": (ACC12, GAUGE, "acc")}


@pytest.mark.parametrize("name", CASES)
@settings(max_examples=60, deadline=None)
@given(data=st.data())
def test_debugger_commands_match_the_panel_actions(tmp_path_factory, name, data):
    machine, text, register = CASES[name]
    folder = tmp_path_factory.mktemp(name)
    session = session_for(folder, text, machine, str(folder / "prog.asm"), max_cycles=LIMIT)
    model = Emulator(machine)
    model.load(session.view.loaded.segments)
    model.set_switch_run(False)
    _settle(model)
    for command in data.draw(commands(register)):
        reply = session.execute(command)
        assert "Traceback" not in reply
        apply(model, command)
        assert session.emu.snapshot_state() == model.snapshot_state(), command
