"""Operand kinds that list register groups: loading, the width rule, assembler,
disassembler and ``isa`` on pair8 (tests/machines/pair8.toml).

What the instructions compute is tested in test_instructions_pair8.py; the
halt/step/resume properties and fused ≡ stepping run on pair8 with every
other machine file (engine_support).
"""

from __future__ import annotations

from pathlib import Path

import pytest

import asm
import emu
from emu.description.notation import Name, value_width

from cli_support import cli

PAIR8_PATH = Path(__file__).parent / "machines" / "pair8.toml"
PAIR8_TEXT = PAIR8_PATH.read_text(encoding="utf-8")
PAIR8 = emu.load_machine(PAIR8_PATH)
KIND_LINE = 'pair = { registers = ["bc", "de", "hl"] }'


def pair8_with(old: str, new: str) -> str:
    assert old in PAIR8_TEXT
    return PAIR8_TEXT.replace(old, new, 1)


@pytest.mark.parametrize("old, new, message", [
    (KIND_LINE, 'pair = { registers = ["bc", "xy", "hl"] }',
     "pair8.toml:44: error: [operands] pair: unknown register or group 'xy' in 'registers'"),
    (KIND_LINE, 'pair = { registers = ["bc", "de", "bc"] }',
     "pair8.toml:44: error: [operands] pair: group 'bc' is listed twice in 'registers'"),
    (KIND_LINE, 'pair = { registers = ["bc", "a", "hl"] }',
     "pair8.toml:44: error: [operands] pair: 'registers' lists groups and the register 'a': "
     "a kind selects either registers or groups, not both"),
    ('hl = ["h", "l"]', 'hl = ["h", "l", "a"]',
     "pair8.toml:44: error: [operands] pair: the groups in 'registers' must have the same shape: "
     "'bc' has parts of 8+8 bits, 'hl' of 8+8+8"),
    (KIND_LINE, 'pair = { registers = [["bc"]] }',
     "pair8.toml:44: error: [operands] pair: 'registers' must be a non-empty list of register or group "
     "names, not a list holding ['bc']"),
], ids=["unknown name", "a group twice", "groups and a register", "groups of different widths", "not a name"])
def test_a_kind_over_groups_that_could_not_work(old, new, message):
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(pair8_with(old, new), "pair8.toml")
    assert str(caught.value) == message


def test_groups_of_one_width_but_another_shape_are_refused():
    """A selector drives the same part of every group, so 4+12 cannot stand beside 8+8."""
    text = pair8_with('d = 8', 'd = 4').replace('e = 8', 'e = 12', 1)
    with pytest.raises(emu.MachineError, match=r"'bc' has parts of 8\+8 bits, 'de' of 4\+12$"):
        emu.machine_from_text(text, "pair8.toml")


def test_a_field_selecting_groups_is_as_wide_as_they_are():
    incp = next(i for i in PAIR8.instructions if i.display == "incp p")
    assert value_width(Name("p"), PAIR8, incp.fields) == 16
    too_wide = pair8_with('steps = ["p <- {a, b}"]', 'steps = ["p <- {a, b, a}"]')
    with pytest.raises(emu.MachineError, match="'p' holds 16 bits but the value written to it has 24"):
        emu.machine_from_text(too_wide, "pair8.toml")


SOURCE = """\
        lp hl, table
        ld a, [hl]
        sti [de], b
        swap bc, hl
        halt
table:  .byte 7
"""


def test_the_assembler_takes_the_group_names_and_the_disassembler_prints_them():
    program = asm.assemble_text(SOURCE, PAIR8, "p.asm")
    words = program.flat()
    # lp is 000100 p with hl = 2; ld a, [hl] is 00101 r p with a = 0; sti 00111 r p with b = 1, de = 1
    assert words[:7] == [0b00010010, 7, 0, 0b00101010, 0b00111101, 0b01010010, 0x01]
    lines = [line.split(";")[0].strip() for line in asm.disassemble(PAIR8, words, 0)]
    # the constant reaches a pair, so the disassembler takes it for an address (hex, or its label)
    assert lines[1:6] == ["lp hl, 0x0007", "ld a, [hl]", "sti [de], b", "swap bc, hl", "halt"]


@pytest.mark.parametrize("line, message", [
    ("incp a", "a cannot stand here: this operand takes bc, de or hl"),
    ("incp ut", "ut is not a register group of pair8 (bc, de or hl)"),   # ut is internal: no name to a program
    ("incp xy", "xy is not a register group of pair8 (bc, de or hl)"),
])
def test_a_wrong_name_for_a_pair_is_located(line, message):
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text(line + "\n", PAIR8, "p.asm")
    assert caught.value.diagnostics[0].message == message


def test_isa_lists_what_each_register_operand_selects(capsys):
    code, out, _ = cli(capsys, "isa", "--brief", "--machine", PAIR8_PATH)
    assert code == 0
    assert "register operands (values by field number from 0): pair = bc, de, hl; acc = a, b" in out
