"""What a first-time user met describing brace8 and nib2 (tests/machines/) from the reference alone."""

from __future__ import annotations

from pathlib import Path

import pytest

import asm
from emu import MachineError, Observer, machine_from_text

from cli_support import cli
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
