"""One number notation: every reader takes the same spellings to the same values.

The assembler, the micro-step parser, a micro-step inside a machine file,
command-line options and the debugger's number arguments are fed one table.
The forms are those of spec §4 (42, 0x2A, 0b101010, 'A' with the escapes
\\n \\t \\r \\0 \\\\ \\' \\"). Character codes are ASCII (ANSI X3.4 / ECMA-6:
'A' is 65, '*' is 42, newline 10, apostrophe 39, backslash 92). Leading
zeros are decimal, as in the spec (no octal). Integer keys of a machine file
are TOML's own syntax (decided by tomllib), so the machine-file column is a
micro-step constant inside the file.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

import asm
import emu
from emu.cli import build_parser
from emu.debugger import Session
from emu.description.notation import Assign, Const, parse_step

REF8 = emu.load_machine("ref8")
REF8_TEXT = (Path(emu.__file__).parent / "machines" / "ref8.toml").read_text()
NOP_STEPS = 'syntax = "nop"\nencoding = ["00000000"]\nsteps = []'

# spelling → value; None where the spelling is not a number at all.
SPELLINGS = {
    "42": 42, "0x2A": 42, "0X2a": 42, "0x2a": 42, "0b101010": 42, "0B101010": 42,
    "042": 42, "0042": 42, "0": 0, "255": 255,
    "'*'": 42, "'A'": 65, "'\\n'": 10, "'\\t'": 9, "'\\r'": 13, "'\\0'": 0,
    "'\\\\'": 92, "'\\''": 39, "'\\\"'": 34, "' '": 32,
    "0x": None, "0b": None, "0b102": None, "0xG1": None, "0o52": None, "42h": None, "2A": None,
    "4_2": None, "0x_2A": None,  # Python's int() takes these; the notation does not
    "''": None, "'AB'": None, "'''": None, "'\\q'": None, "'A": None,
}
NEGATIVE = {"-42": -42, "-0x2A": -42, "-0b101010": -42, "-'*'": -42}
"""Signed spellings: the assembler (unary minus), options and the debugger take them; a micro-step
writes a negative offset as ``e - k`` and has no signed constant."""

ALL = {**SPELLINGS, **NEGATIVE}


def in_assembler(spelling):
    source = f"value = {spelling}\n        halt\n"
    try:
        return asm.assemble_text(source, REF8).constants["value"]
    except asm.AsmError as exc:
        assert "<input>:1:" in str(exc)  # located at the line, never a traceback
        return None


def in_micro_step(spelling):
    try:
        statements = parse_step(f"t <- {spelling}")
    except emu.MachineError as exc:
        assert "micro-step" in str(exc)
        return None
    assert len(statements) == 1 and isinstance(statements[0], Assign)
    assert isinstance(statements[0].value, Const)
    return statements[0].value.value


def in_machine_file(spelling):
    """The constant in a step of a machine file (an instruction that loads it into t)."""
    step = f"steps = [{json.dumps(f't <- {spelling}')}]"  # a JSON string is a TOML basic string
    text = REF8_TEXT.replace(NOP_STEPS, NOP_STEPS.replace("steps = []", step), 1)
    assert text != REF8_TEXT
    try:
        machine = emu.machine_from_text(text, "edited.toml")
    except emu.MachineError as exc:
        assert re.match(r"edited\.toml:\d+: error: instruction 'nop' step 2: ", str(exc)), str(exc)
        return None
    nop = next(ins for ins in machine.instructions if ins.display == "nop")
    return nop.steps[0].statements[0].value.value


def in_options(spelling):
    try:
        argv = ["run", "program.asm", f"--switches={spelling}"]
        return build_parser(argv).parse_args(argv).switches
    except SystemExit as exc:
        assert exc.code == 2
        return None


def in_debugger(spelling):
    session = Session(REF8)
    session.emu.set("r0", 0x5A)  # in no row of the table, so a refused spelling shows as unchanged
    reply = session.execute(f"put r0 {spelling}")
    if "is not a number" in reply:
        assert "42, 0x2A, 0b101010 or 'A'" in reply
        assert session.emu.get("r0") == 0x5A
        return None
    return session.emu.get("r0"), reply


@pytest.mark.parametrize("spelling", list(ALL))
def test_every_reader_takes_a_spelling_to_the_same_value(spelling, capsys):
    value = ALL[spelling]
    assert in_assembler(spelling) == value
    unsigned = value if spelling not in NEGATIVE else None
    assert in_micro_step(spelling) == unsigned
    assert in_machine_file(spelling) == unsigned
    assert in_options(spelling) == value
    if value is None:
        assert in_debugger(spelling) is None
    else:
        register, reply = in_debugger(spelling)
        assert register == value & 0xFF, reply
    capsys.readouterr()
