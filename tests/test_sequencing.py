"""Decoding by later words and conditional sequencing, on the nib4 test machine.

Cycle counts here are counted by hand from tests/machines/nib4.toml (one
micro-step per cycle, the fetch is one step, a halt freezes at the hold
point right after its pulse): they are not read back from the engine.
"""

from __future__ import annotations

import json

import pytest

import asm
from emu import Emulator, MachineError, machine_from_text
from emu.engine import compile_machine

from cli_support import cli, write
from engine_support import MACHINES, NIB4_PATH, boot, encode, run_program

NIB4 = MACHINES["nib4"]
NIB4_TEXT = NIB4_PATH.read_text(encoding="utf-8")
PATHS = ["fused", "stepped"]


def words(*forms) -> list[int]:
    """Encoded instructions: ``"inc"`` or ``("ldb k", {"k": 9})``."""
    out = []
    for form in forms:
        display, values = (form, {}) if isinstance(form, str) else form
        out += encode(NIB4, display, **values)
    return out


# ----- cycles actually run, on both paths ---------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("program, values, cycles, a, pc", [
    # skz with z clear runs on into inc: skz 2 + inc 2 + stop 2
    (words("skz", "inc", "stop"), {}, 6, 1, 3),
    # skz with z set skips inc: skz 3 + stop 2
    (words("skz", "inc", "stop"), {"z": 1}, 5, 0, 3),
    # jnz taken (z clear): 4 + stop at 5; not taken: 3 + inc 2 + stop 2
    (words(("jnz addr", {"addr": 5})) + [0, 0] + words("stop"), {}, 6, 0, 6),
    (words(("jnz addr", {"addr": 6})) + words("inc", "stop", "stop"), {"z": 1}, 7, 1, 5),
    # spin from a = 3: four passes of its one step (the last sees z) + fetch, then stop 2
    (words("spin", "stop"), {"a": 3}, 7, 15, 2),
    # prefixed: ldb 4, swap 3, stop 2
    (words(("ldb k", {"k": 9}), "swap", "stop"), {}, 9, 9, 6),
    # prefixed skc: c clear 3 (runs inc), c set 4 (skips inc)
    (words("skc", "inc", "stop"), {}, 7, 1, 4),
    (words("skc", "inc", "stop"), {"c": 1}, 6, 0, 4),
])
def test_cycles_run_match_the_hand_count(path, program, values, cycles, a, pc):
    run = run_program(NIB4, program, path, values=values)
    emu = run.emu
    assert run.stop.kind == "halted"
    assert (emu.cycles, emu.get("a"), emu.pc) == (cycles, a, pc)
    assert emu.time_ns == cycles * NIB4.cycle_ns  # 40 ms a cycle: the real-time estimate counts them too


@pytest.mark.parametrize("path", PATHS)
def test_an_undefined_second_word_is_an_undefined_opcode_at_the_instruction(path):
    """1111 0111 is no instruction: the shared step runs (2 cycles), then it ends as a no-op."""
    run = run_program(NIB4, [0b1111, 0b0111] + words("inc", "stop"), path)
    emu = run.emu
    assert (emu.cycles, emu.instructions, emu.get("a")) == (2 + 2 + 2, 3, 1)
    assert emu.warnings == ["undefined opcode at 0x00 ran as a no-op"]


@pytest.mark.parametrize("path", PATHS)
def test_wait_until_stalls_until_input_is_ready(path):
    emu = Emulator(NIB4)
    if path == "stepped":
        from emu import Observer
        emu.observe(Observer())
    emu.load([(0, words("get", "stop"))])
    assert emu.run(max_cycles=50).kind == "cycle_limit"
    assert (emu.cycles, emu.instructions) == (50, 0)
    assert emu.sequencer == (NIB4.instructions[6], 2)  # repeating step 3, the wait
    emu.input_bytes = b"\x05"
    assert emu.run(max_cycles=50).kind == "halted"
    # the wait saw "not ready" before its last pass: one more pass samples "ready", the next
    # pass sees it and goes on, then step 4 reads, then stop 2
    assert (emu.cycles, emu.get("a")) == (50 + 2 + 1 + 2, 5)


def test_step_presses_repeat_the_waiting_step_one_pulse_each():
    emu = boot(NIB4, words("get", "stop"))
    emu.set_switch_run(False)
    emu.run(max_cycles=10)
    while emu.sequencer[1] != 2:
        emu.press_step()
    before = emu.cycles
    for press in range(1, 6):
        assert emu.press_step()
        assert emu.cycles == before + press and emu.sequencer[1] == 2
    emu.input_bytes = b"\x03"
    emu.press_step()   # samples "ready"; the wait still saw the earlier "not ready"
    emu.press_step()   # the wait sees "ready": on to step 4
    assert emu.sequencer[1] == 3
    emu.press_step()
    assert emu.at_instruction_boundary and emu.get("a") == 3


def test_a_snapshot_inside_a_stall_continues_exactly(tmp_path):
    whole, first = boot(NIB4, words("get", "stop")), boot(NIB4, words("get", "stop"))
    for emu in (whole, first):
        emu.run(max_cycles=17)
    first.snapshot(tmp_path / "s.json")
    second = Emulator.restore(tmp_path / "s.json", NIB4)
    for emu in (whole, second):
        emu.input_bytes = b"\x07"
        emu.run(max_cycles=40)
    assert (second.cycles, second.get("a"), second.pc, second._seq) == (whole.cycles, whole.get("a"), whole.pc,
                                                                         whole._seq) == (17 + 5, 7, 2, (-1, 0))


def test_the_fast_path_starts_an_instruction_only_when_its_longest_path_fits():
    """Without ldb (4 cycles) the longest fused path is jnz taken (4), the shortest paths all 3: a
    budget of 3 must leave jnz to the stepping path, which stops inside it, as the stepped run does."""
    ldb = NIB4_TEXT[NIB4_TEXT.index('[[instruction]]\nsyntax = "ldb k:k"'):NIB4_TEXT.index("# a prefixed skip")]
    machine = machine_from_text(NIB4_TEXT.replace(ldb, ""), "nib4-without-ldb.toml")
    assert compile_machine(machine).max_fused_cycles == 4
    program = encode(machine, "jnz addr", addr=5) + [0, 0] + encode(machine, "stop")
    fused = run_program(machine, program, "fused", max_cycles=3)
    stepped = run_program(machine, program, "stepped", max_cycles=3)
    assert fused.stop.kind == stepped.stop.kind == "cycle_limit"
    assert fused.emu._seq == stepped.emu._seq == (4, 2)
    assert fused.emu.cycles == stepped.emu.cycles == 3


def test_which_instructions_are_fused():
    """Straight and branching ones are; halting ones and loops (spin, get) are stepped."""
    source = compile_machine(NIB4).source
    table = source[source.index("fused = ["):].split("]")[0]
    entries = [e.strip() for e in table.replace("fused = [", "").split(",") if e.strip()]
    assert entries[0b0011] == "run_skz" and entries[0b0100] == "run_jnz_addr"
    assert entries[0b1111].startswith("run_group_")
    assert [entries[i] for i in (0b0000, 0b0110, 0b1010, 0b1100)] == ["fallback"] * 4
    assert compile_machine(NIB4).max_fused_cycles == 4


# ----- the description: cycle ranges, isa ------------------------------------------------

def test_cycle_ranges():
    ranges = {ins.display: (ins.cycles(NIB4).shortest, ins.cycles(NIB4).longest) for ins in NIB4.instructions}
    assert ranges["skz"] == (2, 3) and ranges["jnz addr"] == (3, 4) and ranges["skc"] == (3, 4)
    assert ranges["get"] == (4, None) and ranges["spin"] == (2, None)
    assert ranges["ldb k"] == (4, 4) and ranges["inc"] == (2, 2)
    assert [str(NIB4.instructions[i].cycles(NIB4)) for i in (3, 6, 7)] == ["2–3", "4–∞", "2"]


def test_isa_shows_ranges(capsys):
    code, out, _err = cli(capsys, "isa", "--machine", NIB4_PATH, "--brief")
    assert code == 0
    rows = {line.split()[0]: line.split() for line in out.splitlines() if line[:1].isalpha()}
    assert rows["skz"][-2] == "2–3" and rows["get"][-2] == "4–∞" and rows["swap"][-2] == "3"
    code, out, _err = cli(capsys, "isa", "--machine", NIB4_PATH, "--json", "get", "inc")
    table = {i["syntax"]: i for i in json.loads(out)["instructions"]}
    assert (table["get"]["shortest"], table["get"]["longest"], table["inc"]["cycles"]) == (4, None, 2)


def test_run_summary_counts_the_cycles_run(capsys, tmp_path):
    program = write(tmp_path, "skip.asm", "skz\ninc\nstop\n")
    code, out, _err = cli(capsys, "run", "--machine", NIB4_PATH, program)
    assert code == 0
    assert "6 cycles ≈ 0.2 s at 25 Hz, 3 instructions" in out
    code, out, _err = cli(capsys, "run", "--json", "--machine", NIB4_PATH, program)
    report = json.loads(out)
    assert (report["cycles"], report["sim_seconds"]) == (6, 0.24)   # skz 2 + inc 2 + stop 2, 40 ms a cycle


# ----- assembler and disassembler on extended opcodes -------------------------------------

def test_extended_opcodes_assemble_disassemble_and_assemble_again():
    source = "ldb 9\nswap\nclr\nlamp\nskc\njnz 0x2A\nstop\n"
    program = asm.assemble_text(source, NIB4)
    [(start, image)] = program.segments
    assert image == [0xF, 0x4, 0x9, 0xF, 0x1, 0xF, 0x2, 0xF, 0x3, 0xF, 0x5, 0x4, 0x2, 0xA, 0x0]
    text = [line.split(";")[0].strip() for line in asm.disassemble(NIB4, image, start)]
    assert text == [".org 0x00", "ldb 9", "swap", "clr", "lamp", "skc", "jnz 0x2A", "stop"]
    assert asm.assemble_text("\n".join(text) + "\n", NIB4).segments == program.segments


def test_an_undefined_second_word_disassembles_as_data():
    text = [line.split(";")[0].strip() for line in asm.disassemble(NIB4, [0xF, 0x7, 0x7], 0)]
    assert text == [".org 0x00", ".byte 0xF", "inc", "inc"]


# ----- located load errors -------------------------------------------------------------------

def load_error(old: str, new: str) -> MachineError:
    assert NIB4_TEXT.count(old) == 1, old
    with pytest.raises(MachineError) as caught:
        machine_from_text(NIB4_TEXT.replace(old, new), "nib4.toml")
    return caught.value


def line_of(text: str) -> int:
    return NIB4_TEXT[:NIB4_TEXT.index(text)].count("\n") + 1


CLR = 'encoding = ["1111", "0010"]\ndecode_words = 2\nsteps = ["t <- mem[pc]; pc <- pc + 1", "a <- 0"]'


@pytest.mark.parametrize("old, new, at, message", [
    (CLR, CLR.replace("decode_words = 2\n", ""), 'encoding = ["1111", "0010"]',
     "instruction 'clr': its encoding overlaps instruction 'swap' at first word 0xF; the first word alone "
     "must tell them apart, or both must say decode_words ≥ 2"),
    (CLR, CLR.replace('"0010"', '"0001"'), 'encoding = ["1111", "0010"]',
     "instruction 'clr': it is ambiguous with instruction 'swap': their fixed bits overlap on every decoding "
     "word (both decode words F 1, hex)"),
    (CLR, CLR.replace('"t <- mem[pc]; pc <- pc + 1"', '"t <- mem[pc]; pc <- pc + 1; b <- a"'),
     'encoding = ["1111", "0010"]',
     "instruction 'clr': it is decoded together with instruction 'swap', so their steps up to the one "
     "fetching the last decoding word must be the same text, driving the same control lines; they differ"),
    ('steps = ["end if !z", "pc <- pc + 1"]', 'steps = ["goto 5 if !z", "pc <- pc + 1"]',
     'steps = ["end if !z", "pc <- pc + 1"]',
     "instruction 'skz' step 2: goto 5: the instruction's own steps are numbered 2…3 (step 1 is "
     "the fetch)"),
    ('steps = ["end if !z", "pc <- pc + 1"]', 'steps = ["end if !z; goto 3", "pc <- pc + 1"]',
     'steps = ["end if !z", "pc <- pc + 1"]',
     "instruction 'skz' step 2: a step has at most one sequencing statement (end, goto, wait until)"),
    ('steps = ["end if !z", "pc <- pc + 1"]', 'steps = ["end if a", "pc <- pc + 1"]',
     'steps = ["end if !z", "pc <- pc + 1"]',
     "instruction 'skz' step 2: a condition operand must be 1 bit wide (a flag, a 1-bit register or field, "
     "or a slice like x[0]), but 'a' has 4"),
    ('steps = ["t <- mem[pc]; pc <- pc + 1", "end if !c", "pc <- pc + 1"]',
     'steps = ["t <- mem[pc]; pc <- pc + 1; end if !c", "end if !c", "pc <- pc + 1"]',
     'steps = ["t <- mem[pc]; pc <- pc + 1", "end if !c", "pc <- pc + 1"]',
     "instruction 'skc' step 2: 'end' cannot come before the instruction is decoded (after step 2)"),
    ('steps = ["t <- mem[pc]; pc <- pc + 1", "end if !c", "pc <- pc + 1"]',
     'steps = ["t <- mem[pc]; pc <- pc + 1", "goto 2 if !c", "pc <- pc + 1"]',
     'steps = ["t <- mem[pc]; pc <- pc + 1", "end if !c", "pc <- pc + 1"]',
     "instruction 'skc' step 3: goto 2 crosses the decoding step (step 2): the steps up to it are shared by "
     "the instructions decoded there"),
    ('steps = ["ir <- mem[pc]; pc <- pc + 1"]', 'steps = ["ir <- mem[pc]; pc <- pc + 1; end"]',
     'steps = ["ir <- mem[pc]; pc <- pc + 1"]',
     "[fetch] step 1: fetch steps run in order: no end, goto or wait until (they belong to an instruction's "
     "own steps)"),
    ('encoding = ["1111", "0100", "k"]\ndecode_words = 2', 'encoding = ["1111", "0100", "k"]\ndecode_words = 4',
     'decode_words = 2\nsteps = ["t <- mem[pc]; pc <- pc + 1", "u <- mem[pc]',
     "instruction 'ldb k': 'decode_words' must be a number of leading encoding words, 1…3, not 4"),
])
def test_located_load_errors(old, new, at, message):
    error = load_error(old, new)
    assert str(error) == f"nib4.toml:{line_of(at)}: error: {message}"
