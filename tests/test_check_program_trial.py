"""What a first user's trial of ``relaybench check`` found, each pinned.

* an instruction that stalls until input is ready (``wait until``, or a
  ``goto`` back over steps that only idle) is a wait, not a timing
  dependence; a program that tests the port with ordinary instructions and
  branches still is one, and so is a loop that does work while it waits;
* a plain register as wide as an address that ends on a moved address is
  the same pointer, moved; a number that is data (loaded into a register
  that is no pointer, a string's terminator) is not named as the cause;
* clocks whose parts stop the ring are counted and named, not dropped;
* Ctrl-C takes the progress bar down before the message that says where
  the work stopped.

The trial's machines are tests/machines/brace8.toml and nib2.toml (our own
inventions; the engine's properties run on them too), their programs are in
tests/trial_programs/.
"""

from __future__ import annotations

import io
import json
import os
import sys
from pathlib import Path

import pytest

from emu import load_machine, machine_from_text
from emu.checks import check_program_timing, report_json, report_lines
from emu.errors import MachineError
from emu.timing import spread_source

from cli_support import REF8_PROGRAMS, ROOT, cli

TRIAL_MACHINES = ROOT / "tests" / "machines"
TRIAL_PROGRAMS = ROOT / "tests" / "trial_programs"
NIB2 = load_machine(TRIAL_MACHINES / "nib2.toml")
BRACE8 = load_machine(TRIAL_MACHINES / "brace8.toml")
SKEP = load_machine("skep")

NIB2_GET = 'steps = ["idle", "goto 3 if !in(2)[0]", "a <- in(1)", "idle"]'


def checked(tmp_path, text: str, machine, *, panel: str | None = None, **options):
    path = tmp_path / "prog.asm"
    path.write_text(text)
    if panel is not None:
        (tmp_path / "prog.panel.toml").write_text(panel)
    options.setdefault("examples", 2)
    options.setdefault("workers", 1)
    return check_program_timing(str(path), machine, **options)


def test_a_goto_loop_of_idle_steps_waiting_for_input_is_a_stall():
    """nib2's `get a` loops `goto 3 if !in(2)[0]` back over an idle step: the machine waits.
    The sum 3 + 4 = 7 its checks expect is plain arithmetic."""
    check = check_program_timing(str(TRIAL_PROGRAMS / "nib2_add.asm"), NIB2, examples=2, workers=1)
    assert [(r.place[1], r.statement, r.device, r.reads, r.stall_reads, r.depends_on_timing)
            for r in check.panel_reads] == [(4, "get a", "input_ready", 1, 1, False),
                                            (6, "get a", "input_ready", 1, 1, False)]
    assert check.timing_dependent == [] and check.passed
    assert report_lines(check)[1] == ("  timing            pass  the result does not depend on when the operator "
                                      "acts (get a waits for input: a stall, the same result at any pace)")


def test_a_wait_until_on_input_ready_is_a_stall(tmp_path):
    """skep's `get a` waits with `wait until in(2)[0]`."""
    check = checked(tmp_path, "        get a\n        out 1, a\n        stop\n", SKEP, panel='input = "7"\n')
    [read] = check.panel_reads
    assert (read.statement, read.reads, read.stall_reads, read.depends_on_timing) == ("get a", 1, 1, False)
    assert check.passed


def test_a_loop_that_works_while_it_waits_is_not_a_stall(tmp_path):
    """The same goto, but the step it repeats counts b: how many turns it made shows in b."""
    counting = (TRIAL_MACHINES / "nib2.toml").read_text().replace(NIB2_GET, NIB2_GET.replace('"idle", "goto', '"b <- inc(b)", "goto'))
    assert counting != (TRIAL_MACHINES / "nib2.toml").read_text()
    check = checked(tmp_path, "        get a\n        halt\n", machine_from_text(counting), panel='input = "5"\n')
    [read] = check.timing_dependent
    assert (read.statement, read.reads, read.stall_reads) == ("get a", 1, 0)


def test_a_program_testing_input_ready_with_a_branch_still_depends_on_timing():
    """tickets.asm asks `in r0, INPUT_READY` and branches to the end of its input on 0."""
    check = check_program_timing(str(REF8_PROGRAMS / "tickets.asm"), load_machine("ref8"),
                                 examples=1, sample=1, workers=1)
    assert [(r.place[1], r.statement, r.stall_reads) for r in check.timing_dependent] == [
        (133, "in r0, INPUT_READY", 0)]
    assert not check.passed


POINTER_WALK = """\
        ldi x, text
loop:   ld a, [x]
        or #0
        jz done
        out 0, a
        inx
        jmp loop
done:   stop
        .expect out == "hive"
text:   .byte "hive", 0
"""
"""x, a plain 10-bit register on skep (10-bit addresses), ends on the string's terminator."""


def test_a_plain_register_left_on_a_moved_string_is_the_same_pointer(tmp_path):
    check = checked(tmp_path, POINTER_WALK, SKEP)
    assert len(check.placements) == 8 and check.unsafe_placements == []
    assert check.passed


DATA_ZERO_THEN_NUMBERED_POINTER = """\
start:  ldi a, 0          ; a zero, not the address of start
        st [count], a
        ldi x, 11         ; the address of value, written as a number
        ld a, [x]
        st [count], a
        stop
count:  .byte 0
value:  .byte 5
"""
"""ldi and st [addr] take two words each, ld [x] and stop one: count is at 10, value at 11."""


def test_a_zero_loaded_into_a_register_that_is_no_pointer_is_not_the_cause(tmp_path):
    check = checked(tmp_path, DATA_ZERO_THEN_NUMBERED_POINTER, SKEP)
    first = check.unsafe_placements[0]
    assert first.line == 1
    assert first.cause.startswith(f"{tmp_path}/prog.asm:3: `ldi x, 11` holds the address of value as the "
                                  f"number 0xb, which moved to 0xc")


OWN_WORDS_WITH_TEXT = """\
start:  ldi x, start
        ld a, [x]
        st [copy], a
        stop
note:   .byte 2, "ok", 0   ; its length, then the text
copy:   .byte 0
"""


def test_a_number_in_a_string_is_not_a_table_of_addresses(tmp_path):
    """The length 2 before "ok" equals the address of `ld a, [x]`, which moved; the cause is
    the code reading itself."""
    check = checked(tmp_path, OWN_WORDS_WITH_TEXT, SKEP)
    first = check.unsafe_placements[0]
    assert first.line == 1
    assert first.cause.startswith(f"{tmp_path}/prog.asm:1: `ldi x, start` takes the address of code (start)")


def test_clocks_whose_parts_stop_the_ring_are_counted_and_named(tmp_path):
    """Clock n of seed 0 is built from seed n; the stopping ones are found here by building
    each clock directly."""
    stopping = 0
    for clock_seed in range(10):
        try:
            spread_source(BRACE8, clock_seed)
        except MachineError:
            stopping += 1
    assert stopping == 2
    check = check_program_timing(str(TRIAL_PROGRAMS / "brace8_sum.asm"), BRACE8, examples=10, sample=1, workers=1)
    assert (check.clock.drawn, check.clock.clocks, check.clock.stopped) == (10, 10 - stopping, stopping)
    assert check.passed
    lines = report_lines(check)
    assert lines[-2].strip() == ("warning: 10 clocks drawn: 8 ran, 2 stop — their parts cannot keep the ring "
                                 "going; see relaybench clock")
    assert lines[-3].startswith("  irregular clock   pass  8 clocks built from random parts: the same result")
    clock = report_json(check)["clock"]
    assert (clock["drawn"], clock["clocks"], clock["stopped"]) == (10, 8, 2)


def test_when_every_clock_drawn_stops_the_table_says_none_ran(capsys):
    """Seed 0 draws clock 0 first, one of brace8's stopping builds."""
    code, out, _err = cli(capsys, "check", TRIAL_PROGRAMS / "brace8_sum.asm", "--examples", "1", "--sample", "1")
    assert code == 0
    assert ("  irregular clock   pass  none of 1 clock drawn ran: their parts cannot keep the ring going; "
            "see relaybench clock") in out.splitlines()


def test_the_json_says_how_many_clocks_stopped(capsys):
    code, out, _err = cli(capsys, "check", TRIAL_PROGRAMS / "brace8_sum.asm", "--examples", "3", "--sample", "1", "--json")
    clock = json.loads(out)["clock"]
    assert code == 0 and (clock["drawn"], clock["clocks"], clock["stopped"]) == (3, 1, 2)


# ---- Ctrl-C at a terminal --------------------------------------------------------------------

pexpect = pytest.importorskip("pexpect")
pyte = pytest.importorskip("pyte")


def interrupted_screen(*argv: str, bar_text: str, message: str) -> list[str]:
    """Run ``relaybench ARGV`` in a pseudo-terminal, press Ctrl-C once ``bar_text`` is drawn,
    wait for ``message``, and return the screen's lines as a person sees them at the end
    (everything written, played through pyte's terminal emulator)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT), "TERM": "xterm", "PROMPT_TOOLKIT_NO_CPR": "1"}
    written = io.StringIO()
    try:
        child = pexpect.spawn(sys.executable, ["-m", "emu.cli", *argv], cwd=str(ROOT), env=env,
                              encoding="utf-8", timeout=120, dimensions=(30, 150))
    except (OSError, pexpect.ExceptionPexpect) as exc:
        pytest.skip(f"no pseudo-terminal here: {exc}")
    child.logfile_read = written
    try:
        child.expect_exact(bar_text)
        child.sendintr()
        child.expect_exact(message)
        child.expect(pexpect.EOF)
    finally:
        child.close(force=True)
    assert child.exitstatus == 130
    screen = pyte.Screen(150, 30)
    pyte.Stream(screen).feed(written.getvalue())
    return [line.rstrip() for line in screen.display if line.strip()]


def test_ctrl_c_while_checking_a_machine_leaves_the_message_and_no_bar():
    seen = interrupted_screen("check", "--machine", str(TRIAL_MACHINES / "brace8.toml"), "--examples", "100000",
                              bar_text="P1 no clipped", message="interrupted after 0 of 8 properties")
    assert seen[-1] == "relaybench: interrupted after 0 of 8 properties"
    assert not any("P1" in line or "examples  [" in line for line in seen), seen


def test_ctrl_c_while_checking_a_program_says_where_it_stopped_and_leaves_no_bar():
    seen = interrupted_screen("check", str(REF8_PROGRAMS / "tickets.asm"), "--examples", "100000",
                              bar_text="operator scripts", message="; no report")
    assert seen[-1].startswith("relaybench: check interrupted during operator scripts (")
    assert seen[-1].endswith(" of 100,000 runs); no report")
    assert not any("/100,000" in line for line in seen), seen
