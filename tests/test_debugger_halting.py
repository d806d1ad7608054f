"""Halts and the stop states as the operator meets them: every halt or pause
passed while stepping is told and stops the steps; pulses have a bound and
stop on Ctrl-C; a breakpoint leaves the clock at STOP so STEP works; restart
starts the program afresh; snapshots belong to one program and keep the beat.

Cycle counts come from ref8.toml (fetch is one micro-step, an instruction's
own steps follow; halt and pause are one step each after the fetch).
"""

from __future__ import annotations


import pytest

from emu import Emulator

from debugger_programs import REF8, SOAK, ctrl_c_after, session_for


@pytest.fixture(autouse=True)
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)


@pytest.fixture
def kiln(tmp_path):
    return session_for(tmp_path)


@pytest.mark.parametrize("running", [False, True])
def test_leave_at_a_lone_halt_stops_there_with_a_frozen_or_a_running_clock(tmp_path, running):
    session = session_for(tmp_path, "halt\n", name="h.asm")
    if running:
        session.emu.set_switch_run(True)  # running, as the live view can leave it
    text = session.execute("leave")
    if running:
        assert text.startswith("halted by the program: halt at 0000 h.asm:1")
    else:
        assert text.startswith("passed the halt at 0000 h.asm:1: the halt latch is set; stepping stopped there "
                               "(2 STEP pulses)")
    e = session.emu
    assert e.frozen and e.halt_latch and e.pc == 1 and e.cycles == 2


def test_over_onto_the_pause_tells_it_and_why_and_the_panel_name_the_halt_state(kiln):
    kiln.execute("break 0x0c")
    kiln.execute("go")
    text = kiln.execute("over")
    assert text.startswith("passed the pause at 000C ramp+7 kiln.asm:7: the halt latch is set")
    state = "frozen: the halt latch is set (set by the pause at 000C ramp+7 kiln.asm:7), switch at STOP (state HALT)"
    assert kiln.execute("why").splitlines() == [
        "passed the pause at 000C ramp+7 kiln.asm:7: the halt latch is set; stepping stopped there",
        f"{state}. next: li r2, 75   at 000D ramp+8 kiln.asm:8"]
    assert kiln.execute("panel").splitlines()[0] == f"ref8 panel — {state}"
    assert kiln.execute("go").startswith("error: the halt latch holds the clock")


def test_instr_many_stops_at_each_halt_instead_of_running_past_it(kiln):
    assert kiln.execute("instr 50").startswith("passed the pause at 000C ramp+7 kiln.asm:7")
    assert kiln.emu.pc == 0x0d
    # with the latch still set, the steps go on to the final halt and stop there, not inside 'log'
    assert kiln.execute("instr 50").startswith("passed the halt at 0011 ramp+12 kiln.asm:10")
    assert kiln.emu.pc == 0x12 and kiln.execute("console") == "1 byte(s):\nK"


def test_pulse_n_stops_at_a_halt(tmp_path):
    session = session_for(tmp_path, "inc r1\nhalt\ninc r2\n", name="h.asm")
    text = session.execute("pulse 9")
    assert "passed the halt at 0001 h.asm:2: the halt latch is set; stepping stopped there (after 4 of 9 pulses)" in text
    assert session.emu.cycles == 4 and session.emu.get("r2") == 0


def test_pulse_n_respects_the_cycle_limit(tmp_path):
    session = session_for(tmp_path, SOAK, max_cycles=1000)
    text = session.execute("pulse 100000000")
    assert text.splitlines()[-2] == ("cycle limit of 1,000 reached while stepping "
                                     "(after 1,000 of 100,000,000 pulses)")
    assert session.emu.cycles == 1000 and session.emu.frozen


def test_ctrl_c_stops_a_long_pulse_and_loses_nothing(tmp_path):
    session = session_for(tmp_path, SOAK)

    with ctrl_c_after(session, 20_000):
        text = session.execute("pulse 100000000")
    assert "stepping stopped by Ctrl-C (after " in text
    e = session.emu
    assert e.frozen and 20_000 <= e.cycles < 100_000_000
    reference = Emulator(REF8)
    reference.load(session.view.loaded.segments)
    reference.run(max_cycles=e.cycles)
    assert [e.get(r) for r in ("r0", "r1", "r4", "pc")] == [reference.get(r) for r in ("r0", "r1", "r4", "pc")]


def test_step_works_right_after_a_breakpoint(kiln):
    kiln.execute("break log")
    kiln.execute("go")
    assert kiln.execute("why").splitlines()[1].startswith("frozen: the switch is at STOP (state STOP). next: inc r1")
    assert kiln.execute("pulse").startswith("pulse 1: fetch step 1: ir <- mem[pc]")
    assert kiln.emu.frozen and kiln.emu.cycles == 11


def test_help_shows_the_table_of_stop_states(kiln):
    text = kiln.execute("help")
    assert "  state   what holds the clock   go            pulse / instr / over / leave" in text
    assert "\n  HALT    halt latch set         refused " in text
    assert "\n  STOP    switch at STOP         runs (RUN) " in text


def test_restart_loads_the_program_again_and_rewinds_input_ports_and_counters(tmp_path):
    session = session_for(tmp_path, "in r0, 1\nin r1, 1\nst [0x40], r0\nout 1, r1\nhalt\n", name="io.asm")
    session.emu.input_bytes = b"AB"
    session.execute("break 4")
    session.execute("beat 7")
    session.execute("go")
    first = session.emu.snapshot_state()
    session.execute("go")
    finished = session.emu.snapshot_state()
    assert finished["ports"]["output"] == "" and session.emu.lamps == ord("B")
    text = session.execute("restart")
    assert text.startswith("restarted with the program loaded again; frozen: the switch is at STOP (state STOP)")
    e = session.emu
    assert (e.cycles, e.time_ns, e.pc, e.memory[0x40], e.lamps) == (0, 0, 0, 0, 0)
    assert e.ports.state()["input_position"] == 0
    assert session.execute("points") == "  1  break  watched  0004 io.asm:3"
    # breakpoint kept; the same run again, with the same irregular beat
    session.execute("go")
    assert session.emu.snapshot_state() == first
    session.execute("go")
    assert session.emu.snapshot_state() == finished and e.memory[0x40] == ord("A")


def test_reset_is_not_restart_memory_stays(kiln):
    kiln.execute("go")
    kiln.execute("throw stop")
    kiln.execute("reset")
    assert kiln.emu.memory[0x200] == 3 and kiln.emu.cycles == 94


def test_a_snapshot_of_another_program_is_refused(tmp_path):
    kiln = session_for(tmp_path)
    kiln.execute("instr 3")
    kiln.execute("save kiln.snap")
    soak = session_for(tmp_path, SOAK, name="soak.asm")
    before = soak.emu.snapshot_state()
    text = soak.execute("load kiln.snap")
    assert text.startswith("error: kiln.snap is a snapshot of another program (image fingerprint ")
    assert text.endswith("; not loaded")
    assert soak.emu.snapshot_state() == before


def test_a_snapshot_without_a_program_fingerprint_is_refused(kiln):
    Emulator(REF8).snapshot("bare.snap")
    assert kiln.execute("load bare.snap").startswith("error: bare.snap records no program fingerprint")


def test_load_keeps_the_beat_so_the_continuation_times_as_an_uninterrupted_run(tmp_path):
    interrupted, straight = session_for(tmp_path), session_for(tmp_path)
    for session in (interrupted, straight):
        session.execute("beat 7")
        session.execute("go 30")
    interrupted.execute("save kiln.snap")
    interrupted.execute("go 40")
    interrupted.execute("beat even")
    assert "the irregular clock of seed 7" in interrupted.execute("load kiln.snap")
    for session in (interrupted, straight):
        session.execute("go 40")
    assert interrupted.emu.time_ns == straight.emu.time_ns
    assert interrupted.emu.time_ns != 70 * 200_000_000  # not the even beat of 5 Hz
    assert interrupted.emu.snapshot_state() == straight.emu.snapshot_state()


def test_load_keeps_an_open_waveform_recording(kiln, tmp_path):
    kiln.execute("waves kiln.vcd")
    kiln.execute("go 20")
    kiln.execute("save kiln.snap")
    assert kiln.execute("load kiln.snap").startswith("snapshot loaded: cycle 20")
    kiln.execute("go 20")
    assert kiln.execute("waves off") == "waveform written to kiln.vcd (up to cycle 40)"
    text = (tmp_path / "kiln.vcd").read_text()
    assert f"#{40 * 200_000_000}" in text or f"#{39 * 200_000_000}" in text


def test_load_refuses_to_run_a_waveform_backwards(kiln):
    kiln.execute("save kiln.snap")
    kiln.execute("waves kiln.vcd")
    kiln.execute("go 20")
    assert kiln.execute("load kiln.snap").startswith(
        "error: the waveform to kiln.vcd has reached a later time than the snapshot")
    assert kiln.emu.cycles == 20 and kiln.waves is not None
    kiln.close()
