"""Every ref8 instruction against reference arithmetic outside the project.

Each test builds a two- or three-instruction program with the machine's own
encoder (no assembler), sets registers and flags drawn by hypothesis, runs
the emulator to the trailing ``halt`` and compares every visible register,
flag and memory byte: what the instruction should change, and that nothing
else changed. Each case runs twice: on the fused fast path and on the
stepping path (an attached observer forces the latter).

References used below:

* Python integers and numpy ``uint8``/``uint16`` wrap-around arithmetic
  for results, carries and borrows.
* Signed overflow, two ways that must agree:
  - the condition-code expressions of the Motorola *M6800 Programming
    Reference Manual* (1976) for ADD/ADC, ``V = A7·B7·¬R7 + ¬A7·¬B7·R7``,
    and for SUB/SBC/CMP, ``V = A7·¬B7·¬R7 + ¬A7·B7·R7`` (its C bit is a
    borrow on subtraction, as in ref8) — quoted from memory;
  - the definition of two's-complement overflow, the exact signed result
    outside −128…127 (e.g. Patterson & Hennessy, *Computer Organization and
    Design*, the section on addition and subtraction — from memory).
* Rotates through carry as a 9-bit rotate of ``c:value`` (common practice,
  no source; the ref8 reference, "Flags", says nine bits in all).
"""

from __future__ import annotations

from dataclasses import dataclass


import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu

from engine_support import Run, encode_forms, run_program

REF8 = emu.load_machine("ref8")
FORMS = {ins.display: ins for ins in REF8.instructions}
HALT = FORMS["halt"]
GENERAL = REF8.operand_kinds["reg"].registers
VISIBLE = [reg.name for reg in REF8.visible_registers]
FLAGS = list(REF8.flags)
PATHS = ["fused", "stepped"]

EXAMPLES = settings(max_examples=60, deadline=None)

byte = st.integers(0, 0xFF)
word = st.integers(0, 0xFFFF)
bit = st.integers(0, 1)
register_index = st.integers(0, len(GENERAL) - 1)
flag_values = st.fixed_dictionaries({name: bit for name in FLAGS})
register_values = st.fixed_dictionaries({name: byte for name in GENERAL})
# Data and stack addresses stay clear of the program at 0x0000…0x00FF.
data_address = st.integers(0x0100, 0xFFFF)


# ----- reference arithmetic (independent of emu.description) ------------------------

def signed8(value: int) -> int:
    """Two's-complement reading of a byte, via numpy's int8 view."""
    return int(np.array([value], dtype=np.uint8).view(np.int8)[0])


def bit7(value: int) -> int:
    return value >> 7 & 1


@dataclass(frozen=True)
class Expected:
    result: int
    z: int
    n: int
    c: int | None = None
    v: int | None = None

    def flags(self) -> dict[str, int]:
        found = {"z": self.z, "n": self.n}
        if self.c is not None:
            found["c"] = self.c
        if self.v is not None:
            found["v"] = self.v
        return found


def with_zn(result: int, **rest) -> Expected:
    return Expected(result, int(result == 0), bit7(result), **rest)


def reference_add(a: int, b: int, carry_in: int = 0) -> Expected:
    with np.errstate(over="ignore"):
        wrapped = int(np.uint8(a) + np.uint8(b) + np.uint8(carry_in))
    exact = a + b + carry_in
    assert wrapped == exact % 256
    motorola_v = bit7(a) & bit7(b) & (1 - bit7(wrapped)) | (1 - bit7(a)) & (1 - bit7(b)) & bit7(wrapped)
    definition_v = int(not -128 <= signed8(a) + signed8(b) + carry_in <= 127)
    assert motorola_v == definition_v
    return with_zn(wrapped, c=int(exact > 0xFF), v=definition_v)


def reference_sub(a: int, b: int, borrow_in: int = 0) -> Expected:
    with np.errstate(over="ignore"):
        wrapped = int(np.uint8(a) - np.uint8(b) - np.uint8(borrow_in))
    exact = a - b - borrow_in
    assert wrapped == exact % 256
    motorola_v = bit7(a) & (1 - bit7(b)) & (1 - bit7(wrapped)) | (1 - bit7(a)) & bit7(b) & bit7(wrapped)
    definition_v = int(not -128 <= signed8(a) - signed8(b) - borrow_in <= 127)
    assert motorola_v == definition_v
    return with_zn(wrapped, c=int(a < b + borrow_in), v=definition_v)


def reference_logic(op: str, a: int, b: int) -> Expected:
    function = {"and": np.bitwise_and, "or": np.bitwise_or, "xor": np.bitwise_xor}[op]
    python = {"and": a & b, "or": a | b, "xor": a ^ b}[op]
    result = int(function(np.uint8(a), np.uint8(b)))
    assert result == python
    return with_zn(result, c=0, v=0)


def reference_binary(op: str, a: int, b: int, carry: int) -> Expected:
    if op == "add":
        return reference_add(a, b)
    if op == "adc":
        return reference_add(a, b, carry)
    if op in ("sub", "cmp"):
        return reference_sub(a, b)
    if op == "sbc":
        return reference_sub(a, b, carry)
    return reference_logic(op, a, b)


def reference_unary(op: str, a: int, carry: int) -> Expected:
    with np.errstate(over="ignore"):
        if op == "not":
            return with_zn(int(np.invert(np.uint8(a))), c=0, v=0)
        if op == "inc":
            return with_zn(int(np.uint8(a) + np.uint8(1)))
        if op == "dec":
            return with_zn(int(np.uint8(a) - np.uint8(1)))
        if op == "shl":
            return with_zn(int(np.left_shift(np.uint8(a), np.uint8(1))), c=bit7(a))
        if op == "shr":
            return with_zn(int(np.right_shift(np.uint8(a), np.uint8(1))), c=a & 1)
    nine = carry << 8 | a
    if op == "rol":
        rotated = (nine << 1 | nine >> 8) & 0x1FF
    else:
        rotated = (nine >> 1 | (nine & 1) << 8) & 0x1FF
    return with_zn(rotated & 0xFF, c=rotated >> 8)


# ----- running one program -----------------------------------------------------

def program(*parts: tuple[str, dict]) -> list[int]:
    return encode_forms(FORMS, *parts)


def execute(words, path, *, registers=None, flags=None, memory=None, x=None, sp=None,
            switches=0, input_bytes=b"", max_cycles=200) -> Run:
    values = {**(registers or {}), **(flags or {})}
    values.update({name: v for name, v in (("x", x), ("sp", sp)) if v is not None})
    return run_program(REF8, words, path, values=values, memory=memory, switches=switches,
                       input_bytes=input_bytes, max_cycles=max_cycles)


def check(run: Run, changes: dict[str, int], memory_changes: dict[int, int] | None = None,
          halt_at: int | None = None):
    """Every named register/flag as ``changes`` says, all others and memory as before."""
    machine = run.emu
    assert run.stop.kind == "halted"
    if halt_at is not None:
        assert run.stop.address == halt_at
    for name in VISIBLE + FLAGS:
        expected = changes.get(name, run.before[name])
        assert machine.get(name) == expected, f"{name}: {machine.get(name):#x} != expected {expected:#x}"
    expected_memory = bytearray(run.memory_before)
    for address, value in (memory_changes or {}).items():
        expected_memory[address] = value
    actual = bytes(machine.memory)
    if actual != expected_memory:
        differences = [(hex(a), actual[a], expected_memory[a])
                       for a in range(len(actual)) if actual[a] != expected_memory[a]]
        pytest.fail(f"memory (address, got, expected): {differences[:8]}")


def halt_after(words) -> list[int]:
    return words + HALT.encode({})


def pc_after(words) -> int:
    """pc once the trailing halt (the last word of ``words``) has run: just past it."""
    return len(words)


# ----- the port map of the ref8 reference ----------------------------------------------------

def test_port_map_is_the_spec_table():
    # ref8 reference, "Ports"
    assert REF8.ports_out == {0: "console", 1: "lamps"}
    assert REF8.ports_in == {0: "switches", 1: "input", 2: "input_ready"}


# ----- transfers --------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, rs=register_index)
def test_mov(path, regs, flags, rd, rs):
    words = halt_after(program(("mov rd, rs", {"rd": rd, "rs": rs})))
    run = execute(words, path, registers=regs, flags=flags)
    check(run, {GENERAL[rd]: regs[GENERAL[rs]], "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, imm=st.integers(-128, 255))
def test_li_register_stores_immediate_mod_256(path, regs, flags, rd, imm):
    words = halt_after(program(("li rd, imm", {"rd": rd, "imm": imm})))
    run = execute(words, path, registers=regs, flags=flags)
    check(run, {GENERAL[rd]: imm % 256, "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, value=word, sp=word)
def test_li_x_writes_r6_high_r7_low(path, regs, flags, value, sp):
    words = halt_after(program(("li x, addr", {"addr": value})))
    run = execute(words, path, registers=regs, flags=flags, sp=sp)
    # ref8 reference, "Programmer's model": x is the pair r6 (high byte) : r7 (low byte)
    check(run, {"r6": value >> 8, "r7": value & 0xFF, "pc": pc_after(words)})
    assert run.emu.get("x") == value


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, value=word, sp=word)
def test_li_sp(path, regs, flags, value, sp):
    words = halt_after(program(("li sp, addr", {"addr": value})))
    run = execute(words, path, registers=regs, flags=flags, sp=sp)
    check(run, {"sp": value, "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, address=data_address, value=byte)
def test_ld_absolute(path, regs, flags, rd, address, value):
    words = halt_after(program(("ld rd, [addr]", {"rd": rd, "addr": address})))
    run = execute(words, path, registers=regs, flags=flags, memory={address: value})
    check(run, {GENERAL[rd]: value, "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rs=register_index, address=data_address, old=byte)
def test_st_absolute(path, regs, flags, rs, address, old):
    words = halt_after(program(("st [addr], rs", {"rs": rs, "addr": address})))
    run = execute(words, path, registers=regs, flags=flags, memory={address: old})
    check(run, {"pc": pc_after(words)}, {address: regs[GENERAL[rs]]})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, pointer=data_address, value=byte)
def test_ld_through_x(path, regs, flags, rd, pointer, value):
    words = halt_after(program(("ld rd, [x]", {"rd": rd})))
    run = execute(words, path, registers=regs, flags=flags, x=pointer, memory={pointer: value})
    check(run, {GENERAL[rd]: value, "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rs=register_index, pointer=data_address)
def test_st_through_x(path, regs, flags, rs, pointer):
    words = halt_after(program(("st [x], rs", {"rs": rs})))
    run = execute(words, path, registers=regs, flags=flags, x=pointer)
    stored = run.before[GENERAL[rs]]  # r6/r7 store a byte of the pointer itself
    check(run, {"pc": pc_after(words)}, {pointer: stored})


# ----- arithmetic and logic -----------------------------------------------------

BINARY = ["add", "adc", "sub", "sbc", "cmp", "and", "or", "xor"]


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", BINARY)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, rs=register_index)
def test_binary_register_form(path, op, regs, flags, rd, rs):
    words = halt_after(program((f"{op} rd, rs", {"rd": rd, "rs": rs})))
    run = execute(words, path, registers=regs, flags=flags)
    expected = reference_binary(op, regs[GENERAL[rd]], regs[GENERAL[rs]], flags["c"])
    changes = {**expected.flags(), "pc": pc_after(words)}
    if op != "cmp":
        changes[GENERAL[rd]] = expected.result
    check(run, changes)


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", BINARY)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, imm=st.integers(-128, 255))
def test_binary_immediate_form(path, op, regs, flags, rd, imm):
    words = halt_after(program((f"{op} rd, imm", {"rd": rd, "imm": imm})))
    run = execute(words, path, registers=regs, flags=flags)
    expected = reference_binary(op, regs[GENERAL[rd]], imm % 256, flags["c"])
    changes = {**expected.flags(), "pc": pc_after(words)}
    if op != "cmp":
        changes[GENERAL[rd]] = expected.result
    check(run, changes)


@pytest.mark.parametrize(("op", "a", "b", "carry", "result", "flags"), [
    # worked examples, computed by hand (z n c v)
    ("add", 0x7F, 0x01, 0, 0x80, (0, 1, 0, 1)),   # largest positive + 1 overflows
    ("add", 0xFF, 0x01, 0, 0x00, (1, 0, 1, 0)),   # -1 + 1: carry, no overflow
    ("add", 0x80, 0x80, 0, 0x00, (1, 0, 1, 1)),   # -128 + -128
    ("adc", 0x7F, 0x00, 1, 0x80, (0, 1, 0, 1)),   # the carry-in alone overflows
    ("adc", 0xFF, 0xFF, 1, 0xFF, (0, 1, 1, 0)),
    ("sub", 0x00, 0x01, 0, 0xFF, (0, 1, 1, 0)),   # borrow: 0 < 1
    ("sub", 0x80, 0x01, 0, 0x7F, (0, 0, 0, 1)),   # -128 - 1 overflows
    ("sub", 0x05, 0x05, 0, 0x00, (1, 0, 0, 0)),
    ("sbc", 0x05, 0x05, 1, 0xFF, (0, 1, 1, 0)),   # borrow from the carry-in
    ("sbc", 0x00, 0xFF, 1, 0x00, (1, 0, 1, 0)),   # 0 < 255 + 1
    ("cmp", 0x10, 0x20, 0, 0x10, (0, 1, 1, 0)),   # rd kept
    ("and", 0xF0, 0x0F, 1, 0x00, (1, 0, 0, 0)),
    ("or", 0x80, 0x01, 1, 0x81, (0, 1, 0, 0)),
    ("xor", 0xAA, 0xAA, 0, 0x00, (1, 0, 0, 0)),
])
def test_binary_worked_examples(op, a, b, carry, result, flags):
    words = halt_after(program((f"{op} rd, rs", {"rd": 0, "rs": 1})))
    run = execute(words, "fused", registers={"r0": a, "r1": b}, flags={"z": 0, "n": 0, "c": carry, "v": 0})
    assert run.emu.get("r0") == result
    assert tuple(run.emu.get(f) for f in "zncv") == flags
    assert reference_binary(op, a, b, carry).flags() == dict(zip("zncv", flags))


UNARY = ["not", "inc", "dec", "shl", "shr", "rol", "ror"]


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", UNARY)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index)
def test_unary(path, op, regs, flags, rd):
    words = halt_after(program((f"{op} rd", {"rd": rd})))
    run = execute(words, path, registers=regs, flags=flags)
    expected = reference_unary(op, regs[GENERAL[rd]], flags["c"])
    # inc/dec: ref8 reference, "Flags" says z n only, c and v unchanged (expected.c/v are None)
    check(run, {GENERAL[rd]: expected.result, **expected.flags(), "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index)
def test_shr_always_clears_n(path, regs, flags, rd):
    run = execute(halt_after(program(("shr rd", {"rd": rd}))), path,
                  registers=regs, flags={**flags, "n": 1})
    assert run.emu.get("n") == 0


@pytest.mark.parametrize(("op", "value", "carry", "result", "carry_out"), [
    # worked examples, by hand
    ("rol", 0x80, 0, 0x00, 1),
    ("rol", 0x01, 1, 0x03, 0),
    ("ror", 0x01, 0, 0x00, 1),
    ("ror", 0x02, 1, 0x81, 0),
    ("shl", 0xC0, 0, 0x80, 1),
    ("shr", 0x81, 1, 0x40, 1),
])
def test_shift_worked_examples(op, value, carry, result, carry_out):
    run = execute(halt_after(program((f"{op} rd", {"rd": 3}))), "fused",
                  registers={"r3": value}, flags={"c": carry})
    assert (run.emu.get("r3"), run.emu.get("c")) == (result, carry_out)


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("op", ["inc", "dec"])
@EXAMPLES
@given(regs=register_values, flags=flag_values, pointer=st.one_of(word, st.sampled_from([0, 1, 0xFFFF])))
def test_inc_dec_x_sets_only_z_from_the_16_bit_result(path, op, regs, flags, pointer):
    words = halt_after(program((f"{op} x", {})))
    run = execute(words, path, registers=regs, flags=flags, x=pointer)
    with np.errstate(over="ignore"):
        delta = np.uint16(1)
        result = int(np.uint16(pointer) + delta if op == "inc" else np.uint16(pointer) - delta)
    assert result == (pointer + (1 if op == "inc" else -1)) % 65536
    # ref8 reference, "Flags": z <- (x == 0), others unchanged: n c v keep their values even
    # when the high byte's bit 7 or a carry out of bit 15 would say otherwise
    check(run, {"r6": result >> 8, "r7": result & 0xFF, "z": int(result == 0), "pc": pc_after(words)})


# ----- jumps, calls and the stack ---------------------------------------------------

CONDITIONS = {"jz": ("z", 1), "jnz": ("z", 0), "jc": ("c", 1), "jnc": ("c", 0),
              "js": ("n", 1), "jns": ("n", 0), "jv": ("v", 1), "jnv": ("v", 0)}
jump_target = st.integers(0x0010, 0xFFFF)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, target=jump_target)
def test_jmp_absolute(path, regs, flags, target):
    words = program(("jmp addr", {"addr": target}))
    run = execute(words, path, registers=regs, flags=flags, memory={target: HALT.encode({})[0]})
    check(run, {"pc": (target + 1) % 65536}, halt_at=target)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, target=jump_target)
def test_jmp_x(path, regs, flags, target):
    run = execute(program(("jmp x", {})), path, registers=regs, flags=flags, x=target,
                  memory={target: HALT.encode({})[0]})
    check(run, {"pc": (target + 1) % 65536}, halt_at=target)


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("mnemonic", list(CONDITIONS))
@EXAMPLES
@given(regs=register_values, flags=flag_values, target=jump_target)
def test_conditional_jump(path, mnemonic, regs, flags, target):
    flag, wanted = CONDITIONS[mnemonic]
    words = halt_after(program((f"{mnemonic} addr", {"addr": target})))
    run = execute(words, path, registers=regs, flags=flags, memory={target: HALT.encode({})[0]})
    if flags[flag] == wanted:
        check(run, {"pc": (target + 1) % 65536}, halt_at=target)
    else:
        check(run, {"pc": pc_after(words)}, halt_at=len(words) - 1)


@pytest.mark.parametrize("mnemonic", list(CONDITIONS))
@pytest.mark.parametrize("taken", [True, False])
def test_conditional_jump_both_ways(mnemonic, taken):
    flag, wanted = CONDITIONS[mnemonic]
    value = wanted if taken else 1 - wanted
    others = {name: 1 - value for name in FLAGS if name != flag}
    words = halt_after(program((f"{mnemonic} addr", {"addr": 0x4000})))
    run = execute(words, "fused", flags={**others, flag: value}, memory={0x4000: HALT.encode({})[0]})
    assert run.emu.pc == (0x4001 if taken else 4)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, target=st.integers(0x0010, 0x7FFF),
       sp=st.one_of(st.integers(0x8002, 0xFFFF), st.just(0)))
def test_call_pushes_high_byte_first(path, regs, flags, target, sp):
    words = program(("call addr", {"addr": target}))
    run = execute(words, path, registers=regs, flags=flags, sp=sp, memory={target: HALT.encode({})[0]})
    back = len(words)
    # ref8 reference, "Programmer's model": high byte pushed first (pre-decrement), so the low byte ends lower
    check(run, {"pc": target + 1, "sp": (sp - 2) % 65536}, {
        (sp - 1) % 65536: back >> 8,
        (sp - 2) % 65536: back & 0xFF,
    }, halt_at=target)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, back=st.integers(0x0010, 0x7FFF),
       sp=st.integers(0x8000, 0xFFFE))
def test_ret_pops_low_then_high(path, regs, flags, back, sp):
    memory = {sp: back & 0xFF, sp + 1: back >> 8, back: HALT.encode({})[0]}
    run = execute(program(("ret", {})), path, registers=regs, flags=flags, sp=sp, memory=memory)
    check(run, {"pc": back + 1, "sp": (sp + 2) % 65536}, halt_at=back)


def test_call_then_ret_comes_back_past_the_call():
    words = program(("call addr", {"addr": 0x0040}), ("halt", {}))
    subroutine = program(("li rd, imm", {"rd": 2, "imm": 0x33}), ("ret", {}))
    run = execute(words, "fused", sp=0x1000, memory=dict(enumerate(subroutine, 0x40)))
    assert run.stop.address == 3
    assert (run.emu.get("r2"), run.emu.get("sp"), run.emu.pc) == (0x33, 0x1000, 4)
    assert (run.emu.memory[0x0FFF], run.emu.memory[0x0FFE]) == (0x00, 0x03)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rs=register_index,
       sp=st.one_of(st.integers(0x0101, 0xFFFF), st.just(0)))
def test_push_pre_decrements(path, regs, flags, rs, sp):
    words = halt_after(program(("push rs", {"rs": rs})))
    run = execute(words, path, registers=regs, flags=flags, sp=sp)
    check(run, {"sp": (sp - 1) % 65536, "pc": pc_after(words)}, {(sp - 1) % 65536: regs[GENERAL[rs]]})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, rd=register_index, sp=data_address, value=byte)
def test_pop_post_increments(path, regs, flags, rd, sp, value):
    words = halt_after(program(("pop rd", {"rd": rd})))
    run = execute(words, path, registers=regs, flags=flags, sp=sp, memory={sp: value})
    check(run, {GENERAL[rd]: value, "sp": (sp + 1) % 65536, "pc": pc_after(words)})


# ----- ports ------------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, rd=register_index, switches=byte)
def test_in_port_0_reads_the_switches(path, regs, rd, switches):
    words = halt_after(program(("in rd, port", {"rd": rd, "port": 0})))
    run = execute(words, path, registers=regs, switches=switches)
    check(run, {GENERAL[rd]: switches, "pc": pc_after(words)})
    assert run.emu.warnings == []


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(stream=st.binary(max_size=3))
def test_in_port_1_takes_the_next_byte_and_port_2_tells_if_one_is_left(path, stream):
    words = halt_after(program(
        ("in rd, port", {"rd": 0, "port": 2}), ("in rd, port", {"rd": 1, "port": 1}),
        ("in rd, port", {"rd": 2, "port": 2}), ("in rd, port", {"rd": 3, "port": 1})))
    run = execute(words, path, input_bytes=stream)
    padded = list(stream) + [0, 0]
    check(run, {"r0": int(len(stream) >= 1), "r1": padded[0], "r2": int(len(stream) >= 2),
                "r3": padded[1], "pc": pc_after(words)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, rs=register_index)
def test_out_port_0_appends_to_the_console_and_port_1_sets_the_lamps(path, regs, rs):
    words = halt_after(program(("out port, rs", {"port": 0, "rs": rs}),
                               ("out port, rs", {"port": 1, "rs": rs}),
                               ("out port, rs", {"port": 0, "rs": rs})))
    run = execute(words, path, registers=regs)
    check(run, {"pc": pc_after(words)})
    assert run.emu.output == bytes([regs[GENERAL[rs]]] * 2)
    assert run.emu.lamps == regs[GENERAL[rs]]
    assert run.emu.warnings == []


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("port", [3, 7, 255])
def test_unmapped_ports_read_0_ignore_writes_and_are_counted(path, port):
    words = halt_after(program(("in rd, port", {"rd": 4, "port": port}),
                               ("out port, rs", {"port": port, "rs": 5}),
                               ("out port, rs", {"port": port, "rs": 5})))
    run = execute(words, path, registers={"r4": 0x99, "r5": 0x42})
    check(run, {"r4": 0, "pc": pc_after(words)})
    assert run.emu.output == b"" and run.emu.lamps == 0
    assert run.emu.warnings == [f"1 read from port {port}, which has no device",
                                f"2 writes to port {port}, which has no device"]


# ----- halt, nop and undefined opcodes ------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values, origin=st.integers(0, 0xFFFF))
def test_halt_freezes_with_pc_past_it_and_the_latch_set(path, regs, flags, origin):
    machine = emu.Emulator(REF8)
    if path == "stepped":
        machine.observe(emu.Observer())
    machine.memory[origin] = HALT.encode({})[0]
    for name, value in {**regs, **flags}.items():
        machine.set(name, value)
    machine.set("pc", origin)
    stop = machine.run(max_cycles=100)
    assert (stop.kind, stop.address, stop.pc) == ("halted", origin, (origin + 1) % 65536)
    assert machine.halt_latch and machine.frozen
    assert machine.cycles == len(REF8.fetch) + len(HALT.steps)
    assert all(machine.get(name) == value for name, value in {**regs, **flags}.items())


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(regs=register_values, flags=flag_values)
def test_nop_changes_nothing_but_pc(path, regs, flags):
    words = halt_after(program(("nop", {})))
    check(execute(words, path, registers=regs, flags=flags), {"pc": pc_after(words)})


UNDEFINED = [w for w, index in enumerate(REF8.decode_table) if index < 0]


def test_ref8_has_undefined_opcodes_to_test():
    assert len(UNDEFINED) >= 3


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("opcode", [UNDEFINED[0], UNDEFINED[len(UNDEFINED) // 2], UNDEFINED[-1]])
def test_undefined_opcode_runs_as_a_no_op_with_a_warning(path, opcode):
    words = halt_after([opcode, opcode])
    run = execute(words, path, registers={"r0": 7}, flags={"c": 1})
    check(run, {"pc": pc_after(words)})
    assert run.emu.cycles == 2 * len(REF8.fetch) + len(REF8.fetch) + len(HALT.steps)
    assert run.emu.warnings == ["undefined opcode at 0x0000 ran as a no-op",
                                "undefined opcode at 0x0001 ran as a no-op"]


# ----- cycle counts ----------------------------------------------------------------------

def sample_values(ins: emu.Instruction) -> dict[str, int]:
    return {name: 0 for name in ins.fields}


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("display", list(FORMS))
def test_cycle_count_is_fetch_plus_steps(path, display):
    ins = FORMS[display]
    machine = emu.Emulator(REF8)
    if path == "stepped":
        machine.observe(emu.Observer())
    machine.load([(0x0100, ins.encode(sample_values(ins)))])
    machine.set("pc", 0x0100)
    machine.set("sp", 0x8000)
    machine.advance_instruction()
    assert machine.instructions == 1
    assert machine.cycles == len(REF8.fetch) + len(ins.steps)
    assert machine.time_ns == machine.cycles * REF8.cycle_ns


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(value=word, start=st.sampled_from([0xFFFD, 0xFFFE, 0xFFFF]))
def test_an_instruction_across_the_end_of_memory_wraps_pc_to_0(path, value, start):
    machine = emu.Emulator(REF8)
    if path == "stepped":
        machine.observe(emu.Observer())
    for offset, w in enumerate(program(("li x, addr", {"addr": value}), ("halt", {}))):
        machine.memory[(start + offset) % 65536] = w
    machine.set("pc", start)
    stop = machine.run(max_cycles=100)
    assert (stop.kind, stop.address) == ("halted", (start + 3) % 65536)
    assert (machine.get("x"), machine.pc) == (value, (start + 4) % 65536)
