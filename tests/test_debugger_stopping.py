"""The one run policy: the same event is told in the same words whichever way
the machine moved (the engine's run, STEP pulses, the live view), and a
replay for the timing diagram that disagrees with its run is not swallowed.

Expected sentences are the debugger's own (pinned in test_debugger_commands);
here each drive is checked against the sentence another drive gives.
"""

from __future__ import annotations

import pytest

from emu import Emulator
from emu.debugger import LiveClock

from debugger_programs import session_for


@pytest.fixture(autouse=True)
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)


def _stop_line(go_reply: str) -> str:
    """The sentence of a 'go' reply that says why it stopped (after 'switch at RUN')."""
    return go_reply.splitlines()[1]


def test_a_step_by_pulses_onto_a_breakpoint_is_told_as_the_run_tells_it(tmp_path):
    running, frozen = session_for(tmp_path), session_for(tmp_path)
    for session in (running, frozen):
        session.execute("break 2")
    told = _stop_line(running.execute("go"))
    assert told == "breakpoint 1 at 0002 start+2 kiln.asm:3"
    # li r0, 3 is two words and two STEP pulses (ref8.toml); its end is the breakpoint
    assert frozen.execute("instr") == f"{told} (2 STEP pulses). {frozen.here_text()}"
    assert frozen.emu.frozen and (frozen.emu.pc, frozen.emu.cycles) == (running.emu.pc, running.emu.cycles)


def test_the_live_view_tells_a_watchpoint_as_the_run_tells_it(tmp_path):
    running, live = session_for(tmp_path), session_for(tmp_path)
    for session in (running, live):
        session.execute("watch [0x200]")
    told = _stop_line(running.execute("go"))
    assert told.startswith("watchpoint 1: [0200] changed from 0x00 to 0x01 (the instruction before 001A")
    wall = [0.0]
    clock = LiveClock(live, 100.0, now=lambda: wall[0])
    clock.press("run")
    wall[0] = 5.0
    clock.tick()
    assert clock.finished == told
    assert (live.emu.pc, live.emu.cycles) == (running.emu.pc, running.emu.cycles)


def test_a_replay_that_disagrees_with_its_run_is_shown_as_an_internal_error(tmp_path, monkeypatch):
    session = session_for(tmp_path)
    honest = Emulator.restore_state

    def restore_then_drift(emu, state, origin="<snapshot>"):
        """The scratch emulator of the replay starts with one memory bit flipped."""
        honest(emu, state, origin)
        emu.memory[0x3FF] ^= 1

    monkeypatch.setattr(Emulator, "restore_state", restore_then_drift)
    reply = session.execute("go")
    assert reply == ("internal error: the replay of the last run for the timing diagram disagrees with it: "
                     "after cycle 94 the two differ in memory; please report it. "
                     "The machine is as the run left it.")
    # the run itself stands (the pause after 94 cycles, as in test_debugger_commands) ...
    assert session.emu.frozen and session.emu.cycles == 94 and session.emu.memory[0x3FF] == 0
    # ... and no diagram is drawn from the replay that disagreed
    assert len(session.recorder.columns) == 0
    assert session.execute("why").startswith("unknown: the last run's replay disagreed with it")
