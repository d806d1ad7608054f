"""What a first-time user met describing brace8 and nib2 (tests/machines/) from the reference alone."""

from __future__ import annotations

from pathlib import Path

import pytest

import asm
from emu import MachineError, Observer, machine_from_text

from cli_support import cli
from debugger_programs import session_for
from engine_support import MACHINES, boot

HERE = Path(__file__).parent

NIB2 = MACHINES["nib2"]

# nib2: ldi a, 1 / 1111 1110: the prefix, then an extension word no instruction has (the prefix
# runs as a one-word no-op, so 1110 then runs as mov b, a) / jmp 0
UNDEFINED_EXTENSION_LOOP = [0b0010, 1, 0b1111, 0b1110, 0b1000, 0, 0]


def test_an_undefined_extension_word_in_a_hot_loop_runs_as_stepping_does():
    """The block path once met a decode group's undefined later word with no way to count it."""
    fast = boot(NIB2, UNDEFINED_EXTENSION_LOOP)
    fast.blocks.threshold, fast.blocks.warm_up = 1, 0
    slow = boot(NIB2, UNDEFINED_EXTENSION_LOOP)
    slow.observe(Observer())
    for emu in (fast, slow):
        emu.run(max_cycles=3000)
    assert fast.blocks.built > 0
    assert (fast.cycles, fast.pc, fast.get("a")) == (slow.cycles, slow.pc, slow.get("a"))
    assert fast.warnings == slow.warnings
    assert fast.warnings[0].startswith("undefined opcode at 0x02 ran as a no-op (")


NIB2_TEXT = (HERE / "machines" / "nib2.toml").read_text(encoding="utf-8")
PUT_STEP = '"out(0, {b, a})"'


def test_both_trial_programs_pass_without_options(capsys):
    code, out, _err = cli(capsys, "test", HERE / "trial_programs")
    assert code == 0, out
    assert out.splitlines()[-1] == "2 programs: 2 passed, 0 failed"


def test_a_4_bit_machine_prints_a_character_from_two_words():
    """ASCII (RFC 20) codes 'A' as 0x41: high word 4, low word 1."""
    program = asm.assemble_text("        ldi b, 4\n        ldi a, 1\n        put\n        halt\n", NIB2)
    emu = boot(NIB2, program.flat())
    emu.run(max_cycles=200)
    assert bytes(emu.output) == "A".encode("ascii") == bytes([0x41])


@pytest.mark.parametrize("step, message", [
    ('"out(1, {b, a})"', "output port 1 (lamps) holds 4 bits but the value written to it has 8"),
    ('"out(0, {a, b, a})"', "output port 0 (console) holds 8 bits but the value written to it has 12"),
    ('"out(5, {b, a})"', "output port 5 (no device: the data bus) holds 4 bits but the value written to it has 8"),
    ('"out(x, {a, b, a})"', "the output port (computed by the step: the widest output device) holds 8 bits but "
                            "the value written to it has 12"),
])
def test_a_port_takes_what_its_device_keeps(step, message):
    with pytest.raises(MachineError) as caught:
        machine_from_text(NIB2_TEXT.replace(PUT_STEP, step), "nib2.toml")
    assert str(caught.value).splitlines()[0].endswith(f"instruction 'put' step 5: {message}")
    machine_from_text(NIB2_TEXT.replace(PUT_STEP, '"out(x, {b, a})"'), "nib2.toml")   # 8 bits: the console's


def test_stopped_inside_the_fetch_the_debugger_says_so(tmp_path, monkeypatch):
    """brace8's fetch takes two steps: after one pulse the instruction is still being fetched."""
    monkeypatch.chdir(tmp_path)
    session = session_for(tmp_path, "        add b\n        halt\n", machine=MACHINES["brace8"], name="add.asm")
    assert session.execute("pulse").splitlines()[-1] == \
        "inside the fetch of: add b   at 0000 add.asm:1, fetch step 2 of 2 next"
    assert session.execute("pulse").splitlines()[-1] == "inside: add b   at 0000 add.asm:1, micro-step 3 of 8 next"


def test_a_value_too_wide_for_a_word_is_written_in_the_machines_hex(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    session = session_for(tmp_path, "        halt\nsum:    .byte 0\n", machine=NIB2, name="sum.asm")
    assert session.execute("put [sum] 0x1F") == "error: 0x1F does not fit [0x01], 4 bits (-8…15, or 0x0…0xF)"
    assert session.execute("put [sum] 0xF") == "[01] = 0xF (15)"
