"""Every skep instruction against Python integer arithmetic, with its cycle count.

skep is the second shipped machine (emu/machines/skep.toml, skep.md): 10-bit
words and addresses, an accumulator ``a`` that every ALU operation writes,
``b``, the pointer ``x``, the link register ``lr``, flags ``z n c``.
Programs are built with the machine's own encoder and run to a trailing
``stop`` on the fused and on the stepping path.

References: Python integers masked to 10 bits; carry after a subtraction is
the borrow (unsigned minuend smaller than the subtrahend), the convention
ref8 and skep share; a rotate goes through the carry, an 11-bit rotate of
``c:a`` (common practice, no source). The costs each test expects are
skep.md's table, written down here, not read from the machine file, so
a changed step list shows up.

skep's ring has a hold point after each of its two pulses, so a run stops
right after the cycle of the ``stop``: the cycles counted are exactly those
of the instructions run, and pc is one past the ``stop``.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu

from cli_support import cli
from engine_support import Run, assert_only_changes, encode_forms, one_instruction, run_program

SKEP = emu.load_machine("skep")
FORMS = {ins.display: ins for ins in SKEP.instructions}
STOP_WORD = FORMS["stop"].encode({})[0]
VISIBLE = [reg.name for reg in SKEP.visible_registers]
FLAGS = list(SKEP.flags)
MASK = 0x3FF
REGS = ["a", "b", "x", "lr"]
PATHS = ["fused", "stepped"]
EXAMPLES = settings(max_examples=40, deadline=None)

word = st.integers(0, MASK)
bit = st.integers(0, 1)
flag_values = st.fixed_dictionaries({name: bit for name in FLAGS})
data_address = st.integers(0x100, MASK)   # clear of the program at the bottom

# The cost of each instruction, fetch included (skep.md, "What each costs").
COSTS = {
    "stop": 2, "nop": 1, "ret": 2, "call addr": 3, "mov rd, rs": 2, "ldi rd, k": 2,
    "in a, p": 2, "out p, a": 2, "shl a": 2, "shr a": 2, "rol a": 2, "ror a": 2,
    "not a": 2, "inx": 2, "clc": 2, "sec": 2,
    "ld rd, [addr]": 4, "st [addr], rs": 4, "ld rd, [x]": 4, "st [x], rs": 4,
}
ALU_OPS = ["add", "adc", "sub", "sbc", "and", "or", "xor", "cmp"]
COSTS |= {f"{op} rs": 4 for op in ALU_OPS} | {f"{op} #k": 4 for op in ALU_OPS}
COSTS |= {f"{op} [addr]": 6 for op in ALU_OPS}
JUMPS = {  # taken when …, from the flags before the jump
    "jmp": lambda z, n, c: True, "jz": lambda z, n, c: z, "jnz": lambda z, n, c: not z,
    "jc": lambda z, n, c: c, "jnc": lambda z, n, c: not c, "jn": lambda z, n, c: n,
    "jp": lambda z, n, c: not n, "jle": lambda z, n, c: c or z, "jgt": lambda z, n, c: not (c or z),
}
# (fewest, most) cycles of the instructions whose cost depends on the run
RANGES = {**{f"{j} addr": (2, 3) for j in JUMPS}, "loop addr": (3, 4), "get a": (3, None)}


def reference_alu(op: str, a: int, b: int, cin: int) -> tuple[int, int]:
    """(result, carry) of ``op`` on 10-bit a and b, by Python integer arithmetic."""
    if op in ("add", "adc"):
        total = a + b + (cin if op == "adc" else 0)
        return total % 1024, int(total > MASK)
    if op in ("sub", "sbc", "cmp"):
        taken = b + (cin if op == "sbc" else 0)
        return (a - taken) % 1024, int(a < taken)
    return {"and": a & b, "or": a | b, "xor": a ^ b}[op], 0


def test_the_reference_arithmetic_on_worked_examples():
    """10-bit two's complement by hand (common practice): 5 − 7 is 1022 (−2) with a
    borrow; 1023 + 1 is 0 with a carry; 0x2AA ^ 0x155 is 0x3FF."""
    assert reference_alu("sub", 5, 7, 0) == (1022, 1)
    assert reference_alu("add", 1023, 1, 0) == (0, 1)
    assert reference_alu("xor", 0x2AA, 0x155, 0) == (0x3FF, 0)
    assert reference_alu("sbc", 0, 0, 1) == (1023, 1)


def program(*parts: tuple[str, dict]) -> list[int]:
    return encode_forms(FORMS, *parts)


def execute(words, path, *, values=None, memory=None, **options) -> tuple[Run, int]:
    """The run of ``words`` with a stop appended, and that stop's address."""
    return run_program(SKEP, words + [STOP_WORD], path, values=values, memory=memory, **options), len(words)


def check(ran: tuple[Run, int], cycles: int, changes: dict[str, int], memory_changes=None, stop_at=None):
    """The run stopped at the ``stop`` at ``stop_at`` (default: the one ``execute`` appended)
    after ``cycles`` cycles, every register, flag and word is as expected and nothing else changed."""
    run, appended_stop = ran
    machine = run.emu
    stop_at = appended_stop if stop_at is None else stop_at
    assert (run.stop.kind, run.stop.address) == ("halted", stop_at)
    assert machine.cycles == cycles
    assert_only_changes(run, VISIBLE + FLAGS, {**run.before, "pc": stop_at + 1, **changes}, memory_changes)


def flags_of(result: int, carry: int) -> dict[str, int]:
    return {"z": int(result == 0), "n": result >> 9, "c": carry}


# ----- the ALU: register, constant and memory operands ----------------------------------------

@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", ALU_OPS)
@EXAMPLES
@given(a=word, operand=word, flags=flag_values, source=st.sampled_from(["b", "x", "lr"]))
def test_alu_on_a_register(path, op, a, operand, flags, source):
    run = execute(program((f"{op} rs", {"rs": REGS.index(source)})), path,
                  values={"a": a, source: operand, **flags})
    result, carry = reference_alu(op, a, operand, flags["c"])
    check(run, 4 + 2, ({} if op == "cmp" else {"a": result}) | flags_of(result, carry))


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", ["add", "sub", "and"])
@EXAMPLES
@given(a=word, flags=flag_values)
def test_alu_on_a_itself(path, op, a, flags):
    run = execute(program((f"{op} rs", {"rs": 0})), path, values={"a": a, **flags})
    result, carry = reference_alu(op, a, a, flags["c"])
    check(run, 4 + 2, {"a": result} | flags_of(result, carry))


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", ALU_OPS)
@EXAMPLES
@given(a=word, k=st.integers(-512, MASK), flags=flag_values)
def test_alu_on_a_constant(path, op, a, k, flags):
    run = execute(program((f"{op} #k", {"k": k})), path, values={"a": a, **flags})
    result, carry = reference_alu(op, a, k % 1024, flags["c"])
    check(run, 4 + 2, ({} if op == "cmp" else {"a": result}) | flags_of(result, carry))


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", ALU_OPS)
@EXAMPLES
@given(a=word, value=word, address=data_address, flags=flag_values)
def test_alu_on_a_memory_word_takes_6_cycles(path, op, a, value, address, flags):
    run = execute(program((f"{op} [addr]", {"addr": address})), path, values={"a": a, **flags},
                  memory={address: value})
    result, carry = reference_alu(op, a, value, flags["c"])
    check(run, 6 + 2, ({} if op == "cmp" else {"a": result}) | flags_of(result, carry))


# ----- one-register operations ----------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(a=word, flags=flag_values)
def test_shifts_rotates_and_not(path, a, flags):
    cin = flags["c"]
    expected = {
        "shl a": ((a << 1) & MASK, a >> 9), "shr a": (a >> 1, a & 1),
        "rol a": (((a << 1) | cin) & MASK, a >> 9), "ror a": ((a >> 1) | (cin << 9), a & 1),
        "not a": (~a & MASK, 0),
    }
    for display, (result, carry) in expected.items():
        run = execute(program((display, {})), path, values={"a": a, **flags})
        check(run, 2 + 2, {"a": result} | flags_of(result, carry))


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(x=word, flags=flag_values)
def test_inx_wraps_and_leaves_the_flags(path, x, flags):
    run = execute(program(("inx", {})), path, values={"x": x, **flags})
    check(run, 2 + 2, {"x": (x + 1) % 1024})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(flags=flag_values)
def test_clc_and_sec(path, flags):
    check(execute(program(("clc", {})), path, values=flags), 4, {"c": 0})
    check(execute(program(("sec", {})), path, values=flags), 4, {"c": 1})


# ----- moves and memory -----------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(rd=st.sampled_from(REGS), rs=st.sampled_from(REGS), values=st.fixed_dictionaries({r: word for r in REGS}))
def test_mov(path, rd, rs, values):
    run = execute(program(("mov rd, rs", {"rd": REGS.index(rd), "rs": REGS.index(rs)})), path, values=values)
    check(run, 2 + 2, {rd: values[rs]})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(rd=st.sampled_from(REGS), k=st.integers(-512, MASK))
def test_ldi_stores_a_negative_constant_in_twos_complement(path, rd, k):
    run = execute(program(("ldi rd, k", {"rd": REGS.index(rd), "k": k})), path)
    check(run, 2 + 2, {rd: k % 1024})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(rd=st.sampled_from(REGS), address=data_address, value=word, old=word)
def test_ld_and_st_by_address(path, rd, address, value, old):
    run = execute(program(("ld rd, [addr]", {"rd": REGS.index(rd), "addr": address})), path,
                  memory={address: value})
    check(run, 4 + 2, {rd: value})
    run = execute(program(("st [addr], rs", {"rs": REGS.index(rd), "addr": address})), path,
                  values={rd: value}, memory={address: old})
    check(run, 4 + 2, {}, {address: value})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(rd=st.sampled_from(["a", "b", "lr"]), address=data_address, value=word, old=word)
def test_ld_and_st_through_x(path, rd, address, value, old):
    run = execute(program(("ld rd, [x]", {"rd": REGS.index(rd)})), path, values={"x": address},
                  memory={address: value})
    check(run, 4 + 2, {rd: value})
    run = execute(program(("st [x], rs", {"rs": REGS.index(rd)})), path, values={"x": address, rd: value},
                  memory={address: old})
    check(run, 4 + 2, {}, {address: value})


# ----- jumps, calls and the loop --------------------------------------------------------------

TARGET = 6   # the jumps' target: a stop of its own, past the one after the jump


def jump_program(display: str, target: int = TARGET) -> list[int]:
    words = program((display, {"addr": target}))
    return words + [STOP_WORD] + [FORMS["nop"].encode({})[0]] * (target - len(words) - 1)


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("jump", sorted(JUMPS))
@EXAMPLES
@given(flags=flag_values)
def test_jump_tests_the_flags_its_instruction_bits_choose(path, jump, flags):
    run = execute(jump_program(f"{jump} addr"), path, values=flags)
    taken = JUMPS[jump](flags["z"], flags["n"], flags["c"])
    check(run, (3 if taken else 2) + 2, {}, stop_at=TARGET if taken else 2)


def test_the_jumps_differ_only_in_the_four_condition_bits():
    """One set of micro-steps for all: bits 3…0 of the first word are the selector."""
    words = {j: FORMS[f"{j} addr"].encode({"addr": 0})[0] for j in JUMPS}
    assert {w >> 4 for w in words.values()} == {0b101000}
    assert len(set(words.values())) == len(JUMPS)
    assert len({tuple(FORMS[f"{j} addr"].steps) for j in JUMPS}) == 1


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(lr=word)
def test_call_links_and_ret_returns(path, lr):
    run = execute(jump_program("call addr"), path, values={"lr": lr})
    check(run, 3 + 2, {"lr": 2}, stop_at=TARGET)
    words = program(("ret", {})) + [FORMS["nop"].encode({})[0]] * 3
    run = execute(words, path, values={"lr": 4})
    check(run, 2 + 2, {}, stop_at=4)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(x=word, flags=flag_values)
def test_loop_counts_x_down_and_jumps_while_it_is_not_0(path, x, flags):
    run = execute(jump_program("loop addr"), path, values={"x": x, **flags})
    left = (x - 1) % 1024
    if left:
        check(run, 4 + 2, {"x": left, "z": 0}, stop_at=TARGET)
    else:
        check(run, 3 + 2, {"x": 0, "z": 1}, stop_at=2)


# ----- ports ----------------------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(a=word, switches=word)
def test_in_and_out(path, a, switches):
    words = program(("out p, a", {"p": 1}), ("out p, a", {"p": 0}), ("in a, p", {"p": 0}))
    run = execute(words, path, values={"a": a}, switches=switches)
    check(run, 2 * 3 + 2, {"a": switches})
    assert run[0].emu.lamps == a and run[0].emu.output == bytes([a & 0xFF])


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(byte=st.integers(0, 255))
def test_get_waits_for_input_then_takes_it(path, byte):
    run = execute(program(("get a", {})), path, input_bytes=bytes([byte]))
    check(run, 3 + 2, {"a": byte})
    starved, _ = execute(program(("get a", {})), path, max_cycles=50)
    assert starved.stop.kind != "halted" and starved.emu.cycles == 50 and starved.emu.pc == 1


# ----- the cost table -------------------------------------------------------------------------

def test_every_instruction_has_a_written_cost():
    assert set(COSTS) | set(RANGES) == set(FORMS) and not set(COSTS) & set(RANGES)


def test_isa_prints_the_cost_of_every_instruction(capsys):
    code, out, _err = cli(capsys, "isa", "--machine", "skep")
    assert code == 0
    lines = out.splitlines()
    header = next(line for line in lines if line.startswith("instruction "))
    flags_column = header.index("flags")
    rows = {}
    for line in lines[lines.index(header) + 1:]:
        display = line[:flags_column].split("  ")[0]
        if display in FORMS:
            rows[display] = line[:flags_column].split()[-1]
    for display, cost in COSTS.items():
        assert rows[display] == str(cost), display
    for display, (fewest, most) in RANGES.items():
        assert rows[display] == f"{fewest}–{'∞' if most is None else most}", display


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("display", sorted(COSTS))
def test_cycle_count_of_each_fixed_cost_instruction(path, display):
    ins = FORMS[display]
    words = ins.encode({name: 0x40 if name != "p" else 3 for name in ins.fields})
    assert one_instruction(SKEP, words, path, at=0x10).cycles == COSTS[display]
