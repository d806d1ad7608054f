"""Planted halts: assembling with a halt in front of statements, and what it changes.

The oracle for "addresses shift exactly as on the real machine" is the
programmer's own way of planting a halt: writing ``pause`` into the source
by hand and assembling that through the ordinary path. The planted image
and labels must be the same word for word. The runs then compare the
results (registers, flags, lamps, console, memory named by labels) of the
program with and without the halts, resuming at each halt as the operator
would.
"""

from __future__ import annotations

import re

import pytest
from hypothesis import given, settings, strategies as st

import asm
from emu.runs import check_planting

from debugger_programs import ACC12, GAUGE, KILN, REF8

TALLY = """\
; tally: three gauge readings added into a total cell, then a mark on the console
start:  ld r0, [readings]
        ld r1, [readings + 1]
        add r0, r1
        ld r1, [readings + 2]
        add r0, r1
        st [total], r0
        li r2, 'T'
        out 0, r2
        halt
readings: .byte 4, 9, 30
total:  .byte 0
"""

TILL = """\
; till on acc12: three takings added into a total, shown on the lamps
start:  load takings
        plus takings + 1
        plus takings + 2
        store total
        put 1
        stop
takings: .byte 40, 300, 7
total:  .byte 0
"""

PROGRAMS = [(REF8, KILN, "kiln.asm"), (REF8, TALLY, "tally.asm"),
            (ACC12, GAUGE, "gauge.asm"), (ACC12, TILL, "till.asm")]


def assembled(machine, text, name):
    return asm.assemble_text(text, machine, filename=name)


def code_places(program):
    return sorted({(e.file, e.line) for e in program.lines if e.kind == "code"})


def pause_written_before(text: str, lines: set[int]) -> str:
    """The source with ``pause`` typed in front of each line, a label staying on the pause."""
    rows = text.split("\n")
    for number in sorted(lines, reverse=True):
        labelled = re.match(r"(\s*[A-Za-z_]\w*:)(.*)", rows[number - 1])
        if labelled:
            rows[number - 1:number] = [f"{labelled[1]} pause", f"        {labelled[2].strip()}"]
        else:
            rows.insert(number - 1, "        pause")
    return "\n".join(rows)


def test_a_halt_in_front_of_a_call_moves_the_routines_after_it_by_one_word():
    original = assembled(REF8, KILN, "kiln.asm")
    planting = asm.plant_halts(original, [("kiln.asm", 4)])
    # ramp: names the halt, so the loop's jnz comes back to it; log and mark move by one.
    assert planting.halts == {("kiln.asm", 4): (5,)}
    assert planting.program.labels["ramp"] == 5 == original.labels["ramp"]
    assert [(m.name, m.kind, m.old, m.new) for m in planting.moved] == [
        ("log", "code", 0x12, 0x13), ("mark", "code", 0x17, 0x18)]
    # ref8's pause is its halt instruction (ref8.toml: pause = "halt"), one word.
    halt_word = assembled(REF8, "halt\n", "h.asm").flat()
    assert planting.program.flat()[5:6] == halt_word
    assert 5 in planting.program.pauses
    # Source lines stay those of the file: the halt and its statement both map to line 4.
    assert planting.program.source_map[5] == ("kiln.asm", 4) == planting.program.source_map[6]
    assert planting.program.source_map[0x13] == ("kiln.asm", 11) == original.source_map[0x12]
    assert planting.relocate(0x12) == 0x13 and planting.original_address(0x13) == 0x12
    assert planting.original_address(5) is None


def test_moved_data_and_a_constant_that_measures_the_code_are_named():
    text = "start: li r0, 1\n       halt\ntable: .byte 1, 2\n       .byte 3\nSIZE = table - start\n"
    planting = asm.plant_halts(assembled(REF8, text, "t.asm"), [("t.asm", 1)])
    assert [(m.name, m.kind, m.old, m.new) for m in planting.moved] == [
        ("SIZE", "constant", 3, 4), ("table", "data", 3, 4), ("t.asm:4", "data", 5, 6)]


@pytest.mark.parametrize("machine, text, name", PROGRAMS, ids=[p[2] for p in PROGRAMS])
@settings(max_examples=25, deadline=None)
@given(data=st.data())
def test_planted_image_is_the_one_with_pause_written_by_hand(machine, text, name, data):
    original = assembled(machine, text, name)
    chosen = data.draw(st.sets(st.sampled_from(code_places(original)), min_size=1, max_size=3))
    planting = asm.plant_halts(original, chosen)
    by_hand = assembled(machine, pause_written_before(text, {line for _file, line in chosen}), name)
    assert planting.program.image() == by_hand.image()
    assert planting.program.labels == by_hand.labels
    assert sorted(planting.program.pauses) == sorted(by_hand.pauses)


@pytest.mark.parametrize("machine, text, name", PROGRAMS, ids=[p[2] for p in PROGRAMS])
@settings(max_examples=25, deadline=None)
@given(data=st.data())
def test_planting_and_resuming_leaves_the_results_of_the_plain_run(machine, text, name, data):
    original = assembled(machine, text, name)
    place = data.draw(st.sampled_from(code_places(original)))
    planting, divergence = check_planting(original, machine, [place], path=name)
    assert divergence is None
    assert planting.halts[place]


def test_an_address_kept_in_labelled_memory_is_named_by_its_label():
    text = "start:  li r0, 1\n        halt\nptr:    .byte table\ntable:  .byte 7\n"
    original = assembled(REF8, text, "ptr.asm")
    _planting, divergence = check_planting(original, REF8, [("ptr.asm", 1)], path="ptr.asm")
    assert (divergence.what, divergence.plain, divergence.planted) == ("memory ptr", 4, 5)
    assert divergence.text == "memory ptr (0003, now 0004) holds 0x4 without the halt, 0x5 with it"


def test_a_table_address_kept_as_data_is_reported_where_it_differs():
    """ptr holds the address of table: a halt planted above table changes that word."""
    text = ("start:  ld r0, [ptr]\n        st [copy], r0\n        halt\n"
            "ptr:    .byte table\ntable:  .byte 7\ncopy:   .byte 0\n")
    original = assembled(REF8, text, "self.asm")
    _planting, divergence = check_planting(original, REF8, [("self.asm", 2)], path="self.asm")
    # r0 was loaded from ptr before the halt is reached... and ptr itself moved with the code:
    assert divergence.what == "register r0"
    assert (divergence.plain, divergence.planted) == (original.labels["table"], original.labels["table"] + 1)
    assert divergence.text == "register r0 is 0x8 without the halt, 0x9 with it"


def test_code_that_reads_its_own_words_at_a_written_address_is_reported():
    """ld from a number, not a label: 0x0002 is the high byte of the ld's own address (0),
    behind the halt it is the low byte (2)."""
    text = "start:  ld r0, [0x0002]\n        st [copy], r0\n        halt\ncopy:   .byte 0\n"
    original = assembled(REF8, text, "own.asm")
    _planting, divergence = check_planting(original, REF8, [("own.asm", 1)], path="own.asm")
    assert (divergence.what, divergence.plain, divergence.planted) == ("register r0", 0, 2)


def test_an_acc12_program_that_stores_an_address_is_reported_in_memory():
    text = ("start:  load where\n        store copy\n        stop\n"
            "where:  .byte total\ncopy:   .byte 0\ntotal:  .byte 0\n")
    original = assembled(ACC12, text, "where.asm")
    _planting, divergence = check_planting(original, ACC12, [("where.asm", 2)], path="where.asm")
    # load, store and stop are one word each on acc12: total is at 5, and at 6 behind the halt.
    assert (divergence.what, divergence.plain, divergence.planted) == ("register acc", 5, 6)


def test_planting_in_front_of_what_is_no_instruction_is_a_located_error():
    original = assembled(REF8, TALLY, "tally.asm")
    with pytest.raises(asm.AsmError) as caught:
        asm.plant_halts(original, [("tally.asm", 11)])
    assert str(caught.value) == ("tally.asm:11:1: error: a halt can be planted only in front of an instruction\n"
                                 "    readings: .byte 4, 9, 30\n    ^")


def test_an_included_file_changed_since_assembly_is_refused(tmp_path):
    (tmp_path / "lib.inc").write_text("mark: inc r3\n      ret\n")
    main = tmp_path / "main.asm"
    main.write_text('start: call mark\n       halt\n.include "lib.inc"\n')
    original = asm.assemble_file(main, REF8)
    (tmp_path / "lib.inc").write_text("mark: inc r3\n      inc r3\n      ret\n")
    with pytest.raises(asm.AsmError, match="changed since the program was assembled"):
        asm.plant_halts(original, [(str(main), 1)])


def test_a_jump_to_a_written_address_ends_at_another_halt_and_that_is_reported():
    """jmp 0x0004 means the second halt as written; behind a planted halt it is the first."""
    text = "start:  jmp 0x0004\n        halt\n        halt\n"
    original = assembled(REF8, text, "jump.asm")
    _planting, divergence = check_planting(original, REF8, [("jump.asm", 1)], path="jump.asm")
    assert (divergence.what, divergence.plain, divergence.planted) == (
        "stop", ("jump.asm", 3), ("jump.asm", 2))
    assert divergence.text == "it stopped at jump.asm:3 without the halt, at jump.asm:2 with it"


def test_an_address_shown_on_the_console_is_reported():
    text = "start:  li r0, table\n        out 0, r0\n        li r0, 0\n        halt\ntable:  .byte 0\n"
    original = assembled(REF8, text, "show.asm")
    _planting, divergence = check_planting(original, REF8, [("show.asm", 1)], path="show.asm")
    # li two words, out two, li two, halt one: table at 0x07, behind the halt 0x08.
    assert (divergence.what, divergence.plain, divergence.planted) == ("output", b"\x07", b"\x08")


def test_an_address_shown_on_the_acc12_lamps_is_reported():
    text = "start:  set table\n        put 1\n        set 0\n        stop\ntable:  .byte 0\n"
    original = assembled(ACC12, text, "lamp.asm")
    _planting, divergence = check_planting(original, ACC12, [("lamp.asm", 2)], path="lamp.asm")
    assert (divergence.what, divergence.plain, divergence.planted) == ("lamps", 4, 5)


def test_a_label_alone_on_the_line_above_names_the_planted_halt():
    text = "start:  li r0, 2\nagain:\n        dec r0\n        jnz again\n        halt\n"
    planting = asm.plant_halts(assembled(REF8, text, "loop.asm"), [("loop.asm", 3)])
    by_hand = assembled(REF8, text.replace("again:\n", "again:\n        pause\n"), "loop.asm")
    assert planting.program.labels["again"] == planting.halts[("loop.asm", 3)][0] == 2
    assert planting.program.image() == by_hand.image()
