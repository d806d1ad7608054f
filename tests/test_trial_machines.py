"""What a first-time user met describing brace8 and nib2 (tests/machines/) from the reference alone."""

from __future__ import annotations

from emu import Emulator, Observer

from engine_support import MACHINES, boot

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
