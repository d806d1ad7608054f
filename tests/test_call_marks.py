"""Calls and returns as the machine file marks them: loading, checks, and the debugger's use.

link8 (tests/machines/link8.toml) keeps its return address in a register
(`jl` links into lr, `jr` jumps through it), which no inference from the
micro-steps can tell from a plain jump; ref8 marks its stack call and return.
"""

from __future__ import annotations

from pathlib import Path

import pytest

import emu
from emu.debugger import call_shape
from emu.debugger import inferred_call_shape

from debugger_programs import session_for

LINK8_PATH = Path(__file__).parent / "machines" / "link8.toml"
LINK8_TEXT = LINK8_PATH.read_text(encoding="utf-8")
LINK8 = emu.load_machine(LINK8_PATH)
REF8 = emu.load_machine("ref8")

TWICE = """\
start:  set 1       ; 0
        jl twice    ; 2: a call through lr
        show        ; 4
        halt        ; 5
twice:  bump        ; 6
        bump
        jr
"""


@pytest.fixture(autouse=True)
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)


def unmarked(text: str) -> str:
    return text.replace('call = "link"\nlink = "lr"\n', "").replace("returns = true\n", "")


def link8_with(old: str, new: str) -> str:
    assert LINK8_TEXT.count(old) == 1, old
    return LINK8_TEXT.replace(old, new)


def test_link8_marks_load_into_its_instructions():
    by_name = {ins.mnemonic: ins for ins in LINK8.instructions}
    assert by_name["jl"].call == emu.description.CallMark("link", "lr")
    assert by_name["jr"].returns and by_name["jr"].call is None
    assert not by_name["jmp"].returns and by_name["jmp"].call is None
    shape = call_shape(LINK8)
    assert shape.calls == {by_name["jl"].index} and shape.returns == {by_name["jr"].index}


def test_ref8_marks_say_what_the_inference_found():
    """ref8's contract (/work/shared/spec/ref8.md): call pushes the return address, ret pops it."""
    by_name = {ins.display: ins for ins in REF8.instructions}
    assert by_name["call addr"].call == emu.description.CallMark("stack", "sp")
    assert by_name["ret"].returns
    assert call_shape(REF8) == inferred_call_shape(REF8)


def test_without_marks_a_link_call_is_not_seen():
    assert call_shape(emu.machine_from_text(unmarked(LINK8_TEXT), "plain.toml")).calls == frozenset()


def test_over_steps_over_a_link_register_call(tmp_path):
    session = session_for(tmp_path, TWICE, LINK8, "twice.asm")
    session.execute("instr")
    assert session.emu.pc == 2
    assert session.execute("over").startswith("stepped over one instruction")
    assert session.emu.pc == 4 and session.emu.get("a") == 3


def test_over_on_an_unmarked_file_stops_inside_the_routine(tmp_path):
    """What the marks fix: the same machine without them treats jl as a plain jump."""
    machine = emu.machine_from_text(unmarked(LINK8_TEXT), "plain.toml")
    session = session_for(tmp_path, TWICE, machine, "twice.asm")
    session.execute("instr")
    session.execute("over")
    assert session.emu.pc == 6


def test_leave_returns_from_a_link_register_call(tmp_path):
    session = session_for(tmp_path, TWICE, LINK8, "twice.asm")
    session.execute("instr 3")
    assert session.emu.pc == 7 and session.emu.get("a") == 2
    assert session.execute("leave").startswith("returned to the caller")
    assert session.emu.pc == 4 and session.emu.get("a") == 3


def test_leave_is_refused_on_a_machine_with_no_return(tmp_path):
    machine = emu.machine_from_text(unmarked(LINK8_TEXT), "plain.toml")
    session = session_for(tmp_path, TWICE, machine, "twice.asm")
    assert session.execute("leave").startswith("error: link8 has no return instruction")


@pytest.mark.parametrize("old, new, message", [
    ('link = "lr"\n', 'link = "rl"\n', "instruction 'jl addr': 'link': there is no register 'rl' "
                                       "(registers: a, lr, pc, ir, t)"),
    ('link = "lr"\n', 'link = "pc"\n', "instruction 'jl addr': 'link': the program counter cannot be "
                                       "the link register"),
    ('link = "lr"\n', "", "instruction 'jl addr': a call = \"link\" needs 'link', naming the link register"),
    ('call = "link"\n', 'call = "jump"\n', "instruction 'jl addr': 'call' must be one of stack, link, "
                                           "not 'jump'"),
    ('call = "link"\n', 'call = "stack"\n', "instruction 'jl addr': 'link' names the register of a "
                                            "call = \"link\"; this instruction is a call through a stack"),
    ('call = "link"\n', "", "instruction 'jl addr': 'link' names the register of a call = \"link\"; "
                            "this instruction is no such call"),
    ('link = "lr"\n', 'link = "lr"\nreturns = true\n', "instruction 'jl addr': an instruction is a call "
                                                       "or a return, not both ('call' and 'returns = true')"),
    ("returns = true\n", 'returns = "yes"\n', "instruction 'jr': 'returns' must be true or false, not 'yes'"),
])
def test_bad_marks_are_refused_naming_the_instruction_and_key(old, new, message):
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(link8_with(old, new), "bench/link.toml")
    assert message in str(caught.value)
    assert "bench/link.toml:" in str(caught.value)
