"""``relaybench check PROGRAM``: halts planted anywhere, operators and irregular clocks.

Each program below is built to fail one way (an address written as a number,
code that reads its own words, a table that a moved halt pushes across a
page, a loop that reads the toggles, a read of the input-ready port), and the
check must name the statement and the cause; programs written only with
names must pass every part, on ref8 and on acc12.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from emu import Emulator, load_machine
from emu.checks import check_program_timing, report_json, report_lines

from cli_support import ACC12, cli

REF8 = load_machine("ref8")
ACC12_MACHINE = load_machine(ACC12)

HARD_JUMP = """\
; the jump table holds the address of done as a number
start:  ld r7, [table]
        ld r6, [table + 1]
        li r0, 3
        jmp x
        li r0, 9
done:   out 1, r0
        halt
table:  .byte 0x0B, 0x00
"""
"""ld and ld are three words, li two, jmp x one, li two: done is at 0x0B as written."""

OWN_WORDS = """\
start:  li x, start
        ld r0, [x]
        st [copy], r0
        halt
copy:   .byte 0
"""

PAGE_TABLE = """\
        li x, table
        ld r0, [x]
        inc r7
        ld r1, [x]
        inc r7
        ld r2, [x]
        halt
        .zero 0xFD - 9
table:  .byte 1, 2, 3
"""
"""Nine words of code, then the table at 0xFD…0xFF; the pointer steps by its low byte."""

TOGGLE_LOOP = """\
        li r2, 3
        li r1, 0
again:  in r0, 0
        add r1, r0
        dec r2
        jnz again
        st [sum], r1
        halt
sum:    .byte 0
"""

NAMES_ONLY = """\
; a pause after each of three rounds; the totals by name only
        li sp, 0x0100
        li r0, 0
        li r2, 3
round:  li r1, 4
step:   add r0, r2
        dec r1
        jnz step
        st [tally], r0
        out 1, r0
        pause
        .expect lamps == 12
        dec r2
        jnz round
        li r4, '#'
        out 0, r4
        halt
        .expect r0 == 24, [tally] == 24
tally:  .byte 0
"""
"""4 × (3 + 2 + 1) = 24: the lamps show 12 at the first pause, 20 and 24 later."""

ACC12_ADDRESS_AS_NUMBER = """\
start:  load 4        ; total, written as its address
        put 1
        stop
        .byte 0
total:  .byte 9
"""

ACC12_BALES = """\
; bales on the cart: rows of 4, three rows, a pause after each row
        set 3
        store rows
row:    load cart
        plus four
        store cart
        put 1
        load rows
        minus one
        store rows
        stop
        gozero full
        go row
full:   load cart
        put 0
        stop
        .expect lamps == 12
four:   .word 4
one:    .word 1
rows:   .word 0
cart:   .word 0
"""
"""3 rows × 4 bales: the lamps show 4, 8 and 12."""

ACC12_READY = """\
        get 2         ; input ready?
        put 1
        stop
"""


def checked(tmp_path, text: str, machine=REF8, name: str = "prog.asm", **options):
    path = tmp_path / name
    path.write_text(text)
    options.setdefault("examples", 3)
    options.setdefault("workers", 1)
    return check_program_timing(str(path), machine, **options)


def changed_lines(check) -> dict[int, object]:
    return {p.line: p for p in check.unsafe_placements}


def test_a_jump_table_with_a_written_address_is_named_with_its_statement(tmp_path):
    check = checked(tmp_path, HARD_JUMP)
    rows = changed_lines(check)
    # In front of the statements up to the jump, done moves and the table does not follow;
    # in front of done the label names the halt itself, and after it nothing moves that is used.
    assert sorted(rows) == [2, 3, 4, 5, 6]
    assert rows[5].statement == "jmp x"
    # x now points into the moved code: the run goes astray to the cycle limit
    assert rows[5].changed == "the run ended at a halt as written, at the cycle limit with the halt planted"
    assert rows[5].cause == (f"{tmp_path}/prog.asm:9: `.byte 0x0B, 0x00` holds the address of done as the number "
                             f"0xb, which moved to 0xc: a table of addresses written as numbers")
    assert not check.passed


def test_code_that_reads_its_own_words_is_named(tmp_path):
    check = checked(tmp_path, OWN_WORDS)
    rows = changed_lines(check)
    assert sorted(rows) == [1]
    # li x, start is opcode 0x06 as written; with the halt planted, start names the halt (0x01)
    assert rows[1].changed == "register r0 is 0x6 as written, 0x1 with the halt planted"
    assert rows[1].cause == (f"{tmp_path}/prog.asm:1: `li x, start` takes the address of code (start) as data: "
                             f"code that reads its own words reads the planted halt too")


def test_a_table_pushed_across_a_page_is_named(tmp_path):
    check = checked(tmp_path, PAGE_TABLE)
    rows = changed_lines(check)
    assert sorted(rows) == [1, 2, 3, 4, 5, 6, 7]
    # the third read wraps to 0x0000 + ... : it reads code, not the table's 3
    assert rows[4].changed.startswith("register r2 is 0x3 as written, 0x6 with the halt planted")
    assert rows[4].cause.startswith(f"{tmp_path}/prog.asm:9: the table table (3 words) now crosses a page "
                                    f"boundary at 0x100 (it starts at 0xfe, was 0xfd)")


def test_a_program_that_uses_names_only_passes_every_part(tmp_path):
    check = checked(tmp_path, NAMES_ONLY)
    assert check.status == "halted" and check.passed
    assert check.statements == len(check.placements) == 15
    assert check.scripts == 3 and not check.interleavings
    assert check.panel_reads == []
    # each placement only adds the halt's two cycles per pass: 1 pass outside the loops,
    # 3 rounds × 4 steps = 12 passes inside the inner loop, which is where it delays most
    extra = {p.line: p.extra_cycles for p in check.placements}
    assert (extra[2], extra[5], extra[6]) == (2, 6, 24)
    assert (f"the longest delay: in front of {tmp_path}/prog.asm:6 (add r0, r2) the halt adds 24 cycles ≈ 4.8 s "
            f"to the run") in "\n".join(report_lines(check))
    assert report_json(check)["halt_placement"]["longest_delay"]["line"] == 6


def test_a_loop_reading_the_toggles_is_reported_with_its_instruction(tmp_path):
    check = checked(tmp_path, TOGGLE_LOOP)
    [read] = check.timing_dependent
    assert (read.place[1], read.statement, read.device, read.reads) == (3, "in r0, 0", "switches", 3)
    assert not check.passed
    text = "\n".join(report_lines(check))
    assert f"{tmp_path}/prog.asm:3: in r0, 0  (3 reads)" in text
    assert "reads the panel toggles up to 3 times between two halts" in text


def test_toggles_read_once_after_each_halt_are_the_panels_protocol(tmp_path):
    """crane.asm asks two questions at pauses and reads the toggles once after each."""
    check = check_program_timing("programs/ref8/crane.asm", REF8, examples=2, sample=6, workers=1)
    assert [(r.place[1], r.reads, r.depends_on_timing) for r in check.panel_reads] == [(27, 1, False),
                                                                                       (33, 1, False)]
    assert check.passed


def test_an_acc12_address_written_as_a_number_is_named(tmp_path):
    check = checked(tmp_path, ACC12_ADDRESS_AS_NUMBER, ACC12_MACHINE)
    rows = changed_lines(check)
    assert sorted(rows) == [1, 2, 3]
    assert rows[2].changed == "register acc is 0x9 as written, 0x0 with the halt planted"
    assert rows[2].cause == (f"{tmp_path}/prog.asm:1: `load 4` holds the address of total as the number 0x4, "
                             f"which moved to 0x5: an address written as a number")


def test_an_acc12_program_with_names_only_passes_on_operators_and_clocks(tmp_path):
    check = checked(tmp_path, ACC12_BALES, ACC12_MACHINE, examples=4)
    assert check.passed, report_lines(check)
    clock = check.clock
    assert clock.clocks == 4 and clock.differing == ()
    assert clock.fastest_seconds < clock.slowest_seconds and clock.spread > 0
    assert clock.fastest_seconds < check.seconds * 1.2 and clock.slowest_seconds > check.seconds * 0.8


def test_an_acc12_read_of_input_ready_is_timing_dependent(tmp_path):
    check = checked(tmp_path, ACC12_READY, ACC12_MACHINE)
    [read] = check.timing_dependent
    assert (read.place[1], read.statement, read.device) == (1, "get 2", "input_ready")


def test_an_operator_script_that_changes_the_result_is_reported_with_its_actions(tmp_path, monkeypatch):
    """A STEP that spoils r3 (a broken stepping path) must show up as an interleaving."""
    real_step = Emulator.press_step

    def spoiling_step(self):
        self.set("r3", 0x5A)
        return real_step(self)

    monkeypatch.setattr(Emulator, "press_step", spoiling_step)
    check = checked(tmp_path, NAMES_ONLY, examples=6)
    assert check.interleavings
    failure = check.interleavings[0]
    assert failure.difference == ("register r3", 0, 0x5A)
    assert any("STEP ×" in action and "×0" not in action for action in failure.actions)


def test_a_machine_without_timing_skips_the_clock_part(tmp_path):
    nib4 = load_machine("tests/machines/nib4.toml")
    program = tmp_path / "p.asm"
    pause = nib4.instructions[[i.drives_halt for i in nib4.instructions].index(True)].mnemonic
    program.write_text(f"        {pause}\n")
    check = check_program_timing(str(program), nib4, examples=2, workers=1)
    assert check.clock.skipped == "nib4 has no [timing] section, so no clock can be built from parts"


def test_two_workers_find_what_one_finds(tmp_path):
    one = checked(tmp_path, HARD_JUMP, workers=1)
    two = checked(tmp_path, HARD_JUMP, workers=2)
    assert two.placements == one.placements


def test_a_machine_made_from_text_is_checked_in_this_process(tmp_path):
    """Worker processes load the machine from its file; one made from text has none."""
    from emu import machine_from_text
    machine = machine_from_text(Path(ACC12).read_text(encoding="utf-8"))
    check = checked(tmp_path, ACC12_ADDRESS_AS_NUMBER, machine, workers=2)
    assert sorted(changed_lines(check)) == [1, 2, 3]


def test_the_command_exits_0_on_a_pass_and_1_on_a_failure_with_json(tmp_path, capsys):
    good, bad = tmp_path / "good.asm", tmp_path / "bad.asm"
    good.write_text(NAMES_ONLY)
    bad.write_text(OWN_WORDS)
    code, out, _err = cli(capsys, "check", str(good), "--examples", "2", "--json")
    assert code == 0
    facts = json.loads(out)
    assert (facts["passed"], facts["halt_placement"]["checked"], facts["operator"]["scripts"]) == (True, 15, 2)
    code, out, _err = cli(capsys, "check", str(bad), "--examples", "2", "--json")
    assert code == 1
    [row] = json.loads(out)["halt_placement"]["changed"]
    assert (row["line"], row["statement"]) == (1, "li x, start")


def test_the_table_shows_each_part_and_the_verdict(tmp_path, capsys):
    program = tmp_path / "own.asm"
    program.write_text(OWN_WORDS)
    code, out, _err = cli(capsys, "check", str(program), "--examples", "2")
    lines = out.splitlines()
    assert code == 1
    assert lines[0] == f"check {program} on ref8  (free run: 11 cycles ≈ 2.2 s, ended at a halt)"
    assert lines[-1] == f"FAIL  {program}"
    assert lines[2] == "  operator          pass  2 scripts of STOP, STEP, RUN and RESUME: the free run's result every time"
    assert lines[3] == "  halt placement    FAIL  4 statements: a halt changes the result in front of 1:"
    assert lines[4].split() == [f"{program}:1", "li", "x,", "start"]


def test_a_sample_plants_that_many_halts_drawn_from_the_seed(tmp_path, capsys):
    program = tmp_path / "p.asm"
    program.write_text(NAMES_ONLY)
    facts = json.loads(cli(capsys, "check", str(program), "--examples", "1", "--sample", "4", "--json")[1])
    assert (facts["halt_placement"]["checked"], facts["halt_placement"]["statements"]) == (4, 15)
    assert "a sample" in "\n".join(report_lines(checked(tmp_path, NAMES_ONLY, sample=4)))


def test_a_program_that_does_not_assemble_is_a_located_error(tmp_path, capsys):
    program = tmp_path / "broken.asm"
    program.write_text("        li r0, 1\n        frobnicate r1\n        halt\n")
    code, out, err = cli(capsys, "check", str(program))
    assert (code, out) == (1, "")
    assert err.startswith(f"{program}:2:9: error:")
    assert "frobnicate r1" in err and "Traceback" not in err


@pytest.mark.parametrize("option, value", [("--examples", "0"), ("--sample", "-1"), ("--seed", "many")])
def test_bad_options_are_usage_errors(tmp_path, capsys, option, value):
    program = tmp_path / "p.asm"
    program.write_text(NAMES_ONLY)
    code, _out, err = cli(capsys, "check", str(program), option, value)
    assert code == 2 and "usage: relaybench check" in err and option in err


def test_the_json_report_is_plain_json_values(tmp_path):
    check = checked(tmp_path, HARD_JUMP)
    facts = report_json(check)
    assert json.loads(json.dumps(facts)) == facts
