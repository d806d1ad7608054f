"""The assembly language ("Assembly language in brief" in emu/machines/ref8.md) on
both test machines: numbers, expressions, directives, forward references, operand forms, .expect."""

import ast
import gc
from pathlib import Path

import pytest
from hypothesis import assume, given, settings, strategies as st

import asm
import emu

HERE = Path(__file__).parent
REF8 = emu.load_machine("ref8")
ACC12 = emu.load_machine(HERE / "machines" / "acc12.toml")
FIXTURES = HERE / "asm_fixtures"


def words(text, machine=REF8):
    return asm.assemble_text(text, machine).flat()


def value_of(expr, machine=REF8):
    return asm.assemble_text(f"V = {expr}\n", machine).constants["V"]


# Character codes: ASCII (ANSI X3.4-1986); the escapes are the C set.
@pytest.mark.parametrize("literal, expected", [
    ("42", 42), ("007", 7), ("0x2A", 42), ("0X2a", 42), ("0b101010", 42), ("'A'", 65), ("'*'", 42),
    (r"'\n'", 10), (r"'\t'", 9), (r"'\r'", 13), (r"'\0'", 0), (r"'\\'", 92), (r"'\''", 39), (r"'\"'", 34),
])
def test_number_literals(literal, expected):
    assert value_of(literal) == expected


@pytest.mark.parametrize("expr, expected", [
    ("2 + 3 * 4", 14), ("(2 + 3) * 4", 20), ("1 << 4 | 1", 17), ("0xF0 & 0x3C ^ 0x0F", 0x3F),
    ("-7 / 2", -3), ("-7 % 2", -1), ("7 / -2", -3), ("~0", -1), ("- -5", 5), ("100 >> 2", 25),
    ("lo(0x1234)", 0x34), ("hi(0x1234)", 0x12), ("LO(0xABCD) + Hi(0xABCD)", 0xCD + 0xAB),
])
def test_expression_values(expr, expected):
    # -7 / 2 == -3: division truncates toward zero as in C (ISO C99 §6.5.5)
    assert value_of(expr) == expected


def test_lo_and_hi_split_at_the_machine_word():
    assert value_of("lo(0x123456)", ACC12) == 0x456
    assert value_of("hi(0x123456)", ACC12) == 0x123


_leaf = st.integers(min_value=0, max_value=10_000).map(str)
_ops = st.sampled_from(["+", "-", "*", "&", "|", "^", "<<", ">>"])


@st.composite
def _expressions(draw, depth=3):
    if depth == 0 or draw(st.booleans()):
        return draw(_leaf)
    op = draw(_ops)
    left = draw(_expressions(depth=depth - 1))
    right = draw(_expressions(depth=depth - 1))
    if op in ("<<", ">>"):
        right = str(draw(st.integers(0, 12)))
    return f"({left} {op} {right})"


@settings(max_examples=150, deadline=None)
@given(_expressions())
def test_expressions_agree_with_python(expr):
    # Outside reference: Python's integer operators, which share C's meaning
    # for + - * & | ^ << >> on these operands (Python Language Reference §6).
    assert value_of(expr) == eval(expr)


def _python_value(text):
    """Python's value of an expression, or None where the assembler rightly refuses it: a shift
    count outside 0…64, or a value (the whole or a part) of 256 bits or more."""
    parts = [node for node in ast.walk(ast.parse(text, mode="eval")) if isinstance(node, ast.BinOp)]

    def value(node):
        return eval(compile(ast.Expression(node), "<part>", "eval"))
    if any(isinstance(p.op, (ast.LShift, ast.RShift)) and not 0 <= value(p.right) <= 64 for p in parts):
        return None
    if any(abs(value(p)) >= 1 << 256 for p in parts):
        return None
    return eval(text)


@settings(max_examples=200, deadline=None)
@given(st.integers(0, 10_000), st.lists(st.tuples(_ops, st.integers(0, 12)), max_size=7))
def test_unbracketed_expressions_group_by_precedence_as_in_python(first, rest):
    # Outside reference: Python ranks these operators as C does (* over + - over << >> over &
    # over ^ over |, each group from the left; Python Language Reference §6.17, ISO C99 §6.5).
    text = " ".join([str(first), *(f"{op} {n}" for op, n in rest)])
    expected = _python_value(text)
    assume(expected is not None)
    assert value_of(text) == expected


def test_the_cycle_collector_rests_while_a_long_program_is_assembled():
    """Its walks over the assembly's many live objects made long programs cost more per line.
    Each collection counts (the interpreter's gc.callbacks); the caller's setting comes back."""
    program = "".join(f"k{i} = {i} + 1\n" for i in range(20_000)) + "nop\n"
    collections = []

    def count(phase, _info):
        if phase == "start":
            collections.append(1)
    gc.callbacks.append(count)
    try:
        asm.assemble_text(program, REF8)
        assert gc.isenabled() and len(collections) <= 2      # one as it comes back on, at most
        gc.disable()
        collections.clear()
        asm.assemble_text(program, REF8)
        assert not gc.isenabled() and collections == []
    finally:
        gc.enable()
        gc.callbacks.remove(count)


def test_an_assembly_leaves_no_reference_cycle_that_grows_with_the_program():
    """Freed by reference counting as soon as it ends, not kept (with every record of both
    passes) until the cycle collector comes round; gc.collect() counts what only it can free."""
    def cyclic_garbage(lines):
        program = "".join(f"l{i}: ld r1, [l{i}]\n.byte {i % 200}\n" for i in range(lines)) + "halt\n"
        gc.collect()
        gc.disable()
        try:
            asm.assemble_text(program, REF8)
            return gc.collect()
        finally:
            gc.enable()
    assert cyclic_garbage(2000) == cyclic_garbage(10)


def test_forward_references_and_dollar():
    program = asm.assemble_text("""
        jmp end
        .word end, $
here:   .byte lo(end), hi(end), $ - here
end:    halt
    """, REF8)
    # jmp end = 08 lo hi; end is at 3 + 4 + 3 = 10; $ is the statement's own address
    assert program.flat() == [0x08, 10, 0, 10, 0, 3, 0, 10, 0, 0, 0x01]
    assert program.labels == {"here": 7, "end": 10}


def test_directives_build_the_expected_words():
    program = asm.assemble_text("""
        .org 0x10
        .byte "Hi\\n", -1, 'z'
        .word 0xBEEF
        .zero 3
SIZE    = 4
        .equ TWICE, SIZE * 2
        .byte TWICE
    """, REF8)
    assert program.segments == [(0x10, [72, 105, 10, 255, 122, 0xEF, 0xBE, 0, 0, 0, 8])]
    assert program.constants == {"SIZE": 4, "TWICE": 8}


def test_mnemonics_registers_and_directives_ignore_case_labels_do_not():
    upper = words("START: LI R3, 7\n .BYTE 1\n JMP START\n")
    lower = words("START: li r3, 7\n .byte 1\n jmp START\n")
    assert upper == lower == [0x1B, 7, 1, 0x08, 0, 0]
    program = asm.assemble_text("a: nop\nA: nop\njmp A\n", REF8)
    assert program.labels == {"a": 0, "A": 1}


def test_literal_forms_win_over_expression_forms():
    # ld rd, [x] is one word; ld rd, [addr] would be three
    assert words("ld r2, [x]\nst [x], r1\njmp x\nli x, 0x1234\nli sp, 0x0100\n") == [
        0x32, 0x39, 0x03, 0x06, 0x34, 0x12, 0x07, 0x00, 0x01]
    assert words("ld r2, [0x1234]\n") == [0x22, 0x34, 0x12]


def test_register_and_immediate_forms():
    assert words("add r1, r2\nadd r1, 2\n") == [0xA0, 0x0A, 0xC1, 2]
    assert words("li r0, -128\nli r0, 255\n") == [0x18, 0x80, 0x18, 0xFF]


def test_pause_is_the_machine_pause_instruction_and_a_checkpoint():
    program = asm.assemble_text("nop\npause\nhalt\n", REF8)
    assert program.flat() == [0x00, 0x01, 0x01]
    assert program.pauses == [1]
    program = asm.assemble_text("skip\npause\n", ACC12)
    assert program.flat() == [0x000, 0xF00]
    assert program.pauses == [1]


def test_expects_attach_to_the_nearest_halt_above():
    program = asm.assemble_text("""
        li r0, 5
        halt
        .expect r0 == 5, x != 0x1234, sp == 0
        nop
        pause
        .expect [buf + 1] == 'b', out == "ok\\n", lamps != 0, c == 1, r1 == -1
buf:    .byte "ab"
    """, REF8)
    got = [(e.address, e.line, e.item, e.op, e.value, e.memory_address) for e in program.expects]
    assert got == [
        (2, 4, "r0", "==", 5, None), (2, 4, "x", "!=", 0x1234, None), (2, 4, "sp", "==", 0, None),
        (4, 7, "mem", "==", 98, 6), (4, 7, "out", "==", "ok\n", None), (4, 7, "lamps", "!=", 0, None),
        (4, 7, "c", "==", 1, None), (4, 7, "r1", "==", 255, None),
    ]
    assert program.expects[3].text == "[buf + 1] == 98"


def test_expects_on_acc12_use_its_own_names():
    program = asm.assemble_text("stop\n.expect acc == 4095, lk == 0, zf != 1, pc == 1\n", ACC12)
    assert [(e.item, e.value) for e in program.expects] == [("acc", 4095), ("lk", 0), ("zf", 1), ("pc", 1)]


def test_include_is_relative_to_the_including_file():
    program = asm.assemble_file(FIXTURES / "blink.asm", REF8)
    assert program.constants == {"START": 1, "STOP": 4, "LAMPS": 1}
    assert program.flat()[:2] == [0x18, 1]
    files = [Path(f).name for f in program.sources]
    assert files == ["blink.asm", "consts.inc"]


def test_acc12_program_words():
    program = asm.assemble_text("""
        load n
        plus n
        store n
        set -1
        put 1
        stop
n:      .byte 0xABC
        .word 0x123456
    """, ACC12)
    assert program.flat() == [0x106, 0x306, 0x206, 0x9FF, 0xA01, 0xF00, 0xABC, 0x456, 0x123]


def test_segments_are_sorted_and_separate():
    program = asm.assemble_text(".org 0x20\nnop\n.org 0x10\nhalt\nnop\n", REF8)
    assert program.segments == [(0x10, [1, 0]), (0x20, [0])]
    assert program.image() == {0x10: 1, 0x11: 0, 0x20: 0}
    assert program.source_map == {0x10: ("<input>", 4), 0x11: ("<input>", 5), 0x20: ("<input>", 2)}
