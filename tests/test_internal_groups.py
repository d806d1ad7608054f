"""A group made only of internal registers is internal too: brace8's address latch
m = {mhi, mlo} is for the micro-steps, not for programs, runs or the debugger."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import asm
from emu import load_machine

from cli_support import cli
from debugger_programs import session_for

HERE = Path(__file__).parent
BRACE8 = load_machine(HERE / "machines" / "brace8.toml")
SUM = HERE / "trial_programs" / "brace8_sum.asm"

LATCH = """\
        ldi e, 0x12
        ldi f, 0x34
        call back       ; latches 0x000A in m on the way
back:   halt
"""


@pytest.fixture(autouse=True)
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)


def test_the_machine_shows_the_pointer_pairs_and_hides_the_latch():
    assert [g.name for g in BRACE8.visible_groups] == ["ef", "gh"]
    assert "m" in BRACE8.groups and "m" not in BRACE8.visible_names


def test_run_lists_no_internal_group(capsys):
    code, out, err = cli(capsys, "run", SUM, "--json")
    assert code == 0, err
    registers = json.loads(out)["registers"]
    assert set(registers) == {"a", "b", "c", "d", "e", "f", "g", "h", "sp", "ef", "gh"}
    assert registers["ef"] == registers["e"] << 8 | registers["f"]
    code, out, _err = cli(capsys, "run", SUM)
    line = next(row for row in out.splitlines() if row.strip().startswith("registers"))
    assert line.split()[-2:] == ["gh", "0x0000"]


def test_the_debugger_neither_shows_nor_watches_it(tmp_path):
    session = session_for(tmp_path, LATCH, machine=BRACE8, name="latch.asm")
    session.execute("go")
    shown = session.execute("registers")
    assert "ef  1234" in shown and "m " not in shown.replace("\n", " ")
    reply = session.execute("watch m")
    assert reply.startswith("error: 'm' is not a register or flag of brace8 (a, b, c, d, e, f, g, h, sp, pc, "
                            "ef, gh, z, n, c_)")
    assert session.watches == {}
    assert "m" not in session.complete("watch ") and "ef" in session.complete("watch e")


def test_an_expect_may_not_name_it():
    with pytest.raises(asm.AsmError, match="'m'"):
        asm.assemble_text(LATCH + "        .expect m == 10\n", BRACE8)
