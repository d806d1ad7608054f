"""The disassembler: text from the machine description, labels from the
debug file, and assemble → disassemble → assemble round trips."""

from pathlib import Path

import pytest
from hypothesis import given, settings, strategies as st

import asm
import emu

HERE = Path(__file__).parent
REF8 = emu.load_machine("ref8")
ACC12 = emu.load_machine(HERE / "machines" / "acc12.toml")
NIB4 = emu.load_machine(HERE / "machines" / "nib4.toml")
COND4 = emu.load_machine(HERE / "machines" / "cond4.toml")     # its goto's cond kind has named values
MACHINES = {"ref8": REF8, "acc12": ACC12, "nib4": NIB4, "cond4": COND4}


def code_lines(lines):
    """The instruction text of each line, without the address comment."""
    return [line.split(";")[0].strip() for line in lines]


def test_ref8_disassembly_text():
    words = [0x18, 0x05, 0x06, 0x34, 0x12, 0x32, 0xA0, 0x0A, 0xC1, 0xFF, 0x0B, 0x00, 0x01, 0x01]
    assert code_lines(asm.disassemble(REF8, words, 0)) == [
        ".org 0x0000", "li r0, 5", "li x, 0x1234", "ld r2, [x]", "add r1, r2", "add r1, 255",
        "jnz 0x0100", "halt"]


def test_full_lines_show_address_and_words():
    lines = asm.disassemble(REF8, [0x08, 0x34, 0x12], 0x200)
    assert lines == ["        .org 0x0200", "        jmp 0x1234                   ; 0200  08 34 12"]


@pytest.mark.parametrize("words, expected", [
    ([0x13], [".byte 0x13"]),                      # no ref8 instruction has opcode 0x13
    ([0x12, 0xC0], [".byte 0x12, 0xC0"]),          # mov needs the top bits of word 2 clear
    ([0x08, 0x34], [".byte 0x08", "ld r4, [x]"]),  # jmp cut short by the end of the words
])
def test_unknown_words_become_data(words, expected):
    assert code_lines(asm.disassemble(REF8, words, 0))[1:] == expected


def test_acc12_disassembly_text():
    words = [0x105, 0x9FF, 0xA01, 0x001, 0xF00]
    assert code_lines(asm.disassemble(ACC12, words, 0)) == [
        ".org 0x00", "load 0x05", "set 255", "put 1", ".byte 0x001", "stop"]


def test_labels_pauses_and_data_from_the_debug_file():
    program = asm.assemble_text("""
start:  li r0, 3
loop:   dec r0
        jnz loop
        pause
        call far
        halt
table:  .byte 1, 2
far = 0x4000
        jmp table + 1
    """, REF8)
    lines = code_lines(asm.disassemble(REF8, program.flat(), 0, program))
    # far is a constant, not a label: addresses are named by labels only
    assert lines == [
        ".org 0x0000", "start:", "li r0, 3", "loop:", "dec r0", "jnz loop", "pause",
        "call 0x4000", "halt", "table:", ".byte 0x01, 0x02", "jmp 0x000C"]
    tail = asm.disassemble(REF8, program.flat()[3:], 3, program)
    assert code_lines(tail)[:3] == ["loop = 0x0002", ".org 0x0003", "jnz loop"]
    assert asm.assemble_text("\n".join(tail), REF8).segments == [(3, program.flat()[3:])]
    again = asm.assemble_text("\n".join(asm.disassemble(REF8, program.flat(), 0, program)), REF8)
    assert again.flat() == program.flat()
    assert again.pauses == program.pauses


def test_a_debug_file_read_back_disassembles_like_the_program(tmp_path):
    program = asm.assemble_text("top: nop\n jmp top\n", REF8)
    asm.write_debug(program, tmp_path / "p.dbg.json")
    info = asm.read_debug(tmp_path / "p.dbg.json", REF8)
    assert asm.disassemble(REF8, program.flat(), 0, info) == asm.disassemble(REF8, program.flat(), 0, program)


def test_acc12_labels_only_on_address_operands():
    program = asm.assemble_text("one: put 1\n load one\n set 1\n stop\n", ACC12)
    assert code_lines(asm.disassemble(ACC12, program.flat(), 0, program))[1:] == [
        "one:", "put 1", "load one", "set 1", "stop"]


def test_a_jump_through_a_group_of_latches_shows_its_label():
    """brace8 latches a target in mlo and mhi and jumps with `pc <- m`, m = {mhi, mlo}."""
    brace8 = emu.load_machine(HERE / "machines" / "brace8.toml")
    source = "top: goto always, far\n call far\n lsp 0x0102\n halt\nfar: ret\n"
    program = asm.assemble_text(source, brace8)
    assert code_lines(asm.disassemble(brace8, program.flat(), 0, program))[1:] == [
        "top:", "goto always, far", "call far", "lsp 0x0102", "halt", "far:", "ret"]
    memory = program.image()
    assert asm.disassemble_at(brace8, lambda a: memory.get(a, 0), 3, program) == ("call far", 3)


def test_disassemble_at_reads_through_a_function():
    program = asm.assemble_text(".org 0x10\nhere: jmp here\n.byte 0x13\n", REF8)
    memory = program.image()

    def read(address):
        return memory.get(address, 0)

    assert asm.disassemble_at(REF8, read, 0x10, program) == ("jmp here", 3)
    assert asm.disassemble_at(REF8, read, 0x10) == ("jmp 0x0010", 3)
    assert asm.disassemble_at(REF8, read, 0x13) == (".byte 0x13", 1)
    assert asm.disassemble_at(REF8, read, 0xFFFF) == ("nop", 1)
    assert asm.disassemble_at(ACC12, lambda a: 0x1FF, 0xFF) == ("load 0xFF", 1)


# ----- round trips -------------------------------------------------------------

@st.composite
def instruction_text(draw, machine):
    ins = draw(st.sampled_from(machine.instructions))
    parts = []
    for pattern in ins.operands:
        if pattern.field is None:
            parts.append(draw(st.sampled_from([pattern.before, pattern.before.upper()])))
            continue
        kind = ins.fields[pattern.field].kind
        if kind.is_register:
            shown = draw(st.sampled_from(kind.registers))
        else:
            value = draw(st.integers(kind.low, kind.high))
            shown = draw(st.sampled_from([str(value), hex(value) if value >= 0 else str(value),
                                          *(n.upper() for n, v in kind.value_names if v == value)]))
        parts.append(f"{pattern.before}{shown}{pattern.after}")
    return f"{ins.mnemonic} {', '.join(parts)}".strip()


@st.composite
def programs(draw, machine):
    lines = [f".org {draw(st.integers(0, machine.memory_words // 2))}"]
    for _ in range(draw(st.integers(1, 25))):
        choice = draw(st.integers(0, 9))
        if choice == 0:
            lines.append(f".byte {draw(st.integers(0, machine.data_mask))}")
        elif choice == 1:
            lines.append("pause")
        else:
            lines.append(draw(instruction_text(machine)))
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("name", MACHINES)
@settings(max_examples=120, deadline=None)
@given(data=st.data())
def test_round_trip(name, data):
    machine = MACHINES[name]
    source = data.draw(programs(machine))
    program = asm.assemble_text(source, machine)
    [(start, words)] = program.segments
    text = "\n".join(asm.disassemble(machine, words, start))
    again = asm.assemble_text(text, machine)
    assert again.segments == program.segments


@pytest.mark.parametrize("name", MACHINES)
@settings(max_examples=60, deadline=None)
@given(data=st.data())
def test_round_trip_with_labels(name, data):
    machine = MACHINES[name]
    body = data.draw(programs(machine)).splitlines()
    labelled = [body[0]] + [f"l{i}: {line}" for i, line in enumerate(body[1:])]
    program = asm.assemble_text("\n".join(labelled) + "\n", machine)
    [(start, words)] = program.segments
    text = "\n".join(asm.disassemble(machine, words, start, program))
    again = asm.assemble_text(text, machine)
    assert again.segments == program.segments
    assert again.pauses == program.pauses


def test_a_register_field_naming_no_register_disassembles_as_data():
    """Three registers in a 2-bit field: the word holding 3 there is no instruction."""
    from test_codegen import COPY_IN_SECOND_WORD, THREE_REGISTERS
    machine = emu.machine_from_text(THREE_REGISTERS + COPY_IN_SECOND_WORD, "three.toml")
    lines = asm.disassemble(machine, [0b10, 3 << 2 | 1, 0b10, 1 << 2 | 2, 0])
    assert [line.split(";")[0].strip() for line in lines] == [
        ".org 0x00", ".byte 0x02, 0x0D", "copy b, c", "stop"]


@st.composite
def labelled_programs(draw, machine):
    """Code in one segment, labelled data in another, operands naming the data labels."""
    quarter = machine.memory_words // 4
    code_at, data_at = draw(st.integers(0, quarter)), draw(st.integers(2 * quarter, 3 * quarter))
    data_count = draw(st.integers(1, 6))
    lines = [f".org {code_at}"]
    for i in range(draw(st.integers(1, 20))):
        if draw(st.integers(0, 9)) == 0:
            lines.append(f"c{i}: pause")
            continue
        ins = draw(st.sampled_from(machine.instructions))
        parts = []
        for pattern in ins.operands:
            if pattern.field is None:
                parts.append(pattern.before)
                continue
            kind = ins.fields[pattern.field].kind
            if kind.is_register:
                shown = draw(st.sampled_from(kind.registers))
            else:
                fitting = [f"v{k}" for k in range(data_count) if kind.low <= data_at + k <= kind.high]
                shown = draw(st.sampled_from(fitting)) if fitting and draw(st.booleans()) \
                    else str(draw(st.integers(kind.low, kind.high)))
            parts.append(f"{pattern.before}{shown}{pattern.after}")
        lines.append(f"c{i}: {ins.mnemonic} {', '.join(parts)}".strip())
    lines.append(f".org {data_at}")
    lines.extend(f"v{k}: .byte {draw(st.integers(0, machine.data_mask))}" for k in range(data_count))
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("name", MACHINES)
@settings(max_examples=80, deadline=None)
@given(data=st.data())
def test_round_trip_through_the_image_and_its_debug_file(name, data, tmp_path_factory):
    """assemble → image + debug file → dis with the debug file → assemble: the same image.

    Before the fix each segment was disassembled alone, so a data label used
    from the code came out as ``v0 = 0x...`` and as ``v0:`` (a duplicate label)."""
    machine = MACHINES[name]
    folder = tmp_path_factory.mktemp("trip")
    program = asm.assemble_text(data.draw(labelled_programs(machine)), machine)
    asm.write_intel_hex(program, folder / "p.hex")
    asm.write_debug(program, folder / "p.dbg.json")
    segments = asm.read_image(folder / "p.hex", machine)
    debug = asm.read_debug(folder / "p.dbg.json", machine)
    text = "\n".join(asm.disassemble_image(machine, segments, debug))
    again = asm.assemble_text(text, machine)
    assert again.segments == program.segments
    assert again.pauses == program.pauses
    assert {n: program.labels[n] for n in again.labels} == again.labels   # no label moved or invented
