"""Machine files the loader fuzzer (test_loader_fuzz.py) found giving a traceback, now refused.

Each is one edit of ref8.toml, refused with a MachineError that names the
file and the line of the edit.
"""

from __future__ import annotations

import pytest

from emu import MachineError, load_machine
from emu.description import machine_from_text

REF8_TEXT = open(load_machine("ref8").path, encoding="utf-8").read()


def _line_of(text: str, fragment: str) -> int:
    return text[:text.index(fragment)].count("\n") + 1


@pytest.mark.parametrize("old, new, message", [
    # Before: OverflowError from float() of an integer beyond any float.
    ("rated_operations = 10_000_000", "rated_operations = 1" + "0" * 400,
     "[wear]: 'rated_operations' must be a positive number of operations, not 1000"),
    ('"stage 1" = 20_000_000', '"stage 1" = -2' + "0" * 400,
     "[wear.relays]: 'stage 1' must be a positive number of operations, not -2000"),
    ("supply_v = 24.0", "supply_v = 1" + "0" * 400,
     "[timing]: 'supply_v' must be a number a float can hold, not an integer of 401 digits"),
    # Before: ValueError from tomllib, whose integers keep Python's limit on digits.
    ("ms = 60", "ms = " + "9" * 5000, "not valid TOML for relaybench: a number with more than 4300 digits"),
    # Before: ValueError from int() of an encoding slice's bound with 5000 digits.
    ('"addr[15:8]"]\nsteps = [\n  "t <- mem[pc]; pc <- pc + 1",\n  "pc <- {mem[pc], t}",',
     '"addr[' + "9" * 5000 + ':8]"]\nsteps = [\n  "t <- mem[pc]; pc <- pc + 1",\n  "pc <- {mem[pc], t}",',
     "instruction 'jmp addr': cannot read encoding token 'addr[999"),
])
def test_numbers_too_large_for_the_loader_are_refused_with_the_line(old, new, message):
    text = REF8_TEXT.replace(old, new, 1)
    with pytest.raises(MachineError) as caught:
        machine_from_text(text, "ref8-edited.toml")
    rendered = caught.value.render()
    assert rendered.startswith(f"ref8-edited.toml:{_line_of(REF8_TEXT, old)}: error: ")
    assert message in rendered


@pytest.mark.parametrize("instruction, old, new, message", [
    # Before: KeyError 'x' in the compiler, reading the fields of a word fetched into a pair.
    ('syntax = "or rd:reg, rs:reg"', '"t <- mem[pc]; pc <- pc + 1"', '"x <- mem[pc]; pc <- pc + 1"',
     "instruction 'or rd, rs' step 3: field 'rd' (word 2) is used before its word has been fetched "
     "into a register"),
    # The same through a register field: the word went to whichever register rd names.
    ('syntax = "or rd:reg, rs:reg"', 'encoding = ["10100110", "00 rd rs"]',
     'encoding = ["10110 rd", "imm"]', None),
])
def test_a_word_fetched_into_anything_but_a_register_gives_its_fields_no_holder(instruction, old, new,
                                                                                 message):
    start = REF8_TEXT.index(instruction)
    end = REF8_TEXT.index("[[instruction]]", start)
    block = REF8_TEXT[start:end]
    if message is None:       # a register field as the holder of its own instruction's word
        block = block.replace('syntax = "or rd:reg, rs:reg"', 'syntax = "ori rd:reg, imm:imm8"')
        block = block.replace(old, new).replace('"t <- mem[pc]; pc <- pc + 1"', '"rd <- mem[pc]; pc <- pc + 1"')
        block = block.replace('"rd <- or(rd, rs) sets z n c v"', '"rd <- or(rd, imm) sets z n c v"')
        message = ("instruction 'ori rd, imm' step 3: field 'imm' (word 2) is used before its word has been "
                   "fetched into a register")
    else:
        block = block.replace(old, new)
    text = REF8_TEXT[:start] + block + REF8_TEXT[end:]
    with pytest.raises(MachineError) as caught:
        machine_from_text(text, "ref8-edited.toml")
    rendered = caught.value.render()
    assert rendered.startswith("ref8-edited.toml:") and message in rendered
