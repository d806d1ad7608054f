"""Every debugger command, in process, on ref8 and acc12, with wrong arguments too.

Cycle counts of KILN are worked out by hand from ref8.toml's micro-steps
(fetch one cycle, then one cycle per step): prelude 5, each ramp step 29
(call 5 + log 19 + dec 2 + jnz 3), the pause 2, so the clock freezes at
the pause after 94 cycles and at the final halt after 101.
"""

from __future__ import annotations


from pathlib import Path

import pytest

from emu import Emulator, machine_from_text
from emu.debugger import COMMANDS, call_shape

from debugger_programs import ACC12, GAUGE, REF8, SOAK, ctrl_c_after, session_for


@pytest.fixture(autouse=True)
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)


@pytest.fixture
def kiln(tmp_path):
    return session_for(tmp_path)


def refused(session, line: str) -> str:
    """The reply to a command that must be refused; the machine, the points and
    what the session remembers are checked to be left as they were."""
    def state():
        return (session.emu.snapshot_state(), dict(session.breakpoints), dict(session.watches),
                session.dump_next, session.last_stop, session.live_factor, session.finished)
    before = state()
    reply = session.execute(line)
    assert state() == before, f"'{line}' was refused but changed the session"
    return reply


def test_power_on_the_switch_is_at_stop_and_the_clock_frozen(kiln):
    text = kiln.execute("panel")
    assert "frozen: the switch is at STOP" in text
    assert "RUN/STOP    STOP" in text and "halt latch clear" in text
    assert kiln.emu.cycles == 0 and kiln.emu.frozen


def test_go_stops_at_the_pause_with_file_and_line_then_resume_reaches_the_halt(kiln):
    text = kiln.execute("go")
    assert "halted by the program: pause at 000C" in text and "kiln.asm:7" in text
    assert kiln.emu.cycles == 94 and kiln.emu.pc == 0x0d
    # ref8 runs at a nominal 5 Hz (spec §3): 94 cycles take 18.8 s of simulated time.
    assert kiln.emu.time_ns == 94 * 200_000_000
    text = kiln.execute("resume")
    assert "halt latch clear; the clock runs" in text
    assert "halt at 0011" in text and "kiln.asm:10" in text
    assert kiln.emu.cycles == 101
    assert kiln.execute("console") == "1 byte(s):\nK"
    assert [kiln.emu.get(r) for r in ("r0", "r1", "r2", "r3")] == [0, 3, ord("K"), 3]


def test_go_refuses_while_the_halt_latch_holds_the_clock(kiln):
    kiln.execute("go")
    assert kiln.execute("go").startswith("error: the halt latch holds the clock")


def test_instr_from_a_frozen_clock_is_made_of_step_pulses(kiln):
    assert kiln.execute("instr").startswith("1 instruction done (2 STEP pulses)")
    assert kiln.execute("instr 2").startswith("2 instructions done (8 STEP pulses)")
    assert kiln.emu.pc == 0x12 and kiln.emu.frozen
    # STEP pulses do not move the ring (spec §3): still at the hold point
    assert kiln.machine.phases[kiln.emu.phase_index].hold


def test_an_empty_line_repeats_the_last_step_like_command_only(kiln):
    kiln.execute("instr")
    kiln.execute("")
    assert kiln.emu.pc == 0x05
    kiln.execute("registers")
    assert kiln.execute("") == ""


def test_pulse_lists_each_micro_step_with_its_control_lines(kiln):
    text = kiln.execute("pulse 3")
    rows = text.splitlines()
    # KILN's first word is 18 (li r0, 3), its second the 3 (ref8.toml's li rd, imm)
    assert rows[0] == ("pulse 1: fetch step 1: ir <- mem[pc]; pc <- pc + 1   [read, load ir, load pc]"
                       "   bus 18 into ir")
    assert rows[1] == ("pulse 2: li step 2: rd <- mem[pc]; pc <- pc + 1   [read, load rd, load pc]"
                       "   bus 03 into r0")
    assert rows[2].startswith("pulse 3: fetch step 1") and rows[2].endswith("bus 07 into ir")
    assert "inside: li sp, 0x0100" in rows[3] and "micro-step 2 of 3 next" in rows[3]


def test_pulse_while_the_clock_runs_is_refused_with_a_reason(kiln):
    """Only the live view leaves the clock running between commands; this does what it does."""
    kiln.emu.set_switch_run(True)
    kiln.emu.run(max_cycles=5)
    assert not kiln.emu.frozen
    before = kiln.emu.snapshot_state()
    assert kiln.execute("pulse") == "error: STEP has no effect while the clock runs; 'throw stop' first"
    assert kiln.emu.snapshot_state() == before


@pytest.mark.parametrize("args, message", [
    ("0", "error: pulse count must be at least 1, not 0"),
    ("-2", "error: pulse count must be at least 1, not -2"),
    ("many", "error: pulse count 'many' is not a number (write it as 42, 0x2A, 0b101010 or 'A')"),
    ("1 2", "error: one pulse count expected, not 2 words"),
])
def test_pulse_rejects_bad_counts(kiln, args, message):
    assert refused(kiln, f"pulse {args}") == message


@pytest.mark.parametrize("frozen", [True, False])
def test_over_steps_over_a_call_in_both_clock_states(kiln, frozen):
    kiln.execute("instr")
    if frozen:
        kiln.execute("instr")
    else:
        kiln.execute("break ramp")
        kiln.execute("throw run")
        kiln.execute("drop all")
        kiln.emu.set_switch_run(True)  # running, as the live view can leave it
        assert not kiln.emu.frozen
    assert kiln.emu.pc == 0x05
    text = kiln.execute("over")
    assert "stepped over one instruction" in text
    assert kiln.emu.pc == 0x08 and kiln.emu.get("r1") == 1 and kiln.emu.get("r3") == 1
    # a finished step of a running clock throws the switch to STOP there
    assert kiln.emu.frozen and not kiln.emu.switch_run


def test_leave_returns_from_the_innermost_routine(kiln):
    kiln.execute("break mark")
    kiln.execute("go")
    assert kiln.emu.pc == 0x17
    # the stack holds the two return addresses, low byte at the lower address (spec §1)
    assert kiln.execute("dump 0xfc 4").startswith("  00FC   16 0001 0110")
    assert list(kiln.emu.memory[0xfc:0x100]) == [0x16, 0x00, 0x08, 0x00]
    text = kiln.execute("leave")
    assert "returned to the caller" in text and kiln.emu.pc == 0x16
    kiln.execute("leave")
    assert kiln.emu.pc == 0x08


def test_breakpoints_by_label_file_line_and_address(kiln):
    assert kiln.execute("break log") == "breakpoint 1 at 0012 log kiln.asm:11"
    assert kiln.execute("break kiln.asm:13") == "breakpoint 2 at 0016 log+4 kiln.asm:13"
    assert kiln.execute("break 0x1a") == "breakpoint 3 at 001A mark+3 kiln.asm:15"
    assert kiln.execute("break log").startswith("breakpoint 1 is already at")
    assert kiln.execute("points").splitlines() == [
        "  1  break  watched  0012 log kiln.asm:11", "  2  break  watched  0016 log+4 kiln.asm:13",
        "  3  break  watched  001A mark+3 kiln.asm:15"]
    assert "\nbreakpoint 1 at 0012 log" in kiln.execute("go")
    assert kiln.emu.cycles == 10 and kiln.emu.frozen and not kiln.emu.switch_run
    assert kiln.execute("go").splitlines()[1].startswith("breakpoint 3 at 001A")
    assert kiln.execute("drop 3") == "dropped point 3"
    assert kiln.execute("go").splitlines()[1].startswith("breakpoint 2 at 0016")


def test_a_line_without_code_takes_the_next_line_that_has_some(kiln):
    assert kiln.execute("break kiln.asm:1").startswith("breakpoint 1 at 0000 start kiln.asm:2")


@pytest.mark.parametrize("line, message", [
    ("break", "error: usage: break ADDRESS|LABEL|FILE:LINE"),
    ("break lgo", "error: no label 'lgo' in the program (did you mean 'log'?)"),
    ("break kiln.asm:99", "error: no code at or after kiln.asm:99"),
    ("break other.asm:3", "error: no code at or after other.asm:3"),
    ("break 0x10000", "error: address 65536 is outside memory (0…65535)"),
    ("break 12z", "error: address '12z' is not a number"),
    ("drop 7", "error: there is no point 7 ('points' lists them)"),
    ("drop", "error: usage: drop N|all"),
    ("watch", "error: usage: watch NAME|[ADDRESS]"),
    ("watch r9", "error: 'r9' is not a register or flag of ref8"),
    ("watch [nowhere]", "error: no label 'nowhere' in the program"),
])
def test_point_commands_reject_bad_arguments(kiln, line, message):
    kiln.execute("break log")
    assert refused(kiln, line).startswith(message)


def test_watchpoints_on_a_register_and_a_memory_word(kiln):
    assert kiln.execute("watch r3") == "watchpoint 1 on r3 (now 0x00)"
    assert kiln.execute("watch [0x200]") == "watchpoint 2 on [0200] (now 0x00)"
    text = kiln.execute("go")
    assert "\nwatchpoint 2: [0200] changed from 0x00 to 0x01 (the instruction before 001A mark+3" in text
    text = kiln.execute("go")
    assert text.splitlines()[1].startswith("watchpoint 1: r3 changed from 0x00 to 0x01")
    assert kiln.emu.pc == 0x1b
    assert kiln.execute("points").splitlines() == ["  1  watch  r3 (now 0x01)", "  2  watch  [0200] (now 0x01)"]
    assert kiln.execute("drop all") == "dropped 2 point(s)"
    assert kiln.execute("points") == "no breakpoints or watchpoints"


def test_a_breakpoint_right_after_a_halt_still_reports_the_halt(kiln):
    kiln.execute("break 0x0d")
    text = kiln.execute("go")
    assert "\nhalted by the program: pause at 000C" in text
    assert "also: breakpoint 1" in text and kiln.emu.frozen


def test_registers_show_every_visible_register_group_and_flag(kiln):
    kiln.execute("go")
    text = kiln.execute("registers")
    assert "r1    03      3" in text and "sp  0100    256" in text and "pc  000D     13" in text
    assert text.splitlines()[-1] == "flags  z 1  n 0  c 0  v 0"
    assert "ir" not in text.split()


def test_dump_shows_hex_bits_and_characters_of_narrow_words_four_to_a_row(kiln):
    rows = kiln.execute("dump 8 8").splitlines()
    words = bytes(kiln.emu.memory[8:16])
    # reference: bytes.hex() and format(word, "08b") from the Python standard library
    assert [row.split()[0] for row in rows if not row.endswith(":")] == ["0008", "000C"]
    cells = [c for row in rows if not row.endswith(":") for c in row.split("   ")[1:]]
    assert [c.split()[0] for c in cells] == [words[i:i + 1].hex().upper() for i in range(8)]
    assert ["".join(c.split()[1:3]) for c in cells] == [format(w, "08b") for w in words]
    assert kiln.execute("dump").startswith("  0010")


def test_dump_shows_printable_characters_and_puts_labels_at_their_row(kiln):
    kiln.execute("put [0x300] 'h'")
    kiln.execute("put [0x301] 'i'")
    assert kiln.execute("dump 0x300 2") == "  0300   68 0110 1000 h   69 0110 1001 i"
    assert kiln.execute("dump 0x12 3").splitlines() == [
        "log:", "  0012   69 0110 1001 i   09 0000 1001 ·", "  0014   17 0001 0111 ·"]


def test_dump_starts_at_the_address_a_register_or_pair_holds(kiln):
    kiln.execute("put x 0x0301")
    kiln.execute("put [0x301] 'k'")
    kiln.execute("put r2 0x12")
    assert kiln.execute("dump [x] 1") == "  0301   6B 0110 1011 k"
    assert kiln.execute("dump [r2] 1").splitlines() == ["log:", "  0012   69 0110 1001 i"]
    assert kiln.execute("dump [0x301] 1") == kiln.execute("dump [x] 1")
    assert kiln.execute("dump [nothing]") == "error: no label 'nothing' in the program"


def test_panel_shows_every_register_the_flags_and_the_bus_as_lamp_rows(kiln):
    kiln.execute("pulse 2")
    rows = kiln.execute("panel").splitlines()
    # after li r0, 3: the bus carried the 3 into r0; sp is ref8's 16-bit register
    assert "  r0            ○○○○ ○○●●   03    r1            ○○○○ ○○○○   00" in rows
    assert "  sp  ○○○○ ○○○○ ○○○○ ○○○○ 0000    pc  ○○○○ ○○○○ ○○○○ ○○●○ 0002" in rows
    assert "  ir            ○○○● ●○○○   18    t             ○○○○ ○○○○   00" in rows
    assert "  bus           ○○○○ ○○●●   03   03 into r0" in rows
    assert rows[-1] == "  flags z ○  n ○  c ○  v ○"
    kiln.execute("pulse 3")
    assert "  bus           ○○○○ ○○○○   00   00 into sp" not in kiln.execute("panel")
    assert "  bus   ○○○○ ○○○○ ○○○○ ○○○○ 0100" not in kiln.execute("panel")


def test_the_bus_is_dark_after_a_step_with_no_transfer(tmp_path):
    session = session_for(tmp_path, "halt\n")
    session.execute("pulse 2")
    assert "  bus           ···· ····   --   dark" in session.execute("panel")
    assert session.execute("pulse").splitlines()[0].endswith("bus 00 into ir")


def test_code_marks_pc_and_breakpoints_and_shows_labels_and_source(kiln):
    kiln.execute("instr 2")
    kiln.execute("break log")
    rows = kiln.execute("code").splitlines()
    assert rows[0] == "        start:" and rows[1].startswith("     0000  18 03")
    assert "        ramp:" in rows
    current = next(r for r in rows if r.startswith("pc>"))
    assert current.split()[1:5] == ["0005", "09", "12", "00"] and "call log" in current
    assert "kiln.asm:4  ramp:   call log" in current
    assert any(r.startswith("   * 0012") for r in rows)
    assert kiln.execute("code mark 2").splitlines()[0] == "        mark:"


def test_panel_shows_the_sequencer_mid_instruction_and_the_program_lamps(tmp_path):
    session = session_for(tmp_path, "li r0, 0x81\nout 1, r0\nhalt\n")
    session.execute("go")
    text = session.execute("panel")
    assert "lamps       ●○○○ ○○○●  81" in text
    assert "ring        ○ ○ ● ○    phase C, clock low, frozen at a hold point" in text
    session.execute("throw stop")
    session.execute("reset")
    session.execute("pulse")
    assert ("sequencer   li rd, imm (li r0, 129 at 0000), step 2 of 2 next: rd <- mem[pc]; pc <- pc + 1"
            in session.execute("panel"))


def test_scope_shows_the_latch_setting_and_the_freeze_after_a_halt(kiln):
    kiln.execute("go")
    rows = kiln.execute("scope 3").splitlines()
    named = {row[:10].strip(): row[10:] for row in rows[1:] if row[:10].strip()}
    assert named["clock"] == "‾‾__‾‾__‾‾_"
    # ref8.toml's ring: one stage lit per phase A, B, C, D; the last column is the freeze in C
    assert named["stage 1"] == "█   █   █"
    assert named["stage 2"] == " █   █   █"
    assert named["stage 3"] == "  █   █   █"
    assert named["stage 4"] == "   █   █"
    assert named["halt"] == "        ██"
    # the latch is set at the falling edge of the halt step, then the clock freezes at the hold point
    assert named["latch"] == "__________‾"
    assert named["generator"] == "          F"
    assert named["panel"] == "          L"
    assert rows[0] == "cycles 92 to 94"


@pytest.mark.parametrize("width", [40, 70, 120])
def test_scope_fits_the_width_it_is_given(kiln, width):
    kiln.execute("go")
    kiln.width = width
    rows = kiln.execute("scope 30").splitlines()
    assert max(len(row) for row in rows) <= width
    clock = [row for row in rows if row.startswith("clock ")]
    # 30 cycles of ref8's four phases, less those before the first rising edge, in blocks
    assert len(clock) > 1 and len(clock[0]) == width
    assert "".join(row[10:] for row in clock).startswith("‾‾__‾‾__")


def test_scope_after_a_long_run_is_replayed_from_a_checkpoint(tmp_path):
    session = session_for(tmp_path, SOAK)
    session.execute("go 300000")
    text = session.execute("scope 2")
    assert text.startswith("cycles 299,999 to 300,000 (the run before them was not traced)")


def test_put_sets_registers_groups_flags_and_memory(kiln):
    assert kiln.execute("put r0 0x7f") == "r0 = 0x7F (127)"
    assert kiln.execute("put x 0x1234") == "x = 0x1234 (4660)"
    assert (kiln.emu.get("r6"), kiln.emu.get("r7")) == (0x12, 0x34)
    assert kiln.execute("put c 1") == "c = 0x1 (1)"
    assert kiln.execute("put [ramp] -1") == "[0005] = 0xFF (255)"
    assert kiln.emu.memory[5] == 0xFF


@pytest.mark.parametrize("line, message", [
    ("put r0", "error: usage: put NAME|[ADDRESS] VALUE"),
    ("put r0 256", "error: 256 does not fit r0, 8 bits (-128…255, or 0x00…0xFF)"),
    ("put z 2", "error: 2 does not fit z, 1 bit (0 or 1)"),
    ("put q 1", "error: 'q' is not a register or flag of ref8"),
    ("put ir 1", "error: 'ir' is not a register or flag of ref8"),
    ("put r0 0x", "error: value '0x' is not a number (write it as 42, 0x2A, 0b101010 or 'A')"),
])
def test_put_rejects_bad_arguments(kiln, line, message):
    assert refused(kiln, line).startswith(message)


def test_snapshots_save_and_load_the_whole_machine(kiln, tmp_path):
    kiln.execute("instr 3")
    path = tmp_path / "kiln.snap"
    assert kiln.execute(f"save {path}").startswith(f"snapshot saved to {path} at cycle 10")
    state = kiln.emu.snapshot_state()
    kiln.execute("go")
    assert kiln.execute(f"load {path}").startswith("snapshot loaded: cycle 10")
    assert kiln.emu.snapshot_state() == state
    assert Emulator.restore(path, REF8).snapshot_state() == state


@pytest.mark.parametrize("line, message", [
    ("save", "error: usage: save FILE"),
    ("load", "error: usage: load FILE"),
    ("load /nonexistent/kiln.snap", "/nonexistent/kiln.snap: error: cannot read snapshot (No such file or directory)"),
    ("save /nonexistent/folder/kiln.snap", "error: cannot write /nonexistent/folder/kiln.snap"),
])
def test_snapshot_commands_reject_bad_arguments(kiln, line, message):
    kiln.execute("instr 2")
    assert refused(kiln, line).startswith(message)


def test_a_snapshot_of_another_machine_is_refused(kiln, tmp_path):
    other = Emulator(ACC12)
    path = tmp_path / "acc12.snap"
    other.snapshot(path)
    kiln.execute("instr 2")
    assert refused(kiln, f"load {path}") == f"{path}: error: the snapshot is of machine 'acc12', not 'ref8'"


def test_toggles_are_read_by_the_program(tmp_path):
    session = session_for(tmp_path, "in r0, 0\nhalt\n")
    assert session.execute("toggles 0b10100101") == "toggles 10100101 = A5 = 165"
    session.execute("go")
    assert session.emu.get("r0") == 0xA5
    assert session.execute("toggles") == "toggles 10100101 = A5 = 165"
    assert session.execute("toggles 0x1ff") == "error: the toggles take 0…255, not 511"
    assert session.execute("toggles 1 2") == "error: usage: toggles [VALUE]"


def test_throw_stop_lets_the_clock_carry_on_to_the_hold_point(kiln):
    assert kiln.execute("throw stop").startswith("the switch is already at STOP")
    kiln.execute("go 3")
    kiln.emu.set_switch_run(True)  # running, as the live view can leave it
    text = kiln.execute("throw stop")
    # released, the generator passes the hold point it stood at and stops at the next
    assert "ran on 1 cycle(s) to the hold point: frozen: the switch is at STOP" in text
    assert kiln.emu.frozen and kiln.execute("pulse").startswith("pulse 1: li step 3")


def test_throw_run_with_the_latch_set_leaves_the_clock_frozen(kiln):
    kiln.execute("go")
    kiln.execute("throw stop")
    assert kiln.execute("throw run") == "switch at RUN; the halt latch still holds the clock ('resume' clears it)"
    assert kiln.execute("throw run") == "the switch is already at RUN; the halt latch holds the clock ('resume' clears it)"
    assert kiln.execute("throw sideways") == "error: usage: throw run|stop"


def test_resume_at_stop_clears_the_latch_but_the_clock_stays_frozen(kiln):
    kiln.execute("go")
    kiln.execute("throw stop")
    assert kiln.execute("resume") == "halt latch clear; frozen: the switch is at STOP (state STOP)"
    assert not kiln.emu.halt_latch and kiln.emu.frozen


def test_reset_keeps_registers_and_memory(kiln):
    kiln.execute("go")
    kiln.execute("throw stop")
    assert kiln.execute("reset") == "reset: pc 0; frozen: the switch is at STOP (state STOP)"
    assert kiln.emu.pc == 0 and kiln.emu.get("r1") == 3 and kiln.emu.get("z") == 0
    assert kiln.emu.memory[0x200] == 3


def test_reset_at_run_restarts_a_frozen_clock(kiln):
    kiln.execute("go")
    text = kiln.execute("reset")
    assert text.startswith("reset: pc 0; the clock runs")
    assert "pause at 000C" in text


@pytest.mark.parametrize("name", ["resume", "reset", "over", "leave", "points", "registers",
                                  "panel", "why", "console", "quit"])
def test_commands_without_arguments_refuse_them(kiln, name):
    assert refused(kiln, f"{name} 1") == f"error: '{name}' takes no arguments"


@pytest.mark.parametrize("line, message", [
    ("go 0", "error: cycle limit must be at least 1, not 0"),
    ("go x", "error: cycle limit 'x' is not a number (write it as 42, 0x2A, 0b101010 or 'A')"),
    ("instr 0", "error: instruction count must be at least 1, not 0"),
    ("scope 0", "error: cycle count must be at least 1, not 0"),
    ("code 0 0", "error: instruction count must be at least 1, not 0"),
    ("dump 0 0", "error: word count must be at least 1, not 0"),
    ("dump 1 2 3", "error: usage: dump [ADDRESS|[REGISTER]] [COUNT]"),
    ("code a b c", "error: usage: code [WHERE] [COUNT]"),
    ("live 0", "error: factor must be above 0 and at most 10000, not 0"),
    ("live fast", "error: factor 'fast' is not a number"),
    ("live 1 2", "error: usage: live [FACTOR]"),
])
def test_counts_and_factors_are_checked(kiln, line, message):
    kiln.execute("instr")
    assert refused(kiln, line) == message


def test_go_with_a_cycle_limit_throws_the_switch_to_stop_there(kiln):
    text = kiln.execute("go 7")
    assert text.splitlines()[1] == "cycle limit of 7 cycles reached; the switch is thrown to STOP there"
    assert kiln.emu.cycles == 7 and kiln.emu.frozen and not kiln.emu.switch_run
    assert kiln.execute("why").splitlines()[1].startswith("frozen: the switch is at STOP (state STOP). inside:")


def test_live_asks_the_terminal_for_the_live_view(kiln):
    assert kiln.execute("live 2") == "live at 2 × 5 Hz"
    assert kiln.live_factor == 2.0


def test_ctrl_c_during_a_long_run_throws_the_stop_switch_and_loses_nothing(tmp_path):
    session = session_for(tmp_path, SOAK.replace("li r4, 200", "li r4, 20"))

    with ctrl_c_after(session, 100_000):
        text = session.execute("go")
    assert text.splitlines()[1] == "stopped by the stop switch (Ctrl-C): the clock froze at the hold point"
    e = session.emu
    assert e.frozen and not e.switch_run and e.machine.phases[e.phase_index].hold
    stopped_at = e.cycles
    assert 100_000 <= stopped_at
    assert "halt at" in session.execute("go")
    reference = Emulator(REF8)
    reference.load(session.view.loaded.segments)
    reference.run()
    assert e.cycles == reference.cycles and e.pc == reference.pc
    assert [e.get(r) for r in ("r0", "r1", "r4")] == [reference.get(r) for r in ("r0", "r1", "r4")]


def test_help_lists_every_command_and_explains_one(kiln):
    text = kiln.execute("help")
    for cmd in COMMANDS.values():
        assert f"  {cmd.usage}" in text
    assert kiln.execute("help pulse").startswith("pulse [N]\n  Press STEP N times")
    assert "An empty line repeats it." in kiln.execute("help instr")
    assert kiln.execute("help nothing").startswith("error: unknown command 'nothing'")


def test_unknown_commands_get_a_hint_and_prefixes_work(kiln):
    assert kiln.execute("registr").startswith("error: unknown command 'registr' (did you mean 'registers'")
    assert kiln.execute("bogus") == "error: unknown command 'bogus'; 'help' lists the commands"   # no far guess
    assert kiln.execute("re") == "error: 're' could be registers, reset, restart, resume"
    assert kiln.execute("reg").startswith("r0")


def test_completion_of_commands_registers_labels_and_points(kiln):
    assert kiln.complete("re") == ["registers", "reset", "restart", "resume"]
    assert kiln.complete("put r") == ["r0", "r1", "r2", "r3", "r4", "r5", "r6", "r7"]
    assert kiln.complete("break ma") == ["mark"]
    assert kiln.complete("watch [r") == ["[ramp]"]
    assert kiln.complete("throw ") == ["run", "stop"]
    kiln.execute("break log")
    assert kiln.complete("drop ") == ["1", "all"]
    assert kiln.complete("help th") == ["throw"]
    assert kiln.complete("quit ") == []
    assert kiln.complete("nosuch x") == []


def test_quit_ends_the_session(kiln):
    assert kiln.execute("quit") == "" and kiln.finished


# ----- acc12: another word width, another phase table, no stack -------------

@pytest.fixture
def gauge(tmp_path):
    return session_for(tmp_path, GAUGE, ACC12, "gauge.asm")


def test_acc12_runs_to_its_pause_and_stop(gauge):
    text = gauge.execute("go")
    assert "\nhalted by the program: pause at 04 done gauge.asm:6" in text
    assert gauge.emu.get("acc") == 0
    assert "halt at 07 done+3 gauge.asm:9" in gauge.execute("resume")
    assert gauge.emu.lamps == 5
    assert "lamps       ○○○○ ○○○○ ○●○●  005" in gauge.execute("panel")


def test_acc12_has_no_call_so_over_is_one_instruction_and_leave_is_refused(gauge):
    assert call_shape(ACC12).calls == frozenset()
    assert gauge.execute("over").startswith("stepped over one instruction")
    assert gauge.emu.pc == 1
    assert gauge.execute("leave") == ("error: acc12 has no return instruction "
                                      "(none is marked 'returns = true', and none loads pc from memory at a stack register)")


def test_acc12_views_use_its_own_widths_and_names(gauge):
    text = gauge.execute("registers")
    assert text.splitlines() == ["acc  000      0   pc    00      0", "flags  zf 0  lk 0"]
    # acc12's 12-bit words: hex only, eight to a row, each label heading its own row
    assert gauge.execute("dump 0 8").splitlines() == [
        "start:", "  00   903", "tick:", "  01   408   704   601", "done:", "  04   F00   905   A01   F00"]
    assert "ring        ○ ● ○ ○ ○" in gauge.execute("panel")
    assert gauge.execute("put acc 4095") == "acc = 0xFFF (4095)"
    assert gauge.execute("put acc 4096") == "error: 4096 does not fit acc, 12 bits (-2048…4095, or 0x000…0xFFF)"


def test_acc12_pulses_and_breakpoints(gauge):
    gauge.execute("pulse 2")
    assert gauge.emu.pc == 1
    gauge.execute("break done")
    assert "\nbreakpoint 1 at 04 done gauge.asm:6" in gauge.execute("go")
    rows = gauge.execute("scope 2").splitlines()
    assert any(r.startswith("stage 5") for r in rows)


def test_stepping_by_pulses_stops_at_the_cycle_limit(tmp_path):
    """'leave' at the top of an endless loop pulses STEP until the limit, not for ever."""
    session = session_for(tmp_path, "top: inc r0\njmp top\n", max_cycles=5_000)
    before = session.emu.cycles
    reply = session.execute("leave")
    assert "cycle limit of 5,000 reached while stepping" in reply
    assert session.emu.cycles - before == 5_000
    assert "cycle limit of 5,000 reached while stepping" in session.execute("instr 99999999999999999999")


def test_stepping_over_a_write_to_a_plain_flag_shows_it_on_the_bus(tmp_path):
    """A plain flag is a 1-bit register: the bus of the step that writes it is one bit wide."""
    from engine_support import COND4_PATH
    from emu import load_machine
    session = session_for(tmp_path, "        poll\n        stop\n", load_machine(COND4_PATH), "poll.asm")
    reply = session.execute("pulse 2")
    assert "rdy <- in(2)[0]" in reply and "into rdy" in reply, reply


def test_a_watched_run_past_the_end_of_a_small_memory_keeps_going(tmp_path):
    """ref8 cut to 4,096 words: empty memory is all `nop`, so pc runs past the end and
    its reads wrap. A watched `go` (blocks hot after the warm-up), the snapshot that
    replays the timing diagram and the code view all take such a pc (before: IndexError,
    then a snapshot refused as 'damaged')."""
    text = Path(REF8.path).read_text(encoding="utf-8").replace("memory_words = 65536", "memory_words = 4096")
    small = machine_from_text(text)
    session = session_for(tmp_path, "nop\n", machine=small)
    session.execute("watch r1")
    reply = session.execute("go 600000")
    assert "cycle limit of 600,000 cycles reached" in reply and session.emu.pc == 600_000 % 65_536
    assert "nop" in session.execute("code")
