"""Every instruction's ``syntax`` is read at load by the operand grammar the assembler shares.

A form the assembler could never read is refused at load with the
instruction named; a form it can read assembles (ref8, emu/machines/ref8.toml).
"""

from __future__ import annotations

import pytest

import asm
import emu
from emu.description import shipped_machines

REF8_TEXT = shipped_machines()["ref8"].read_text(encoding="utf-8")
JMP_X = 'syntax = "jmp x"'


def with_syntax(new: str) -> str:
    assert REF8_TEXT.count(JMP_X) == 1
    return REF8_TEXT.replace(JMP_X, f'syntax = "{new}"')


@pytest.mark.parametrize("form, message", [
    ("jmp [x+]", "instruction 'jmp [x+]': cannot read the syntax at column 7"),
    ("jmp ((x)", "instruction 'jmp ((x)': cannot read the syntax at column 7 (2 '(' but 1 ')' around this operand)"),
    ("jmp x y", "instruction 'jmp x y': cannot read the syntax at column 7"),
    ("jmp x,", "instruction 'jmp x,': cannot read the syntax at column 7"),
])
def test_a_form_the_assembler_cannot_read_is_refused_at_load(form, message):
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(with_syntax(form), "mine.toml")
    assert caught.value.text().startswith(message)
    assert caught.value.line == REF8_TEXT[:REF8_TEXT.index(JMP_X)].count("\n") + 1
    assert caught.value.text().rstrip().endswith("^")


def test_a_decorated_form_is_read_and_assembles():
    machine = emu.machine_from_text(with_syntax("jmp (x)"), "mine.toml")
    jmp = next(i for i in machine.instructions if i.mnemonic == "jmp" and i.operands[0].field is None)
    assert jmp.operands[0].text() == "(x)"
    plain = emu.load_machine("ref8")
    expected = asm.assemble_text("jmp x\n", plain).flat()
    assert asm.assemble_text("jmp (x)\n", machine).flat() == expected


def test_a_value_in_decoration_is_read_inside_it():
    """``jmp (addr)`` takes ``(far)`` and ``((2 + 3))``: the outer parentheses are the form's, the rest the value."""
    machine = emu.machine_from_text(REF8_TEXT.replace('syntax = "jmp addr:addr"', 'syntax = "jmp (addr:addr)"'),
                                    "mine.toml")
    program = asm.assemble_text("far = 0x1234\n  jmp (far)\n  jmp ((2 + 3))\n", machine)
    assert program.flat() == [0b00001000, 0x34, 0x12, 0b00001000, 5, 0]    # ref8.toml: opcode, low, high
