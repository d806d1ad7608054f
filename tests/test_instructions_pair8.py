"""pair8's pointer-pair instructions against Python integer arithmetic, on both paths.

pair8 (tests/machines/pair8.toml) has three 16-bit pairs bc, de, hl, and one
operand kind ``pair`` that lists them: one form such as ``incp p`` serves every
pair, the field choosing which. The fused path specialises a function per pair;
the stepping path picks the pair at run time; both must give what Python's
integers give: a pair is ``high << 8 | low`` (most significant register first),
counting on it wraps at 2^16, and the ALU's carry is bit 16 of the unmasked sum
(common practice, no source; the same convention as ref8's "Flags").
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu

from engine_support import assert_only_changes, encode_forms, run_program

PAIR8 = emu.load_machine(Path(__file__).parent / "machines" / "pair8.toml")
FORMS = {ins.display: ins for ins in PAIR8.instructions}
HALT = FORMS["halt"]
PAIRS = ["bc", "de", "hl"]
NUMBER = {name: number for number, name in enumerate(PAIRS)}
WATCHED = [r.name for r in PAIR8.visible_registers] + list(PAIR8.flags)
PATHS = ["fused", "stepped"]
EXAMPLES = settings(max_examples=40, deadline=None)

pair = st.sampled_from(PAIRS)
word16 = st.integers(0, 0xFFFF)
byte = st.integers(0, 0xFF)
# Data stays clear of the program at 0x0000…0x000F.
data_address = st.integers(0x0010, 0xFFFF)


def pair_values(**values: int) -> dict[str, int]:
    """Register values that set each named pair (high register first), as a programmer's model."""
    result = {}
    for name, value in values.items():
        high, low = PAIR8.groups[name].parts
        result[high], result[low] = value >> 8, value & 0xFF
    return result


def execute(parts, path, values, memory=None):
    """Run the instructions from address 0, then the halt after them."""
    words = encode_forms(FORMS, *parts)
    run = run_program(PAIR8, words + HALT.encode({}), path, values=values, memory=memory)
    assert (run.stop.kind, run.stop.address) == ("halted", len(words))
    return run


def check(run, changes: dict[str, int], memory_changes=None):
    """Each register and flag as before the run but for ``changes``; pc just past the halt."""
    expected = {**run.before, "pc": run.stop.address + 1, **changes}
    assert_only_changes(run, WATCHED, expected, memory_changes)


def registers_of(name: str, value: int) -> dict[str, int]:
    return pair_values(**{name: value})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, start=word16, address=word16)
def test_lp_loads_the_pair_it_names(path, p, start, address):
    others = {n: start for n in PAIRS if n != p}
    run = execute([("lp p, addr", {"p": NUMBER[p], "addr": address})], path, pair_values(**others, **{p: start}))
    check(run, registers_of(p, address))
    assert run.emu.get(p) == address


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, value=word16)
def test_incp_counts_the_whole_pair_on(path, p, value):
    run = execute([("incp p", {"p": NUMBER[p]})], path, pair_values(**{p: value}))
    check(run, registers_of(p, (value + 1) % 0x10000))


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, value=word16, z=st.integers(0, 1))
def test_decp_counts_down_through_the_alu_and_sets_zero(path, p, value, z):
    run = execute([("decp p", {"p": NUMBER[p]})], path, {**pair_values(**{p: value}), "z": z})
    result = (value - 1) % 0x10000
    check(run, {**registers_of(p, result), "z": int(result == 0)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, q=pair, x=word16, y=word16)
def test_addp_adds_two_pairs_with_carry_out_of_bit_15(path, p, q, x, y):
    values = pair_values(**{q: y, p: x})
    run = execute([("addp p, q", {"p": NUMBER[p], "q": NUMBER[q]})], path, values)
    addend = x if p == q else y
    total = x + addend
    check(run, {**registers_of(p, total % 0x10000), "z": int(total % 0x10000 == 0), "k": total >> 16})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, q=pair, x=word16, y=word16)
def test_swap_exchanges_two_pairs_read_before_either_is_written(path, p, q, x, y):
    run = execute([("swap p, q", {"p": NUMBER[p], "q": NUMBER[q]})], path, pair_values(**{p: x, q: y}))
    if p == q:
        check(run, {})
    else:
        check(run, {**registers_of(p, y), **registers_of(q, x)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, r=st.sampled_from(["a", "b"]), address=data_address, value=byte)
def test_ld_reads_memory_at_the_pair_through_the_latch(path, p, r, address, value):
    run = execute([("ld r, [p]", {"p": NUMBER[p], "r": ["a", "b"].index(r)})], path,
                  pair_values(**{p: address}), memory={address: value})
    check(run, {r: value})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, address=data_address, a=byte)
def test_sti_writes_at_the_pair_then_steps_it_on(path, p, address, a):
    run = execute([("sti [p], r", {"p": NUMBER[p], "r": 0})], path, {**pair_values(**{p: address}), "a": a})
    check(run, registers_of(p, (address + 1) % 0x10000), {address: a})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, value=word16)
def test_hi_and_lo_take_the_pair_apart(path, p, value):
    run = execute([("hi r, p", {"r": 0, "p": NUMBER[p]})], path, pair_values(**{p: value}))
    check(run, {"a": value >> 8})
    run = execute([("lo r, p", {"r": 0, "p": NUMBER[p]})], path, pair_values(**{p: value}))
    check(run, {"a": value & 0xFF})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(p=pair, a=byte, b=byte)
def test_mkp_writes_every_part_of_the_pair(path, p, a, b):
    run = execute([("mkp p", {"p": NUMBER[p]})], path, {"a": a, "b": b})
    check(run, registers_of(p, a << 8 | b))


@pytest.mark.parametrize("path", PATHS)
def test_a_word_whose_pair_field_names_no_pair_is_undefined(path):
    """incp with field value 3 (bc, de, hl are 0…2): an undefined opcode, as for registers."""
    word = FORMS["incp p"].fixed[0][1] | 3
    assert PAIR8.decode_table[word] == -1
    run = run_program(PAIR8, [word] + HALT.encode({}), path)
    assert run.stop.kind == "halted"
    assert run.emu.warnings == ["undefined opcode at 0x0000 ran as a no-op"]
    assert_only_changes(run, WATCHED, {**run.before, "pc": 2})
