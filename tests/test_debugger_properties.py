"""Property: any sequence of debugger commands keeps the machine what the
hardware would be, on ref8 and acc12.

Nothing here restates the session's own rules. Each command is checked
against what it claims in its help (``pulse N`` is N clock pulses with the
ring standing still, ``toggles`` and ``put`` set exactly the value given,
``throw stop`` leaves the generator frozen at a hold point, ``go N`` runs at
most N cycles and ends frozen by the latch or at its limit, a refused
command changes nothing), and the program's course against a second
emulator that runs free on the engine's fast path and resumes by itself at
every halt: whenever the session stands at an instruction boundary, its
datapath is the free runner's after the same number of instructions, as
long as no command has changed the datapath by hand (``put``, ``reset``).
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from emu import Emulator

from debugger_programs import ACC12, GAUGE, KILN, REF8, session_for
from engine_support import datapath_state

LIMIT = 400


class FreeRunner:
    """The program's own course: the state after each instruction, computed on demand."""

    def __init__(self, machine, segments):
        self.emu = Emulator(machine)
        self.emu.load(segments)
        self.states = [datapath_state(self.emu)]

    def _record(self, emu):
        self.states.append(datapath_state(emu))
        return True

    def after(self, count: int):
        while len(self.states) <= count:
            if self.emu.run(max_cycles=10_000, until=self._record).kind == "halted":
                self.emu.press_resume()
        return self.states[count]


def commands(register: str):
    return st.lists(st.one_of(
        st.integers(1, 3).map(lambda n: f"pulse {n}"),
        st.sampled_from(["throw run", "throw stop", "resume", "reset"]),
        st.integers(0, 255).map(lambda v: f"toggles {v}"),
        st.integers(1, 3).map(lambda n: f"instr {n}"),
        st.integers(1, 120).map(lambda n: f"go {n}"),
        st.integers(0, 255).map(lambda v: f"put {register} {v}"),
    ), max_size=14)


class Before:
    """What the machine was before a command."""

    def __init__(self, e: Emulator):
        self.state, self.frozen = e.snapshot_state(), e.frozen
        self.cycles, self.phase = e.cycles, e.phase_index


def check_claim(session, command: str, before: Before, reply: str) -> None:
    """What the command's help promises, from the state before it and after it."""
    e = session.emu
    name, *args = command.split()
    if reply.startswith("error: "):
        assert e.snapshot_state() == before.state, f"'{command}' was refused but changed the machine"
        return
    assert not reply.startswith("internal error"), reply
    if name == "pulse":
        # N pulses, unless a pulse drove halt: then the pulses stop there, as 'help pulse' says.
        given = e.cycles - before.cycles
        assert before.frozen and e.frozen and 1 <= given <= int(args[0])
        assert given == int(args[0]) or (e.halt_latch and "passed the" in reply), reply
        assert e.phase_index == before.phase, "the ring moved during STEP pulses"
    elif name == "throw" and args == ["stop"]:
        assert not e.switch_run and e.frozen
        assert session.machine.phases[e.phase_index].hold
    elif name == "throw" and args == ["run"]:
        # The clock runs; the switch stays at RUN unless the run ended at one
        # of the debugger's own stops (here the cycle limit), which throws it back.
        assert e.switch_run or ("cycle limit" in reply and e.frozen and not e.halt_latch), reply
    elif name == "toggles":
        assert e.switches == int(args[0])
    elif name == "put":
        assert e.get(args[0]) == int(args[1])
    elif name == "go":
        # At its limit the debugger throws the switch to STOP, and the ring
        # runs on to the next hold point, as the hardware's would.
        ran = e.cycles - before.cycles
        assert ran <= int(args[0]) + _pulses_between_hold_points(session.machine) - 1
        assert (e.frozen and e.halt_latch) or ran >= int(args[0])
    elif name == "resume":
        assert not e.halt_latch or e.frozen, "the latch is only set again by a halt that froze the clock"


def _pulses_between_hold_points(machine) -> int:
    """The most clock pulses (falling edges) from one hold point to the next."""
    phases = machine.phases
    holds = [i for i, p in enumerate(phases) if p.hold]
    most = 0
    for start in holds:
        edges, i = 0, start
        while True:
            following = (i + 1) % len(phases)
            if phases[i].level == 1 and phases[following].level == 0:
                edges += 1
            i = following
            if phases[i].hold:
                break
        most = max(most, edges)
    return most


CASES = {"ref8": (REF8, KILN, "r0"), "acc12": (ACC12, GAUGE, "acc")}


@pytest.mark.parametrize("name", CASES)
@settings(max_examples=60, deadline=None)
@given(data=st.data())
def test_debugger_commands_keep_the_machine_as_the_hardware_would(tmp_path_factory, name, data):
    machine, text, register = CASES[name]
    folder = tmp_path_factory.mktemp(name)
    session = session_for(folder, text, machine, str(folder / "prog.asm"), max_cycles=LIMIT)
    free = FreeRunner(machine, session.view.loaded.segments)
    by_hand = False
    for command in data.draw(commands(register)):
        before = Before(session.emu)
        reply = session.execute(command)
        check_claim(session, command, before, reply)
        by_hand = by_hand or (command.split()[0] in ("put", "reset") and not reply.startswith("error: "))
        e = session.emu
        if not by_hand and e.at_instruction_boundary:
            assert datapath_state(e) == free.after(e.instructions), command
