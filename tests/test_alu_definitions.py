"""ALU operations as definitions: the built-ins against two's-complement arithmetic, user
definitions in a machine file, and located errors for bad ones.

Reference for the built-ins: Python integers with the textbook definitions
of unsigned and two's-complement arithmetic on w-bit words (two's complement
by definition: a w-bit word x stands for x − 2^w·x[w−1]); carry is the carry
out of an unsigned sum, or the borrow of an unsigned difference (1 when the
minuend is smaller), as "Flags" in emu/machines/README.md fixes; rotates
go through the carry (common practice, no source). Each definition is held
to the reference twice: by ``evaluate`` (the definition's meaning) and by
the Python the compiler generates from it (what the engine runs).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu
from emu.description import ALU_OPS
from emu.description.notation import evaluate
from emu.engine import Emitter, emit_alu

from engine_support import run_program

ALU4_PATH = Path(__file__).parent / "machines" / "alu4.toml"
ALU4 = emu.load_machine(ALU4_PATH)


def signed(x: int, w: int) -> int:
    return x - (1 << w) if x >> (w - 1) & 1 else x


def fits_signed(x: int, w: int) -> int:
    return int(not -(1 << (w - 1)) <= x < 1 << (w - 1))


def reference(op: str, a: int, b: int, cin: int, w: int) -> dict[str, int]:
    """Result and flags of ``op`` on w-bit words, from the definitions named in the module doc."""
    m = (1 << w) - 1
    carry = overflow = None
    if op in ("add", "adc"):
        total = a + b + (cin if op == "adc" else 0)
        value, carry = total & m, int(total > m)
        overflow = fits_signed(signed(a, w) + signed(b, w) + (cin if op == "adc" else 0), w)
    elif op in ("sub", "sbc"):
        borrow_in = cin if op == "sbc" else 0
        value, carry = (a - b - borrow_in) & m, int(a < b + borrow_in)
        overflow = fits_signed(signed(a, w) - signed(b, w) - borrow_in, w)
    elif op in ("and", "or", "xor", "not"):
        value = {"and": a & b, "or": a | b, "xor": a ^ b, "not": m - a}[op]
        carry = overflow = 0
    elif op == "inc":
        value, carry, overflow = (a + 1) & m, int(a == m), fits_signed(signed(a, w) + 1, w)
    elif op == "dec":
        value, carry, overflow = (a - 1) & m, int(a == 0), fits_signed(signed(a, w) - 1, w)
    elif op == "shl":
        value, carry = (a * 2) & m, a >> (w - 1)
    elif op == "shr":
        value, carry = a // 2, a % 2
    elif op == "rol":
        value, carry = (a * 2 + cin) & m, a >> (w - 1)
    elif op == "ror":
        value, carry = a // 2 + cin * (1 << (w - 1)), a % 2
    flags = {"zero": int(value == 0), "negative": value >> (w - 1)}
    if carry is not None:
        flags["carry"] = carry
    if overflow is not None:
        flags["overflow"] = overflow
    return {"result": value, **flags}


def by_definition(op_name: str, a: int, b: int, cin: int, w: int) -> dict[str, int]:
    op = ALU_OPS[op_name]
    env = {"a": a, "b": b, "carry": cin, "w": w}
    exact = evaluate(op.result, env)
    return {"result": exact & ((1 << w) - 1),
            **{key: int(evaluate(expr, env | {"result": exact})) for key, expr in op.flags.items()}}


def by_generated_code(op_name: str, a: int, b: int, cin: int, w: int) -> dict[str, int]:
    op = ALU_OPS[op_name]
    out = Emitter()
    out.line("def f(x, y, carry_in):")
    with out.indent():
        result, values = emit_alu(op, ["x", "y"][:op.arity], {"carry": "carry_in"}, w,
                                  {key: key for key in op.flags}, out)
        out.line(f"return {{'result': {result}, " + ", ".join(f"{k!r}: int({v})" for k, v in values.items()) + "}")
    space = {}
    exec(compile(out.source(), "<alu>", "exec"), space)
    return space["f"](a, b, cin)


@st.composite
def operations(draw):
    w = draw(st.integers(1, 16))
    top = (1 << w) - 1
    return draw(st.sampled_from(sorted(ALU_OPS))), draw(st.integers(0, top)), draw(st.integers(0, top)), \
        draw(st.integers(0, 1)), w


@settings(max_examples=3000, deadline=None)
@given(operations())
def test_every_builtin_definition_computes_twos_complement_arithmetic(case):
    op, a, b, cin, w = case
    b = b if ALU_OPS[op].arity == 2 else 0
    expected = reference(op, a, b, cin, w)
    assert by_definition(op, a, b, cin, w) == expected
    assert by_generated_code(op, a, b, cin, w) == expected


def test_the_builtins_produce_the_documented_flags():
    no_overflow = {"shl", "shr", "rol", "ror"}
    for name, op in ALU_OPS.items():
        expected = {"zero", "negative", "carry"} | (set() if name in no_overflow else {"overflow"})
        assert set(op.flags) == expected, name


# ----- user definitions on alu4 (tests/machines/alu4.toml)

def program(*words):
    return list(words) + [0]   # stop


@pytest.mark.parametrize("path", ["fused", "stepped"])
@pytest.mark.parametrize("acc, imm, carry", [(9, 8, 0), (9, 8, 1), (7, 8, 1), (0, 0, 0), (15, 0, 1)])
def test_addx_adds_the_carry_and_sets_carry_by_role_and_z_by_name(path, acc, imm, carry):
    run = run_program(ALU4, program(0b0010, imm), path, values={"acc": acc, "c": carry})
    total = acc + imm + carry
    assert run.emu.get("acc") == total & 0xF
    assert run.emu.get("c") == int(total > 15)
    assert run.emu.get("z") == int(total & 0xF == 0)


@pytest.mark.parametrize("path", ["fused", "stepped"])
@pytest.mark.parametrize("acc, imm", [(5, 3), (3, 5), (4, 4), (0, 1)])
def test_a_file_definition_of_a_builtin_name_wins(path, acc, imm):
    """alu4 redefines sub with carry = no borrow (the opposite of the built-in convention)."""
    run = run_program(ALU4, program(0b0011, imm), path, values={"acc": acc})
    assert run.emu.get("acc") == (acc - imm) & 0xF
    assert run.emu.get("c") == int(acc >= imm)


# ----- bad definitions

ALU4_TEXT = ALU4_PATH.read_text(encoding="utf-8")
ADDX = '''[alu.addx]
operands = 2
result = "a + b + c"
width = "a"
flags = { carry = "result[w]", z = "result[w-1:0] == 0" }'''


def alu4_with(new: str) -> str:
    assert ALU4_TEXT.count(ADDX) == 1
    return ALU4_TEXT.replace(ADDX, new)


def load_error(text: str) -> emu.MachineError:
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text, "mine.toml")
    return caught.value


@pytest.mark.parametrize("new, line, message", [
    (ADDX.replace('"a + b + c"', '"a + d"'), 34,
     "[alu.addx]: 'result' reads 'd', which is no operand, flag or role (flags: z, c)"),
    (ADDX.replace('z = "result', 'q = "result'), 36,
     "[alu.addx]: produces 'q', but the machine has no flag of that name or role (flags: z, c)"),
    (ADDX.replace('"a + b + c"', '"a + b + overflow"'), 34, "[alu.addx]: 'result' reads the overflow flag, and the machine has none"),
    (ADDX.replace('"a + b + c"', '"a + (b"'), 34,
     "[alu.addx]: 'result': cannot read the expression at column 7\n    a + (b\n          ^"),
    (ADDX.replace('"result[w]"', '"result[a]"'), 36,
     "[alu.addx]: 'flags.carry': a bit index or shift amount may use numbers and w only, not a"),
    (ADDX.replace("operands = 2", "operands = 0"), 33,
     "[alu.addx]: 'operands' must be 1…4 (how many values the operation takes), not 0"),
    (ADDX.replace("[alu.addx]", "[alu.hi]"), 32, "[alu.hi]: an ALU operation needs an identifier for a name"),
])
def test_a_bad_definition_is_a_located_error(new, line, message):
    error = load_error(alu4_with(new))
    assert error.line == line
    assert error.text().startswith(message)


def test_an_operation_too_narrow_for_its_indices_says_so():
    assert ALU_OPS["add"].width_problem(4) is None
    assert ALU_OPS["add"].width_problem(0) == "add cannot work 0 bits wide (a bit index is -1)"


def test_an_index_far_beyond_any_register_is_refused_where_a_step_uses_it():
    text = alu4_with(ADDX.replace('"result[w]"', '"result[99999999999]"'))
    error = load_error(text)
    assert "addx uses bit 99999999999 at width 4; bit indices and shifts stop at 64" in error.text()
