"""Stateful property of the stop-state model that 'help' documents (STATE_TABLE):
random sequences of panel actions and runs over a small program with a pause
and a halt. After every command the panel's state line names the state the
engine is in (switch, latch, frozen), the clock is frozen between commands,
and each command did what the table says it does in the state it met.
"""

from __future__ import annotations

import re

import pytest
from hypothesis import settings
from hypothesis import strategies as st
from hypothesis.stateful import RuleBasedStateMachine, invariant, rule, run_state_machine_as_test

from debugger_programs import REF8, session_for

# a loop that pauses, then halts, then starts over: every halt is met again and again
LOOP = """\
start:  li r0, 2
again:  dec r0
        jnz again
        pause
        inc r1
        halt
        jmp start
"""

_STATE = re.compile(r"\(state (STOP|HALT|RUNNING)\)$")


def table_state(e) -> str:
    """The table's state, from the engine alone."""
    if e.frozen:
        return "HALT" if e.halt_latch else "STOP"
    return "RUNNING"


class StopStates(RuleBasedStateMachine):
    def __init__(self):
        super().__init__()
        self.session = session_for(self.folder, LOOP, REF8, "loop.asm", max_cycles=300)

    @property
    def e(self):
        return self.session.emu

    def run(self, line: str) -> tuple[str, str, dict]:
        before = table_state(self.e)
        snapshot = self.e.snapshot_state()
        reply = self.session.execute(line)
        assert "Traceback" not in reply and not reply.startswith("internal error")
        return before, reply, snapshot

    @rule(n=st.integers(1, 12))
    def pulse(self, n):
        before, reply, old = self.run(f"pulse {n}")
        # STOP and HALT both take STEP pulses; they stop early only at a halt they pass
        given = self.e.cycles - old["cycles"]
        assert 1 <= given <= n
        if given < n:
            assert "the halt latch is set; stepping stopped there" in reply

    @rule(n=st.integers(1, 6))
    def instr(self, n):
        before, reply, old = self.run(f"instr {n}")
        assert self.e.cycles > old["cycles"]
        assert "STEP pulse" in reply

    @rule(n=st.integers(1, 80))
    def go(self, n):
        before, reply, old = self.run(f"go {n}")
        if before == "HALT":
            assert reply.startswith("error: the halt latch holds the clock")
            assert self.e.snapshot_state() == old
        else:
            assert reply.startswith("switch at RUN") and self.e.cycles > old["cycles"]

    @rule()
    def resume(self):
        before, reply, old = self.run("resume")
        assert not self.e.halt_latch or "halted by the program" in reply
        if before == "HALT" and old["switch_run"]:
            assert "the clock runs" in reply
        else:
            assert self.e.cycles == old["cycles"]

    @rule(position=st.sampled_from(["run", "stop"]))
    def throw(self, position):
        before, reply, old = self.run(f"throw {position}")
        if before == "HALT":
            # the switch moves; the latch still holds the clock, nothing runs
            assert self.e.switch_run == (position == "run") and self.e.halt_latch
            assert self.e.cycles == old["cycles"]
        elif position == "stop":
            assert reply.startswith("the switch is already at STOP") and self.e.cycles == old["cycles"]

    @invariant()
    def frozen_between_commands(self):
        assert self.e.frozen

    @invariant()
    def the_state_line_agrees_with_the_engine(self):
        head = self.session.execute("panel").splitlines()[0]
        assert _STATE.search(head)[1] == table_state(self.e)
        assert head.startswith("ref8 panel — frozen: ")
        assert (f"switch at {'RUN' if self.e.switch_run else 'STOP'}" in head) or table_state(self.e) == "STOP"
        why = self.session.execute("why").splitlines()[1]
        assert f"(state {table_state(self.e)})" in why


@pytest.fixture
def stop_states(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    StopStates.folder = tmp_path
    return StopStates


def test_the_stop_state_table_holds_for_any_sequence(stop_states):
    run_state_machine_as_test(stop_states, settings=settings(max_examples=60, stateful_step_count=25,
                                                              deadline=None))
