"""Signed and pc-relative operand kinds, and data wider than a word, on alu4.

alu4 (tests/machines/alu4.toml) has 4-bit words and 8-bit addresses; its
``br rel`` is two words, and ``rel`` is a 4-bit two's-complement distance
counted from the next instruction. All offsets and words below are
computed by hand (the comments give the arithmetic); a 4-bit two's
complement −d is 16 − d (by definition).
"""

from __future__ import annotations

from pathlib import Path

import pytest

import asm
import emu

from engine_support import run_program

ALU4_PATH = Path(__file__).parent / "machines" / "alu4.toml"
ALU4 = emu.load_machine(ALU4_PATH)

PROGRAM = """\
start:  ldi 5       ; 0-1
        br fwd      ; 2-3: next is 4, fwd is 6: +2
back:   stop        ; 4
        stop        ; 5
fwd:    addx 12     ; 6-7
        br back     ; 8-9: next is 10, back is 4: -6 = 0xA
msg:    .byte "A"   ; 10-11: 'A' = 0x41, low word first: 1, 4
ptr:    .word fwd   ; 12-13: 6 = 0x06, low word first: 6, 0
"""
WORDS = [1, 5, 5, 2, 0, 0, 2, 12, 5, 0xA, 1, 4, 6, 0]


def machine_text(old: str, new: str) -> emu.Machine:
    text = ALU4_PATH.read_text(encoding="utf-8")
    assert text.count(old) == 1
    return emu.machine_from_text(text.replace(old, new), "alu4-variant.toml")


def test_a_relative_branch_assembles_to_hand_computed_distances():
    assert asm.assemble_text(PROGRAM, ALU4).flat() == WORDS


def test_the_distance_counted_from_the_instruction_itself():
    this = machine_text('relative = "next"', 'relative = "this"')
    words = asm.assemble_text(PROGRAM, this).flat()
    assert words[2:4] == [5, 4]      # fwd 6 − br at 2 = +4
    assert words[8:10] == [5, 0xC]   # back 4 − br at 8 = −4 = 16 − 4


@pytest.mark.parametrize("path", ["fused", "stepped"])
def test_the_branch_runs_to_its_target(path):
    run = run_program(ALU4, WORDS, path)
    assert run.emu.get("acc") == (5 + 12) & 0xF   # ldi 1 at 4-5 never ran: br skipped to addx
    assert run.emu.get("c") == 1
    assert run.emu.get("pc") == 5                 # stopped at back (4)


@pytest.mark.parametrize("gap, distance", [(8, 8), (0, 0)])   # far = 2 + gap
def test_a_distance_out_of_range_is_a_located_error_that_says_it(gap, distance):
    source = "        br far\n" + "        stop\n" * gap + "far:    stop\n"
    if distance == 0:
        assert asm.assemble_text(source, ALU4).flat()[:2] == [5, 0]   # far right after: 0
        return
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text(source, ALU4)
    assert str(caught.value).startswith(
        "<input>:1:12: error: the target 0x0A is 8 words from the next instruction (0x02); rel reaches -8…7")


def test_a_backward_distance_past_the_range_is_refused():
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text("top:    stop\n" + "        stop\n" * 7 + "        br top\n", ALU4)
    assert "the target 0x00 is -10 words from the next instruction (0x0A)" in str(caught.value)


def test_the_disassembler_shows_the_target_and_its_label():
    program = asm.assemble_text(PROGRAM, ALU4)
    plain = [line.split(";")[0].strip() for line in asm.disassemble(ALU4, WORDS[:10], 0)]
    assert "br 0x06" in " ".join(plain) and "br 0x04" in " ".join(plain)
    labelled = " ".join(asm.disassemble(ALU4, WORDS[:10], 0, program))
    assert "br fwd" in labelled and "br back" in labelled


def test_a_signed_kind_takes_its_twos_complement_range():
    kind = ALU4.operand_kinds["rel"]
    assert (kind.low, kind.high, kind.signed, kind.relative) == (-8, 7, True, "next")


def test_a_character_wider_than_a_word_is_refused_when_its_code_is_above_255():
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text('.byte "é€"\n', ALU4)
    assert "does not fit 2 data words (a character is 8 bits) (0…255)" in str(caught.value)
    assert asm.assemble_text('.byte "é"\n', ALU4).flat() == [0x9, 0xE]   # é = 0xE9


def test_a_word_holds_an_address_in_as_many_words_as_it_needs():
    assert asm.assemble_text(".word 0xAB, -1\n", ALU4).flat() == [0xB, 0xA, 0xF, 0xF]


def test_a_signed_or_relative_key_on_a_register_kind_is_refused():
    with pytest.raises(emu.MachineError) as caught:
        machine_text('imm = { bits = 4 }', 'imm = { registers = ["acc"], signed = true }')
    assert "'signed' is for number operands" in str(caught.value)


def test_a_branch_back_past_address_0_wraps_round_the_end_of_memory():
    """br at 2 (next is 4) to 0xFF: 4 − 5 = −1, which is 0xFF in alu4's 256 words (8-bit pc),
    so the distance is −5 = 16 − 5 = 0xB; the disassembler writes it back as 0xFF
    (found by ``relaybench check --machine alu4.toml``, round trip)."""
    program = asm.assemble_text("stop\nstop\nbr 0xFF\n", ALU4)
    assert program.flat() == [0, 0, 5, 0xB]
    assert "br 0xFF" in asm.disassemble(ALU4, program.flat(), 0)[-1]
    with pytest.raises(asm.AsmError, match="124 words from the next instruction"):
        asm.assemble_text("stop\nstop\nbr 0x80\n", ALU4)
