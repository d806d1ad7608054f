"""Every error message, where it points, and that nothing but AsmError escapes."""

from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

import asm
import emu

HERE = Path(__file__).parent
REF8 = emu.load_machine("ref8")
ACC12 = emu.load_machine(HERE / "machines" / "acc12.toml")
FIXTURES = HERE / "asm_fixtures"


def diagnostics(text, machine=REF8, filename="t.asm"):
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text(text, machine, filename=filename)
    return [(d.line, d.column, d.message) for d in caught.value.diagnostics]


@pytest.mark.parametrize("text, line, column, message", [
    ("  mov r9, r1\n", 1, 7, "r9 is not a register of ref8 (r0–r7)"),
    ("  add r1, r9\n", 1, 11, "r9 is not a register of ref8 (r0–r7)"),
    ("  li r0, 300\n", 1, 10, "300 does not fit imm8 (-128…255)"),
    ("  li r0, -129\n", 1, 10, "-129 does not fit imm8 (-128…255)"),
    ("loop: nop\n  jmp lop\n", 2, 7, "undefined label 'lop' (did you mean 'loop'?)"),
    ("  jmp nowhere\n", 1, 7, "undefined label 'nowhere'"),
    ("a: nop\na: nop\n", 2, 1, "duplicate label 'a' (first defined at t.asm:1)"),
    ("  nop\n  nop\n  .org 1\n  halt\n", 3, 3, "this region overlaps 0x0001…0x0001, already used from t.asm:1"),
    ("  .expect r0 == 1\n  halt\n", 1, 3, ".expect has no halt or pause above it to attach to"),
    ("  mvo r1, r2\n", 1, 3, "unknown instruction 'mvo' (did you mean 'mov'?)"),
    ("  ld r1, r2\n", 1, 3, "ld takes: ld rd, [addr] | ld rd, [x]"),
    ("  jmp [x]\n", 1, 3, "jmp takes: jmp x | jmp addr"),
    ("x: nop\n", 1, 1, "'x' is a register of ref8; a label cannot have its name"),
    ("SP = 3\n", 1, 1, "'SP' is a register of ref8; a constant cannot have its name"),
    ("  li r0, r1 + 1\n", 1, 10, "the register r1 cannot be used in an expression"),
    ("  .bite 1\n", 1, 3, "unknown directive '.bite' (did you mean '.byte'?)"),
    ("  li r0, ,\n", 1, 10, "unexpected ','; expected an expression"),
    ("  li r0, 5 )\n", 1, 12, "unexpected ')'; expected ',', '==' or '!=', ']', the end of the line"),
    ("  .byte 1, 2 ?\n", 1, 14, "unexpected character '?'"),
    ("  .byte '\\q'\n", 1, 9, "unknown escape '\\q' (known: \\n \\t \\r \\0 \\\\ \\' \\\")"),
    ("  .byte 256\n", 1, 9, "256 does not fit one data word (-128…255)"),
    ("  .byte 1 / 0\n", 1, 13, "division by zero ('/' by a value of 0)"),
    ("  .org later\nlater: nop\n", 1, 8,
     "'later' must be defined above this line: its value is needed here to lay out the program"),
    ("A = B\nB = A\n", 2, 5, "'A' is defined in terms of itself"),
    ("  .org 0xFFFF\n  jmp 0\n", 2, 3, "address 0x10000 is past the end of the memory of ref8 (last address 0xFFFF)"),
    ("  halt\n  .expect r0 == 256\n", 2, 17, "256 does not fit r0 (-128…255)"),
    ("  halt\n  .expect out == 3\n", 2, 18, 'out is compared with a string literal, e.g. out == "done\\n"'),
    ("  halt\n  .expect t == 3\n", 2, 11,
     "cannot check 't': .expect items are r0, r1, r2, r3, r4, r5, r6, r7, sp, pc, x, z, n, c, v, "
     "[address], lamps and out"),
    ("  pause 3\n", 1, 3, "pause takes no operands"),
    ("  .byte \"€\"\n", 1, 9, "character '€' (code 8364) does not fit one data word (0…255)"),
    ("  .word 1 << 99\n", 1, 14, "a shift count must be 0…64, not 99"),
    ("  .byte foo(3)\n", 1, 9, "unknown function 'foo' (functions: lo, hi)"),
])
def test_error_messages_and_places(text, line, column, message):
    assert diagnostics(text) == [(line, column, message)]


@pytest.mark.parametrize("text, line, column, message", [
    ("  load acc\n", 1, 3, "load takes: load a"),
    ("  set 256\n", 1, 7, "256 does not fit k (-128…255)"),
    ("  load 256\n", 1, 8, "256 does not fit a (0…255)"),
    ("acc: skip\n", 1, 1, "'acc' is a register of acc12; a label cannot have its name"),
    ("  .byte 4096\n", 1, 9, "4096 does not fit one data word (-2048…4095)"),
    ("  .expect acc == 0\n", 1, 3, ".expect has no halt or pause above it to attach to"),
])
def test_error_messages_on_acc12(text, line, column, message):
    assert diagnostics(text, ACC12) == [(line, column, message)]


def test_every_error_in_a_file_is_reported_in_order():
    found = diagnostics("  mov r9, r1\n  li r0, ,\n  jmp lop\nloop: li r1, 999\n")
    assert [(line, column) for line, column, _ in found] == [(1, 7), (2, 10), (3, 7), (4, 14)]


def test_rendering_shows_the_line_and_a_caret():
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text("start:  nop\n\tli r0, 300\n", REF8, filename="demo.asm")
    assert str(caught.value) == (
        "demo.asm:2:9: error: 300 does not fit imm8 (-128…255)\n"
        "    \tli r0, 300\n"
        "    \t       ^")


def test_a_label_survives_a_syntax_error_on_its_line():
    # only the syntax error, not a follow-on "undefined label"
    assert diagnostics("here: li r0, ,\n  jmp here\n") == [(1, 14, "unexpected ','; expected an expression")]


def test_include_that_cannot_be_read(tmp_path):
    main = tmp_path / "main.asm"
    main.write_text('  nop\n  .include "gone.inc"\n')
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_file(main, REF8)
    [d] = caught.value.diagnostics
    assert (d.line, d.column, d.message) == (2, 12, "cannot read include file 'gone.inc' (No such file or directory)")


def test_include_loop_is_reported():
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_file(FIXTURES / "loop_a.inc", REF8)
    [d] = caught.value.diagnostics
    assert Path(d.file).name == "loop_b.inc"
    assert (d.line, d.column) == (1, 18)
    assert d.message.startswith("include loop: ") and d.message.count("loop_a.inc") == 2


def test_errors_in_included_files_name_that_file(tmp_path):
    (tmp_path / "lib.inc").write_text("  nop\n  li r0, 1000\n")
    (tmp_path / "main.asm").write_text('  .include "lib.inc"\n  jmp nowhere\n')
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_file(tmp_path / "main.asm", REF8)
    places = [(Path(d.file).name, d.line) for d in caught.value.diagnostics]
    assert places == [("main.asm", 2), ("lib.inc", 2)]


def test_unreadable_and_undecodable_sources(tmp_path):
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_file(tmp_path / "none.asm", REF8)
    assert caught.value.diagnostics[0].message == "cannot read source file (No such file or directory)"
    bad = tmp_path / "bad.asm"
    bad.write_bytes(b"  nop\n  \xff\n")
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_file(bad, REF8)
    d = caught.value.diagnostics[0]
    assert (d.line, d.column, d.message) == (2, 3, "byte 0xFF is not UTF-8 text (save the file as UTF-8)")


def test_a_flat_sum_of_a_thousand_terms_assembles():
    """Before the fix: "expressions or includes nested too deeply", with no line.
    The expected value is Python's own sum of the same terms."""
    terms = [(7 * i) % 13 for i in range(1000)]
    program = asm.assemble_text("V = " + " + ".join(map(str, terms)) + "\n  .word V\n", REF8)
    assert program.flat() == [sum(terms) & 0xFF, sum(terms) >> 8]


def test_deep_parentheses_assemble():
    """5,000 parentheses and 3,000 signs (an even count: the value is kept)."""
    program = asm.assemble_text("V = " + "(" * 5000 + "1" + ")" * 5000 + "\n  .byte " + "-" * 3000 + "V\n", REF8)
    assert program.flat() == [1]


def test_a_chain_of_constants_too_long_to_follow_is_located():
    text = "".join(f"N{i} = N{i + 1} + 1\n" for i in range(3000)) + "N3000 = 0\n  .byte N0\n"
    [(line, column, message)] = diagnostics(text)
    assert column == 8 and message.startswith(f"'N{line}' is defined through a chain of constants too long")


def test_includes_nested_too_deep_are_located(tmp_path):
    for i in range(80):
        (tmp_path / f"i{i}.inc").write_text(f'.include "i{i + 1}.inc"\n')
    (tmp_path / "i80.inc").write_text("  halt\n")
    top = tmp_path / "top.asm"
    top.write_text('.include "i0.inc"\n')
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_file(top, REF8)
    [d] = caught.value.diagnostics
    assert (Path(d.file).name, d.line, d.column) == (f"i{asm.MAX_INCLUDE_DEPTH - 2}.inc", 1, 10)
    assert d.message == f"includes nested more than {asm.MAX_INCLUDE_DEPTH} deep"


# ----- fuzzing ---------------------------------------------------------------

VALID = {
    "ref8": """start: li r0, 3
        li x, table
loop:   ld r1, [x]
        add r1, 'a'
        out 0, r1
        inc x
        dec r0
        jnz loop
        pause
        .expect r0 == 0, out == "bcd"
        halt
table:  .byte 1, 2, 3
        .word start, $ + 2
N = lo(table) + 1
""",
    "acc12": """again:  load n
        plus one
        store n
        gozero done
        go again
done:   stop
        .expect acc == 0
n:      .byte -3
one:    .byte 1
""",
}


def _check_only_asm_errors(text, machine):
    try:
        asm.assemble_text(text, machine)
    except asm.AsmError as exc:
        lines = text.replace("\r\n", "\n").split("\n")
        for d in exc.diagnostics:
            assert d.line is not None and 1 <= d.line <= len(lines), d
            assert 1 <= d.column <= len(lines[d.line - 1]) + 1, d


_alphabet = st.sampled_from(list("abcxr0123456789 ,:;[]()#@$+-*/%&|^~<>=!'\"\\.\n\t") + ["é", "\r", "\x00"])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(_alphabet, max_size=80), st.sampled_from([REF8, ACC12]))
def test_random_text_raises_only_asm_error(text, machine):
    _check_only_asm_errors(text, machine)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from([REF8, ACC12]), st.data())
def test_mutated_programs_raise_only_asm_error(machine, data):
    text = VALID[machine.name]
    for _ in range(data.draw(st.integers(1, 4))):
        position = data.draw(st.integers(0, len(text)))
        action = data.draw(st.sampled_from(["insert", "delete", "replace"]))
        char = data.draw(_alphabet)
        if action == "insert":
            text = text[:position] + char + text[position:]
        elif action == "delete":
            text = text[:position] + text[position + 1:]
        else:
            text = text[:position] + char + text[position + 1:]
    _check_only_asm_errors(text, machine)


@pytest.mark.parametrize("machine", [REF8, ACC12], ids=["ref8", "acc12"])
def test_the_fuzz_seed_programs_are_valid(machine):
    assert asm.assemble_text(VALID[machine.name], machine).flat()


def test_a_number_with_absurdly_many_digits_is_a_located_error():
    source = "li r0, 0x" + "f" * 5000 + "\nhalt\n"
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text(source, emu.load_machine("ref8"), "big.asm")
    (diagnostic,) = caught.value.diagnostics
    assert (diagnostic.line, diagnostic.column) == (1, 8)
    assert diagnostic.message.startswith("the number 0xffffffffff")


def test_an_unreadable_include_is_reported_before_the_labels_it_would_have_defined():
    source = "call greet\nhalt\n.include \"missing.inc\"\n"
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text(source, emu.load_machine("ref8"), "main.asm")
    first, second = caught.value.diagnostics
    assert first.line == 3 and first.message.startswith("cannot read include file 'missing.inc'")
    assert second.line == 1 and second.message.startswith("undefined label 'greet'")
