"""Planted breakpoints in the debugger, on ref8 and acc12.

Addresses of KILN are read from its listing (ref8: call, li sp and jumps
three words, li two, the others one): log at 0x12 and mark at 0x17, each
one word later behind a halt planted above them.
"""

from __future__ import annotations

import pytest

import asm
from emu.debugger import Session, load_view

from debugger_programs import ACC12, GAUGE, REF8, session_for


HALT = asm.assemble_text("halt\n", REF8).flat()[0]


@pytest.fixture(autouse=True)
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)


def finish(session) -> None:
    """Run to the final halt, pressing RESUME at every pause and planted halt on the way."""
    session.execute("go")
    for _ in range(20):
        assert session.emu.halt_latch
        if session.places.halt_kind(session.emu.halt_address) == "halt":
            return
        session.execute("resume")
    raise AssertionError("more than 20 halts")


def test_planting_restarts_the_program_and_names_what_moved(tmp_path):
    kiln = session_for(tmp_path)
    kiln.execute("instr 3")
    text = kiln.execute("break kiln.asm:5 planted")
    assert text.splitlines()[0] == "breakpoint 1: a halt planted at 0008 ramp+3 kiln.asm:5"
    assert "starts again from the beginning" in text
    assert "  log              0012 → 0013  (+1, code label)" in text
    assert "  mark             0017 → 0018  (+1, code label)" in text
    assert kiln.emu.cycles == 0 and kiln.emu.pc == 0 and kiln.emu.memory[8] == HALT
    assert kiln.execute("points").splitlines() == [
        "  1  break  planted  0008 ramp+3 kiln.asm:5", "moved from where the program as written puts them:",
        "  log              0012 → 0013  (+1, code label)", "  mark             0017 → 0018  (+1, code label)"]


def test_a_planted_halt_stops_at_its_line_and_resume_goes_on_to_the_same_results(tmp_path):
    plain = session_for(tmp_path)
    finish(plain)
    kiln = session_for(tmp_path)
    kiln.execute("break kiln.asm:5 planted")
    text = kiln.execute("go")
    assert ("breakpoint 1: the planted halt at 0008 ramp+3 kiln.asm:5 set the halt latch; "
            "RESUME goes on with the statement there") in text
    assert "next: dec r0   at 0009 ramp+4 kiln.asm:5" in text
    assert kiln.execute("why").startswith("breakpoint 1: the planted halt at 0008 ramp+3 kiln.asm:5")
    assert kiln.latch_origin() == "set by the planted halt at 0008 ramp+3 kiln.asm:5"
    text = kiln.execute("resume")
    assert "breakpoint 1: the planted halt" in text  # the ramp goes round three times
    finish(kiln)
    assert kiln.execute("console") == plain.execute("console") == "1 byte(s):\nK"
    assert [kiln.emu.get(r) for r in ("r0", "r1", "r2", "r3", "sp")] == \
           [plain.emu.get(r) for r in ("r0", "r1", "r2", "r3", "sp")]


def test_other_points_follow_their_statements_and_drop_takes_the_halt_out(tmp_path):
    kiln = session_for(tmp_path)
    assert kiln.execute("break mark") == "breakpoint 1 at 0017 mark kiln.asm:14"
    assert kiln.execute("watch [mark]").startswith("watchpoint 2 on [0017]")
    kiln.execute("break ramp planted")
    assert kiln.execute("points").splitlines()[:3] == [
        "  1  break  watched  0018 mark kiln.asm:14", "  2  watch  [0018] (now 0x29)",
        "  3  break  planted  0005 ramp kiln.asm:4"]
    text = kiln.execute("drop 3")
    assert text.startswith("dropped point 3, the halt planted in front of kiln.asm:4")
    assert "every label and data word is back where the program as written puts it" in text
    assert kiln.execute("points").splitlines() == [
        "  1  break  watched  0017 mark kiln.asm:14", "  2  watch  [0017] (now 0x29)"]
    assert kiln.view.planting is not None and not kiln.view.planting.halts
    assert kiln.emu.memory[5] == asm.assemble_text("call 0x12\n", kiln.machine).flat()[0]


def test_a_long_list_of_moves_is_cut_short_when_planting_and_listed_whole_by_points(tmp_path):
    text = "start:  inc r0\n" + "".join(f"step{k}:  inc r0\n" for k in range(12)) + "        halt\n"
    counter = session_for(tmp_path, text, name="count.asm")
    told = counter.execute("break start planted")
    assert told.splitlines()[-1] == "  … and 4 more ('points' lists them all)"
    assert "  step0            0001 → 0002  (+1, code label)" in told
    listed = counter.execute("points").splitlines()
    assert len(listed) == 1 + 1 + 12 and listed[-1] == "  step11           000C → 000D  (+1, code label)"


def test_drop_all_takes_every_planted_halt_out(tmp_path):
    kiln = session_for(tmp_path)
    kiln.execute("break ramp planted")
    kiln.execute("break log planted")
    assert len(kiln.view.planting.halts) == 2
    assert kiln.execute("drop all").startswith("dropped 2 point(s); the planted halts are taken out")
    assert kiln.emu.memory[0x12] == asm.assemble_text(
        "inc r1\n", kiln.machine).flat()[0] and not kiln.breakpoints


def test_planting_needs_an_instruction_and_the_source(tmp_path):
    kiln = session_for(tmp_path)
    assert kiln.execute("break 0x200 planted") == (
        "error: a halt can be planted only in front of an instruction of the program; 0200 holds none")
    assert kiln.execute("break ramp buried") == "error: usage: break ADDRESS|LABEL|FILE:LINE [watched|planted]"
    program = asm.assemble_file("kiln.asm", kiln.machine)
    asm.write_intel_hex(program, "kiln.hex")
    asm.write_debug(program, asm.debug_path_for("kiln.hex"))
    hexed = Session(kiln.machine, load_view("kiln.hex", kiln.machine))
    assert hexed.view.labels["ramp"] == 5  # the debug file was read: names work, planting does not
    text = hexed.execute("break ramp planted")
    assert text.startswith("error: a planted halt needs the assembly source: kiln.hex is an image (hex)")
    assert not hexed.breakpoints


def test_planted_halt_on_acc12_stops_and_resumes_to_the_same_lamps(tmp_path):
    plain = session_for(tmp_path, GAUGE, ACC12, "gauge.asm")
    finish(plain)
    gauge = session_for(tmp_path, GAUGE, ACC12, "gauge.asm")
    text = gauge.execute("break gauge.asm:3 planted")
    assert "  done" in text and "(+1, code label)" in text and "  one" in text and "(+1, data)" in text
    text = gauge.execute("go")
    assert "breakpoint 1: the planted halt at" in text and "gauge.asm:3" in text
    finish(gauge)
    assert gauge.emu.lamps == plain.emu.lamps == 5
    assert gauge.emu.get("acc") == plain.emu.get("acc")


ECHO = """\
; echo: two bytes of the input stream (port 1) copied to the console
start:  in r0, 1
        out 0, r0
        in r0, 1
        out 0, r0
        halt
"""


def test_planting_rewinds_the_input_stream_and_keeps_the_toggles(tmp_path):
    echo = session_for(tmp_path, ECHO, name="echo.asm")
    echo.emu.input_bytes, echo.emu.switches = b"ok", 0x5A
    echo.execute("instr 2")
    assert echo.execute("console") == "1 byte(s):\no"
    echo.execute("break echo.asm:4 planted")
    assert echo.emu.switches == 0x5A and echo.execute("console") == "no console output yet"
    finish(echo)
    assert echo.execute("console") == "2 byte(s):\nok"


def test_planting_powers_on_as_restart_does_and_keeps_the_beat(tmp_path):
    """Burning the planted program is 'restart' with the new image: the beat chosen before
    draws its turns again from the start, as if chosen at power-on."""
    beat_first = session_for(tmp_path)
    beat_first.execute("beat 7")
    beat_first.execute("instr 5")
    beat_first.execute("break kiln.asm:5 planted")
    assert (beat_first.emu.cycles, beat_first.emu.time_ns) == (0, 0)
    planted_first = session_for(tmp_path)
    planted_first.execute("break kiln.asm:5 planted")
    planted_first.execute("beat 7")
    even = session_for(tmp_path)
    even.execute("break kiln.asm:5 planted")
    for session in (beat_first, planted_first, even):
        finish(session)
    assert beat_first.emu.cycles == even.emu.cycles
    assert beat_first.emu.time_ns == planted_first.emu.time_ns != even.emu.time_ns
