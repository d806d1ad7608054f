"""Bad machine files: every validation error, with its message pinned.

Each case edits one spot of the shipped ref8 description (so the rest of the
file stays valid and the error we want is the first one found) and checks
the whole message: the file, the key or instruction, and what was expected.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu

REF8_TEXT = (Path(emu.__file__).parent / "machines" / "ref8.toml").read_text(encoding="utf-8")
ACC12_PATH = Path(__file__).parent / "machines" / "acc12.toml"
FILE = "bench/mine.toml"


def ref8_with(old: str, new: str) -> str:
    """ref8's text with one unique piece replaced."""
    assert REF8_TEXT.count(old) == 1, f"not unique in ref8.toml: {old!r}"
    return REF8_TEXT.replace(old, new)


def load_error(text: str) -> emu.MachineError:
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text, FILE)
    assert caught.value.path == FILE
    return caught.value


def test_the_unedited_text_loads():
    machine = emu.machine_from_text(REF8_TEXT, FILE)
    assert machine.name == "ref8" and machine.path == FILE


CASES = {
    "not TOML": (
        "[machine\nname = 'x'\n",
        "not valid TOML: Expected ']' at the end of a table declaration\n"
        "    [machine\n"
        "            ^",
    ),
    "missing [machine] name": (
        ref8_with('name = "ref8"\n', ""),
        "[machine]: missing key 'name' (a string)",
    ),
    "wrong type": (
        ref8_with("data_bits = 8", 'data_bits = "eight"'),
        "[machine]: 'data_bits' must be an integer, not a string",
    ),
    "out of range": (
        ref8_with("data_bits = 8", "data_bits = 40"),
        "[machine]: 'data_bits' must be 1…16, not 40",
    ),
    "unknown key": (
        ref8_with("address_bits = 16", "adress_bits = 16"),
        "[machine]: unknown key 'adress_bits' (expected one of: name, title, data_bits, address_bits, "
        "memory_words, program_counter, instruction_register)",
    ),
    "unknown section": (
        ref8_with("[fetch]", "[fecth]"),
        "top level: unknown key 'fecth' (expected one of: machine, registers, internal, groups, flags, "
        "operands, ports, clock, fetch, instruction, assembler, timing, wear, alu)",
    ),
    "overlapping encodings": (
        ref8_with('syntax = "jmp x"\nencoding = ["00000011"]', 'syntax = "jmp x"\nencoding = ["00000010"]'),
        "instruction 'jmp x': its encoding overlaps instruction 'ret' at first word 0x02; "
        "the first word alone must tell them apart, or both must say decode_words ≥ 2",
    ),
    "overlap through a register field": (
        ref8_with('encoding = ["00011 rd", "imm"]', 'encoding = ["0001 0 rd", "imm"]'),
        "instruction 'li rd, imm': its encoding overlaps instruction 'jv addr' at first word 0x10; "
        "the first word alone must tell them apart, or both must say decode_words ≥ 2",
    ),
    "two memory reads": (
        ref8_with('steps = ["rd <- mem[x]"]', 'steps = ["rd <- mem[x]; t <- mem[sp]"]'),
        "instruction 'ld rd, [x]' step 2: two memory accesses in one micro-step (the design rule allows one)",
    ),
    "a memory read and a write": (
        ref8_with('steps = ["mem[x] <- rs"]', 'steps = ["mem[x] <- mem[sp]"]'),
        "instruction 'st [x], rs' step 2: two memory accesses in one micro-step (the design rule allows one)",
    ),
    "two memory writes": (
        ref8_with('steps = ["mem[x] <- rs"]', 'steps = ["mem[x] <- rs; mem[sp] <- rs"]'),
        "instruction 'st [x], rs' step 2: two memory accesses in one micro-step (the design rule allows one)",
    ),
    "two ALU operations": (
        ref8_with('steps = ["rd <- inc(rd) sets z n"]', 'steps = ["rd <- inc(rd) sets z n; t <- dec(rd)"]'),
        "instruction 'inc rd' step 2: two ALU operations in one micro-step (the design rule allows one)",
    ),
    "hold point on a high phase": (
        ref8_with("ms = 40\nring = [2]\n", "ms = 40\nring = [2]\nhold = true\n"),
        "[[clock.phase]] 2 ('B'): a hold point must be on a phase with clock level 0; "
        "this phase has level 1 (holding there would cut a pulse short)",
    ),
    "no hold point": (
        ref8_with("hold = true\n", ""),
        "[clock]: the phase table has no hold point (hold = true): a stop or a halt could never freeze the clock",
    ),
    "unknown register written": (
        ref8_with('steps = ["rd <- mem[x]"]', 'steps = ["rq <- mem[x]"]'),
        "instruction 'ld rd, [x]' step 2: unknown register or field 'rq' "
        "(registers: r0, r1, r2, r3, r4, r5, r6, r7, sp, pc, ir, t, u, x; fields: rd)",
    ),
    "unknown register read": (
        ref8_with('steps = ["pc <- x"]', 'steps = ["pc <- y"]'),
        "instruction 'jmp x' step 2: unknown register or field 'y' "
        "(registers: r0, r1, r2, r3, r4, r5, r6, r7, sp, pc, ir, t, u, x; fields: none)",
    ),
    "unknown field": (
        ref8_with('steps = ["mem[x] <- rs"]', 'steps = ["mem[x] <- rt"]'),
        "instruction 'st [x], rs' step 2: unknown register or field 'rt' "
        "(registers: r0, r1, r2, r3, r4, r5, r6, r7, sp, pc, ir, t, u, x; fields: rs)",
    ),
    "unknown flag in sets": (
        ref8_with('steps = ["rd <- inc(rd) sets z n"]', 'steps = ["rd <- inc(rd) sets z q"]'),
        "instruction 'inc rd' step 2: unknown flag 'q' (flags: z, n, c, v)",
    ),
    "a flag the operation does not produce": (
        ref8_with('steps = ["rd <- shl(rd) sets z n c"]', 'steps = ["rd <- shl(rd) sets z n c v"]'),
        "instruction 'shl rd' step 2: shl does not produce the overflow flag 'v'",
    ),
    "sets without an ALU operation": (
        ref8_with('steps = ["pc <- x"]', 'steps = ["pc <- x sets z"]'),
        "instruction 'jmp x' step 2: 'sets' needs an ALU operation (add, sub, …) as the value",
    ),
    "a register written twice": (
        ref8_with('steps = ["rd <- mem[x]"]', 'steps = ["rd <- mem[x]; rd <- t"]'),
        "instruction 'ld rd, [x]' step 2: writes rd twice in one micro-step",
    ),
    "a register written twice through its group": (
        ref8_with('steps = ["pc <- x"]', 'steps = ["x <- {u, t}; r6 <- t"]'),
        "instruction 'jmp x' step 2: writes r6 twice in one micro-step; also written as x",
    ),
    "a group written after one of its parts": (
        ref8_with('steps = ["pc <- x"]', 'steps = ["r7 <- t; x <- {u, t}"]'),
        "instruction 'jmp x' step 2: writes r7 twice in one micro-step (x includes r7)",
    ),
    "a flag written twice": (
        ref8_with('steps = ["rd <- inc(rd) sets z n"]', 'steps = ["rd <- inc(rd) sets z n z"]'),
        "instruction 'inc rd' step 2: writes z twice in one micro-step",
    ),
    "a value too wide for its register": (
        ref8_with('steps = ["pc <- x"]', 'steps = ["t <- x"]'),
        "instruction 'jmp x' step 2: 't' holds 8 bits but the value written to it has 16",
    ),
    "an encoding word too short": (
        ref8_with('encoding = ["00110 rd"]', 'encoding = ["0110 rd"]'),
        "instruction 'ld rd, [x]': encoding word 1 has 7 bits, expected 8 (data_bits)",
    ),
    "an encoding word too long": (
        ref8_with('encoding = ["00110 rd"]', 'encoding = ["000110 rd"]'),
        "instruction 'ld rd, [x]': encoding word 1 has 9 bits, expected 8 (data_bits)",
    ),
    "a field not placed": (
        ref8_with('encoding = ["00110 rd"]', 'encoding = ["00110000"]'),
        "instruction 'ld rd, [x]': the encoding must place each of the 3 bits of 'rd' exactly once",
    ),
    "a field placed twice": (
        ref8_with('encoding = ["00110 rd"]', 'encoding = ["00 rd rd"]'),
        "instruction 'ld rd, [x]': the encoding must place each of the 3 bits of 'rd' exactly once",
    ),
    "a field placed in part": (
        ref8_with('encoding = ["00011 rd", "imm"]', 'encoding = ["00011 rd", "0000 imm[3:0]"]'),
        "instruction 'li rd, imm': the encoding must place each of the 8 bits of 'imm' exactly once",
    ),
    "a slice outside the field": (
        ref8_with('encoding = ["00011 rd", "imm"]', 'encoding = ["00011 rd", "imm[8:1]"]'),
        "instruction 'li rd, imm': slice imm[8:1] is outside the 8 bits of 'imm'",
    ),
    "an encoding token that is not bits or a field": (
        ref8_with('encoding = ["00110 rd"]', 'encoding = ["00110 r-d"]'),
        "instruction 'ld rd, [x]': cannot read encoding token 'r-d' in word 1 "
        "(expected bits like 0101, a field name, or field[hi:lo])",
    ),
    "a field used before its word is fetched": (
        ref8_with('  "t <- mem[pc]; pc <- pc + 1",\n  "rd <- rs",', '  "rd <- rs",\n  "t <- mem[pc]; pc <- pc + 1",'),
        "instruction 'mov rd, rs' step 2: field 'rs' (word 2) is used before its word has been fetched "
        "into a register",
    ),
    "more encoding words than fetches": (
        ref8_with('encoding = ["00110 rd"]', 'encoding = ["00110 rd", "00000000"]'),
        "instruction 'ld rd, [x]': the encoding has 2 words but the micro-steps read 0 after the opcode "
        "(each later word needs a step that reads mem[pc])",
    ),
    "more fetches than encoding words": (
        ref8_with('steps = ["rd <- mem[x]"]', 'steps = ["rd <- mem[x]", "t <- mem[pc]; pc <- pc + 1"]'),
        "instruction 'ld rd, [x]': the encoding has 1 word but the micro-steps read 1 after the opcode "
        "(each later word needs a step that reads mem[pc])",
    ),
    "unreadable micro-step": (
        ref8_with('steps = ["rd <- mem[x]"]', 'steps = ["rd = mem[x]"]'),
        "instruction 'ld rd, [x]' step 2: cannot read micro-step at column 4 (expected '(', '<-')\n"
        "    rd = mem[x]\n"
        "       ^",
    ),
    "unreadable fetch step": (
        ref8_with('steps = ["ir <- mem[pc]; pc <- pc + 1"]', 'steps = ["ir <- mem[pc] pc <- pc + 1"]'),
        "[fetch] step 1: cannot read micro-step at column 15 "
        "(expected '&', '^', ':', ',', '[', '-', '+', '?', '}', ')', ']', ';', 'sets', '|')\n"
        "    ir <- mem[pc] pc <- pc + 1\n"
        "                  ^",
    ),
    "idle beside a transfer": (
        ref8_with('steps = ["rd <- mem[x]"]', 'steps = ["idle; rd <- mem[x]"]'),
        "instruction 'ld rd, [x]' step 2: 'idle' cannot stand with statements that transfer or drive something",
    ),
    "halt driven twice": (
        ref8_with('steps = ["halt"]', 'steps = ["halt; halt"]'),
        "instruction 'halt' step 2: drives halt twice",
    ),
    "pause naming a non-halting instruction": (
        ref8_with('pause = "halt"', 'pause = "nop"'),
        "[assembler]: 'pause' must name an instruction without operands that drives halt "
        "(candidates: halt), not 'nop'",
    ),
    "bad output device": (
        ref8_with('out.1 = "lamps"', 'out.1 = "printer"'),
        "[ports.out] 1: an out port device must be one of console, lamps, not 'printer'",
    ),
    "an output device on an input port": (
        ref8_with('in.2 = "input_ready"', 'in.2 = "console"'),
        "[ports.in] 2: an in port device must be one of switches, input, input_ready, not 'console'",
    ),
    "a port number out of range": (
        ref8_with('out.1 = "lamps"', 'out.300 = "lamps"'),
        "[ports.out] 300: a port number must be 0…255",
    ),
}


LINES = {
    "not TOML": 1,
    "missing [machine] name": 18,
    "wrong type": 21,
    "out of range": 21,
    "unknown key": 22,
    "unknown section": 101,
    "overlapping encodings": 128,
    "overlap through a register field": 251,
    "two memory reads": 275,
    "a memory read and a write": 280,
    "two memory writes": 280,
    "two ALU operations": 316,
    "hold point on a high phase": 87,
    "no hold point": 73,
    "unknown register written": 275,
    "unknown register read": 129,
    "unknown field": 280,
    "unknown flag in sets": 316,
    "a flag the operation does not produce": 326,
    "sets without an ALU operation": 129,
    "a register written twice": 275,
    "a register written twice through its group": 129,
    "a group written after one of its parts": 129,
    "a flag written twice": 316,
    "a value too wide for its register": 129,
    "an encoding word too short": 274,
    "an encoding word too long": 274,
    "a field not placed": 274,
    "a field placed twice": 274,
    "a field placed in part": 251,
    "a slice outside the field": 251,
    "an encoding token that is not bits or a field": 274,
    "a field used before its word is fetched": 245,
    "more encoding words than fetches": 274,
    "more fetches than encoding words": 274,
    "unreadable micro-step": 275,
    "unreadable fetch step": 102,
    "idle beside a transfer": 275,
    "halt driven twice": 115,
    "pause naming a non-halting instruction": 67,
    "bad output device": 61,
    "an output device on an input port": 64,
    "a port number out of range": 61,
}
"""The line of ref8.toml (as edited by the case) that each message names: the offending key,
the micro-step's own line in a multi-line list, or the table's header for a missing key."""
LINES["not TOML"] = "1:9"


@pytest.mark.parametrize("case", list(CASES))
def test_bad_machine_file_message(case):
    text, message = CASES[case]
    error = load_error(text)
    assert str(error) == f"{FILE}:{LINES[case]}: error: {message}"


def test_a_message_is_one_located_line_apart_from_a_caret():
    for case, (text, _message) in CASES.items():
        error = load_error(text)
        first, *rest = str(error).split("\n")
        assert re.match(rf"{re.escape(FILE)}:\d+(:\d+)?: error: ", first), case
        assert error.where or first.startswith(f"{FILE}:1:9: error: not valid TOML"), case
        assert rest == [] or "cannot read micro-step" in first or error.column is not None, case


def test_missing_file_lists_the_shipped_machines(tmp_path):
    missing = tmp_path / "nowhere.toml"
    with pytest.raises(emu.MachineError) as caught:
        emu.load_machine(missing)
    shipped = ", ".join(sorted(emu.shipped_machines()))
    assert "ref8" in shipped
    assert str(caught.value) == f"{missing}: error: no such machine file (shipped machines: {shipped})"


def test_a_misspelt_machine_name_lists_the_shipped_machines():
    with pytest.raises(emu.MachineError, match=r"^ref9: error: no such machine file \(shipped machines: .*ref8"):
        emu.load_machine("ref9")


def test_a_file_that_is_not_utf8_is_a_machine_error(tmp_path):
    path = tmp_path / "latin.toml"
    path.write_bytes(b"# caf\xe9\n")
    with pytest.raises(emu.MachineError, match=r"cannot read machine file"):
        emu.load_machine(path)


def test_load_by_name_and_by_path():
    by_name = emu.load_machine("ref8")
    assert by_name.name == "ref8" and Path(by_name.path).name == "ref8.toml"
    assert emu.load_machine().name == "ref8"
    by_path = emu.load_machine(ACC12_PATH)
    assert (by_path.name, by_path.data_bits, by_path.memory_words) == ("acc12", 12, 256)


def test_errors_from_a_file_name_that_file(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text(ref8_with("hold = true\n", ""), encoding="utf-8")
    with pytest.raises(emu.MachineError) as caught:
        emu.load_machine(path)
    assert caught.value.path == str(path)
    assert str(caught.value).startswith(f"{path}:73: error: [clock]: the phase table has no hold point")


# ----- hand-written small files -----------------------------------------------------------

TINY = """
[machine]
name = "tiny"
data_bits = 4
address_bits = 4

[registers]
a = 4
pc = 4

[internal]
ir = 4

[flags]
z = "zero"

[operands]
n = { bits = 2 }

[assembler]
pause = "stop"

[clock]
stages = 2

[[clock.phase]]
level = 1
ms = 10

[[clock.phase]]
level = 0
ms = 10
hold = true

[fetch]
steps = ["ir <- mem[pc]; pc <- pc + 1"]

[[instruction]]
syntax = "stop"
encoding = ["0000"]
steps = ["halt"]

[[instruction]]
syntax = "put n:n"
encoding = ["01 n"]
steps = ["a <- n"]
"""


def test_a_tiny_hand_written_machine_loads_and_runs():
    machine = emu.machine_from_text(TINY, "tiny.toml")
    assert [i.display for i in machine.instructions] == ["stop", "put n"]
    emulator = emu.Emulator(machine)
    emulator.load([(0, machine.instructions[1].encode({"n": 3}) + [0])])
    assert emulator.run(max_cycles=20).kind == "halted"
    assert (emulator.get("a"), emulator.pc) == (3, 2)


@pytest.mark.parametrize(("old", "new", "message"), [
    ('pc = 4\n', '', "2: error: [machine]: 'program_counter' names 'pc', which is not a register"),
    ('ir = 4', 'ir = 3', "12: error: [machine]: the instruction register 'ir' must be 4 bits wide (data_bits)"),
    ('z = "zero"', 'z = "sign"', "15: error: [flags] z: a flag's role must be one of zero, negative, carry, overflow "
                                 "(set by the ALU) or 'plain' (a 1-bit register transfers write), not 'sign'"),
    ('ms = 10\nhold', 'ms = -1\nhold', "32: error: [[clock.phase]] 2 ('phase2'): 'ms' must be a positive number of "
                                       "milliseconds, not -1"),
    ('level = 1\nms = 10', 'level = 0\nms = 10', "23: error: [clock]: the phase table needs at least one high "
                                                 "(level 1) and one low (level 0) phase"),
    ('encoding = ["01 n"]', 'encoding = ["00 n"]', "45: error: instruction 'put n': its encoding overlaps "
                                                   "instruction 'stop' at first word 0x0; the first word "
                                                   "alone must tell them apart, or both must say decode_words ≥ 2"),
    ('steps = ["a <- n"]', 'steps = ["a <- n; out(n, a); out(n, a)"]',
     "46: error: instruction 'put n' step 2: two port transfers in one micro-step (there is one I/O bus)"),
    ('steps = ["a <- n"]', 'steps = ["a <- n + 0xF0"]',
     "46: error: instruction 'put n' step 2: the constant 240 does not fit the 2 bits of the value it is "
     "added to or taken from"),
    ('steps = ["a <- n"]', 'steps = ["a <- 0x1F"]',
     "46: error: instruction 'put n' step 2: 'a' holds 4 bits but the value written to it has 5"),
    ('steps = ["a <- n"]', 'steps = ["a <- add(a, n) sets z"]\n\n[[instruction]]\nsyntax = "put n:n"\n'
                           'encoding = ["10 n"]\nsteps = ["a <- adc(a, n) sets z"]',
     "51: error: instruction 'put n' step 2: adc reads the carry flag, and the machine has none"),
    ('syntax = "stop"', 'syntax = "stop n:m"',
     "39: error: instruction 'stop n': unknown operand kind 'm' (kinds: n)"),
])
def test_tiny_machine_errors(old, new, message):
    assert TINY.count(old) == 1
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(TINY.replace(old, new), "tiny.toml")
    assert str(caught.value) == f"tiny.toml:{message}"


# ----- no edit of a valid file gives a traceback ----------------------------------------------

WRONG_VALUES = ['"zz"', "[1, 2]", "-3", "{ a = 1 }", "true", "2.5"]
TEXTS = {"ref8": REF8_TEXT, "acc12": ACC12_PATH.read_text(encoding="utf-8"),
         "cond4": (ACC12_PATH.parent / "cond4.toml").read_text(encoding="utf-8")}


@pytest.mark.parametrize("name", list(TEXTS))
@settings(max_examples=150, deadline=None)
@given(data=st.data())
def test_a_deleted_line_or_a_wrong_value_is_a_machine_error_or_a_working_machine(name, data):
    lines = TEXTS[name].splitlines()
    index = data.draw(st.integers(0, len(lines) - 1), label="line")
    key, equals, _value = lines[index].partition(" = ")
    if equals and data.draw(st.booleans(), label="replace value"):
        lines[index] = f"{key} = {data.draw(st.sampled_from(WRONG_VALUES), label='value')}"
    else:
        del lines[index]
    try:
        machine = emu.machine_from_text("\n".join(lines), "edited.toml")
    except emu.MachineError as exc:
        assert str(exc).startswith("edited.toml:")
        return
    emulator = emu.Emulator(machine)
    emulator.load([(0, [w & machine.data_mask for w in range(1, 120)])])
    emulator.run(max_cycles=300)


def test_micro_step_numbers_read_as_in_the_assembler():
    """Leading zeros are decimal, as spec §4 numbers are; an absurd literal is a located error."""
    from emu.description.notation import Name, Offset, parse_step
    assert parse_step("pc <- pc + 09")[0].value == Offset(Name("pc"), 9)
    with pytest.raises(emu.MachineError, match="has too many digits"):
        parse_step("pc <- pc + " + "9" * 200)


@pytest.mark.parametrize("old, new, message", [
    ('name = "D"', 'name = "A"', "ref8.toml:96: error: [[clock.phase]] 4 ('A'): two phases are named 'A'; "
                                 "each phase needs a name of its own"),
    ('syntax = "shr rd:reg"\nencoding = ["10000 rd"]\nsteps = ["rd <- shr(rd) sets z n c"]',
     'syntax = "shr rd:reg"\nencoding = ["10000 rd"]',
     "ref8.toml:328: error: instruction 'shr rd': 'steps' must be a list of micro-step strings, or "
     "tables { do = \"…\", lines = [\"…\"] } (steps = [] for one that only fetches)"),
], ids=["two phases of one name", "an instruction without steps"])
def test_slips_a_typo_could_make(old, new, message):
    text = (Path(emu.__file__).parent / "machines" / "ref8.toml").read_text()
    assert old in text
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text.replace(old, new, 1), "ref8.toml")
    assert str(caught.value) == message


@pytest.mark.parametrize("old, new, message", [
    ('imm8 = { bits = 8, min = -128, max = 255 }', 'imm8 = { bits = 8, min = -128, max = 999 }',
     "ref8.toml:55: error: [operands] imm8: 8 bits hold -128…255 at most (signed or unsigned), not -128…999"),
    ('reg = { registers = ["r0", "r1",', 'reg = { registers = ["r0", "r0",',
     "ref8.toml:54: error: [operands] reg: register 'r0' is listed twice in 'registers'"),
], ids=["range wider than its bits", "a register listed twice"])
def test_operand_kinds_that_could_not_work(old, new, message):
    text = (Path(emu.__file__).parent / "machines" / "ref8.toml").read_text()
    assert old in text
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text.replace(old, new, 1), "ref8.toml")
    assert str(caught.value) == message


def test_a_register_of_the_machine_outside_an_operand_kind_is_named_as_such():
    import asm
    text = (Path(emu.__file__).parent / "machines" / "ref8.toml").read_text()
    text += '\n[[instruction]]\nsyntax = "clr rd:few"\nencoding = ["10011 0 rd"]\nsteps = ["rd <- 0"]\n'
    text = text.replace('[operands]\n', '[operands]\nfew = { registers = ["r0", "r5", "r7"] }\n', 1)
    machine = emu.machine_from_text(text, "ref8.toml")
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text("clr r1\n", machine, "p.asm")
    assert caught.value.diagnostics[0].message == "r1 cannot stand here: this operand takes r0, r5 or r7"


# ----- the line of the offending key ---------------------------------------------------------

@pytest.mark.parametrize("old, new, line, message", [
    ("data_bits = 8", "data_bits = 0", 21, "[machine]: 'data_bits' must be 1…16, not 0"),
    ("ms = 40", "ms = -3", 85, "[[clock.phase]] 2 ('B'): 'ms' must be a positive number of milliseconds, not -3"),
    ("imm8 = { bits = 8,", "imm8 = { bits = 40,", 55, "[operands] imm8: 'bits' must be 1…32, not 40"),
    ('in.1 = "input"', 'in.1 = "tape"', 63,
     "[ports.in] 1: an in port device must be one of switches, input, input_ready, not 'tape'"),
    ('"pc <- {mem[sp], t}; sp <- sp + 1"', '"pc <- {mem[sp], q}; sp <- sp + 1"', 123,
     "instruction 'ret' step 3: unknown register or field 'q' "
     "(registers: r0, r1, r2, r3, r4, r5, r6, r7, sp, pc, ir, t, u, x; fields: none)"),
    ("c_uf = 330", "c_uf = -1", 488, "[[timing.stage]] 3: 'c_uf' must be above zero, not -1"),
    ("rated_operations = 10_000_000", "rated_operations = -5", 499,
     "[wear]: 'rated_operations' must be a positive number of operations, not -5"),
    ('"stage 1" = 20_000_000', '"stage 9" = 20_000_000', 502,
     "[wear.relays]: no relay named 'stage 9' (relays: stage 1, stage 2, stage 3, stage 4, read, load ir, "),
], ids=["machine", "clock phase", "operand kind", "port", "instruction step", "timing stage", "wear",
        "wear relay"])
def test_a_message_names_the_line_of_the_key(old, new, line, message):
    error = load_error(ref8_with(old, new))
    assert error.line == line
    assert str(error).startswith(f"{FILE}:{line}: error: {message}")
    assert ref8_with(old, new).splitlines()[line - 1].strip().startswith(new.split(" = ")[0].split("{")[0].strip())


def test_a_step_in_a_list_over_several_lines_names_its_own_line():
    text = ref8_with('steps = ["pc <- x"]', 'steps = [\n  "t <- u",\n  "pc <- y",\n]')
    error = load_error(text)
    assert error.text().startswith("instruction 'jmp x' step 3: unknown register or field 'y'")
    assert text.splitlines()[error.line - 1] == '  "pc <- y",'


@pytest.mark.parametrize("value, message", [
    ("inf", "'ms' must be a positive number of milliseconds, not inf"),
    ("nan", "'ms' must be a positive number of milliseconds, not nan"),
    ("-inf", "'ms' must be a positive number of milliseconds, not -inf"),
    ("1e-300", "'ms' must be at least 0.000001 (one nanosecond, the clock's resolution), not 1e-300"),
    ("4e-7", "'ms' must be at least 0.000001 (one nanosecond, the clock's resolution), not 4e-07"),
    ("1e300", "'ms' must be at most 86400000 (a day), not 1e+300"),
    ("true", "'ms' must be a positive number of milliseconds, not True"),
])
def test_a_phase_length_the_clock_cannot_count_is_refused_at_its_line(value, message):
    error = load_error(ref8_with("ms = 40", f"ms = {value}"))
    assert str(error) == f"{FILE}:85: error: [[clock.phase]] 2 ('B'): {message}"


def test_the_shortest_phase_the_clock_counts_is_one_nanosecond():
    machine = emu.machine_from_text(ref8_with("ms = 40", "ms = 0.000001"), FILE)
    assert machine.phases[1].duration_ns == 1


def test_a_fetch_step_that_computes_the_opcode_is_refused_by_the_loader():
    """The engine peeks at the next opcode by replaying plain transfers, so the loader refuses the rest."""
    for fetch in ('"ir <- not(mem[pc]); pc <- pc + 1"', '"t <- in(0); pc <- pc + 1", "ir <- t"',
                  '"ir <- z ? mem[pc] : t; pc <- pc + 1"'):
        error = load_error(ref8_with('steps = ["ir <- mem[pc]; pc <- pc + 1"]', f"steps = [{fetch}]"))
        assert str(error) == (f"{FILE}:102: error: [fetch]: the fetch steps must load the instruction register "
                              f"by plain register transfers (no ALU, input or choice)"), fetch


def test_a_fetch_step_through_a_latch_is_plain():
    text = ref8_with('steps = ["ir <- mem[pc]; pc <- pc + 1"]', 'steps = ["t <- mem[pc]; pc <- pc + 1", "ir <- t"]')
    machine = emu.machine_from_text(text, FILE)
    assert len(machine.fetch) == 2


def test_timing_and_wear_are_checked_into_typed_fields_at_load():
    machine = emu.machine_from_text(REF8_TEXT, FILE)
    assert machine.timing.supply == 24.0 and machine.timing.phase_stage == (0, 1, 2, 3)
    assert [s.mode for s in machine.timing.stages] == ["charge", "discharge", "charge", "charge"]
    assert machine.timing.stages[0].line == 475
    assert machine.wear.life("stage 1") == 20_000_000 and machine.wear.life("read") == 10_000_000
    bare = REF8_TEXT[:REF8_TEXT.index("[timing]")]
    machine = emu.machine_from_text(bare, FILE)
    assert machine.timing is None and machine.wear.life("read") is None
