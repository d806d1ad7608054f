"""Named values of a number operand kind, on cond4's goto (``go z, loop``).

cond4 (tests/machines/cond4.toml) names the four values of its 2-bit
``cond`` kind: never = 0b00, c = 0b01, z = 0b10, zc = 0b11. The loader
checks the names, the assembler reads them (and plain numbers), the
disassembler, ``isa`` and the debugger's code view write them back.
"""

from __future__ import annotations

import json

import pytest

import asm
import emu
from cli_support import cli, write
from engine_support import COND4_PATH

COND4 = emu.load_machine(COND4_PATH)
COND4_TEXT = COND4_PATH.read_text(encoding="utf-8")
NAMES = "never = 0b00, c = 0b01, z = 0b10, zc = 0b11"


def words_of(source: str) -> list[int]:
    return asm.assemble_text(source, COND4, filename="t.asm").flat()


def diagnostics(source: str):
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text(source, COND4, filename="t.asm")
    return [(d.line, d.column, d.message) for d in caught.value.diagnostics]


# ----- the machine file ---------------------------------------------------------------------

def test_the_kind_keeps_its_names_in_file_order():
    kind = COND4.operand_kinds["cond"]
    assert kind.value_names == (("never", 0), ("c", 1), ("z", 2), ("zc", 3))
    assert kind.value_named("ZC") == 3 and kind.value_named("nz") is None
    assert kind.name_of(2) == "z"


BAD_NAMES = {
    "a value the bits cannot hold": (
        NAMES.replace("zc = 0b11", "zc = 4"), "'zc' must be an integer the operand holds (0…3), not 4"),
    "a value that is not a number": (
        NAMES.replace("zc = 0b11", 'zc = "3"'), "'zc' must be an integer the operand holds (0…3), not '3'"),
    "two names for one value": (
        NAMES.replace("zc = 0b11", "zc = 0b10"), "'zc' and 'z' both stand for 2; give each value one name"),
    "names differing only in case": (
        NAMES.replace("zc = 0b11", "ZC = 0b11, zc = 1"),
        "the value name 'zc' differs from 'ZC' only in case (names are matched in any case)"),
    "a register's name": (
        NAMES.replace("zc", "A"), "the value name 'A' is also the register 'a'; a program could not tell them apart"),
    "a group's name": (
        NAMES.replace("zc", "hml"),
        "the value name 'hml' is also the register group 'hml'; a program could not tell them apart"),
    "a mnemonic": (
        NAMES.replace("zc", "poll"),
        "the value name 'poll' is also the mnemonic of 'poll'; a program line would read ambiguously"),
    "a name the assembler cannot read": (
        NAMES.replace("zc", '"1x"'), "a value name must be a name the assembler reads (letters, digits and _, "
                                     "not starting with a digit), not '1x'"),
}


@pytest.mark.parametrize("names, message", BAD_NAMES.values(), ids=BAD_NAMES.keys())
def test_a_bad_value_name_is_located_in_the_machine_file(names, message):
    line = COND4_TEXT[:COND4_TEXT.index(NAMES)].count("\n") + 1
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(COND4_TEXT.replace(NAMES, names), "cond4.toml")
    assert str(caught.value).splitlines()[0] == f"cond4.toml:{line}: error: [operands] cond: {message}"


def test_a_value_name_may_not_be_a_literal_word_of_a_syntax_string():
    text = COND4_TEXT.replace('syntax = "ready"', 'syntax = "ready now"').replace(NAMES, NAMES.replace("zc", "now"))
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text, "cond4.toml")
    assert str(caught.value).splitlines()[0].endswith(
        "error: [operands] cond: the value name 'now' is also a word of the syntax 'ready now'; "
        "a program line would read ambiguously")


@pytest.mark.parametrize("old, new, message", [
    ("cond = { bits = 2, names", 'cond = { bits = 2, relative = "next", names',
     "'names' is for values; a relative kind's operand is a target address"),
    ("cond = { bits = 2, names", 'cond = { registers = ["a", "b"], names',
     "'names' is for number operands; this kind lists registers"),
    (f"names = {{ {NAMES} }}", "names = {}", "'names' must name at least one value, e.g. { nz = 0b1001 }"),
    (f"names = {{ {NAMES} }}", "names = [1]", "'names' must be a table, not a list"),
])
def test_names_only_where_a_value_is_read(old, new, message):
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(COND4_TEXT.replace(old, new), "cond4.toml")
    assert str(caught.value).splitlines()[0].endswith(f"error: [operands] cond: {message}")


# ----- the assembler ------------------------------------------------------------------------

def test_names_in_any_case_and_plain_numbers_assemble_alike():
    # go cc, dest: 0111 | cc 00 | dest in three words, top nibble first
    assert words_of("go z, 0x123\n") == [0x7, 0b1000, 0x1, 0x2, 0x3]
    assert words_of("go Z, 0x123\n") == words_of("go 2, 0x123\n") == words_of("go 0b10, 0x123\n")
    assert words_of("k = 3\ngo k, 0\n") == words_of("go zc, 0\n") == [0x7, 0b1100, 0, 0, 0]


def test_a_value_name_wins_over_a_label_of_the_same_name_in_its_position():
    # z is a label at 5 and a value name (2): the cond position reads the name, the address the label
    source = "go z, z\nz: stop\n"
    assert words_of(source) == [0x7, 0b1000, 0x0, 0x0, 0x5, 0x0]


@pytest.mark.parametrize("source, line, column, message", [
    ("go nz, 0\n", 1, 4, "'nz' is not a value of cond (never, c, z, zc or a number 0…3) (did you mean 'z'?)"),
    ("go neverr, 0\n", 1, 4, "'neverr' is not a value of cond (never, c, z, zc or a number 0…3) "
                             "(did you mean 'never'?)"),
    ("go 4, 0\n", 1, 4, "4 does not fit cond (0…3)"),
    ("go z\n", 1, 1, "go takes: go cc, dest"),
])
def test_program_errors_on_named_operands_are_located(source, line, column, message):
    assert diagnostics(source) == [(line, column, message)]


def test_a_misspelt_name_renders_with_a_caret():
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text("top:  go zz, top\n", COND4, filename="wait.asm")
    assert str(caught.value) == ("wait.asm:1:10: error: 'zz' is not a value of cond (never, c, z, zc or a "
                                 "number 0…3) (did you mean 'z'?)\n"
                                 "    top:  go zz, top\n"
                                 "             ^")


# ----- written back -------------------------------------------------------------------------

def test_the_disassembler_writes_the_name_and_reads_back():
    source = "start: go never, start\n go c, start\n go Z, start\n go 3, start\n stop\n"
    program = asm.assemble_text(source, COND4, filename="t.asm")
    lines = [line.split(";")[0].strip() for line in asm.disassemble(COND4, program.flat(), 0, program)]
    assert lines == [".org 0x000", "start:", "go never, start", "go c, start", "go z, start", "go zc, start",
                     "stop"]
    assert asm.assemble_text("\n".join(lines) + "\n", COND4).flat() == program.flat()


def test_the_code_view_reads_one_instruction_with_its_name():
    words = words_of("go c, 0x0AB\n")
    assert asm.disassemble_at(COND4, words.__getitem__, 0) == ("go c, 0x0AB", 5)


def test_isa_lists_the_names_with_their_bits(capsys):
    code, out, _ = cli(capsys, "isa", "--brief", "--machine", str(COND4_PATH))
    assert code == 0
    lines = out.splitlines()
    at = lines.index("operand values (name = bits):")
    assert lines[at + 1] == "  cond     never = 00, c = 01, z = 10, zc = 11  (or a number 0…3)"
    code, out, _ = cli(capsys, "isa", "--json", "--machine", str(COND4_PATH))
    assert json.loads(out)["operand_values"] == {"cond": {"never": 0, "c": 1, "z": 2, "zc": 3}}


def test_dis_and_the_listing_show_the_names(capsys, tmp_path):
    source = write(tmp_path, "wait.asm", "top: go z, top\n     stop\n")
    code, _out, _err = cli(capsys, "asm", "--machine", str(COND4_PATH), str(source), "--listing")
    assert code == 0
    listing = (tmp_path / "wait.lst").read_text(encoding="utf-8")
    assert "go z, top" in listing
    code, out, _ = cli(capsys, "dis", "--machine", str(COND4_PATH), str(tmp_path / "wait.hex"))
    assert code == 0 and "go z, top" in out
