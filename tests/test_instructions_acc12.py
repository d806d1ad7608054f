"""Every acc12 instruction against reference arithmetic outside the project.

acc12 is the second test machine (tests/machines/acc12.toml): a 12-bit
accumulator ``acc``, an 8-bit ``pc``, flags ``zf`` (zero) and ``lk`` (the
link: carry out, or borrow), 256 words of memory, one-word instructions.
Programs are built with the machine's own encoder and run to a trailing
``stop`` on the fused and on the stepping path.

References: Python integers and numpy ``uint16`` arithmetic masked to 12
bits; the link after a subtraction is a borrow (unsigned minuend smaller
than the subtrahend), the convention the ref8 reference ("Flags") fixes and acc12 shares
through its description; rotate through the link as a 13-bit rotate of
``lk:acc`` (common practice, no source).

acc12's clock has a hold point after only one of the two pulses of a turn,
and a run starts just after that hold point. So the generator can freeze
only after an even number of cycles: a ``stop`` whose step lands on an odd
cycle lets one more fetch run before the freeze (pc one further on).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import emu

from engine_support import Run, assert_only_changes, encode_forms, one_instruction, run_program

ACC12 = emu.load_machine(Path(__file__).parent / "machines" / "acc12.toml")
FORMS = {ins.display: ins for ins in ACC12.instructions}
STOP = FORMS["stop"]
VISIBLE = [reg.name for reg in ACC12.visible_registers]
FLAGS = list(ACC12.flags)
MASK = 0xFFF
PATHS = ["fused", "stepped"]
EXAMPLES = settings(max_examples=60, deadline=None)

word12 = st.integers(0, MASK)
bit = st.integers(0, 1)
flag_values = st.fixed_dictionaries({name: bit for name in FLAGS})
# Data stays clear of the program at 0x00…0x0F.
data_address = st.integers(0x10, 0xFF)


# ----- reference arithmetic ---------------------------------------------------------

def masked(value) -> int:
    return int(np.uint16(value) & np.uint16(MASK))


def reference_add(a: int, b: int) -> tuple[int, int]:
    with np.errstate(over="ignore"):
        result = masked(np.uint16(a) + np.uint16(b))
    assert result == (a + b) % 4096
    return result, int(a + b > MASK)


def reference_sub(a: int, b: int) -> tuple[int, int]:
    with np.errstate(over="ignore"):
        result = masked(np.uint16(a) - np.uint16(b))
    assert result == (a - b) % 4096
    return result, int(a < b)


# ----- running one program -----------------------------------------------------------

def program(*parts: tuple[str, dict]) -> list[int]:
    return encode_forms(FORMS, *parts)


def stop_after(words) -> list[int]:
    return words + STOP.encode({})


def execute(words, path, *, acc=0, flags=None, memory=None, switches=0, input_bytes=b"",
            max_cycles=200) -> Run:
    return run_program(ACC12, words, path, values={"acc": acc, **(flags or {})}, memory=memory,
                       switches=switches, input_bytes=input_bytes, max_cycles=max_cycles)


def cycles_of(*displays: str) -> int:
    """Cycles of the instructions run, by form; None stands for an undefined word (fetch only)."""
    return sum(len(ACC12.fetch) + (len(FORMS[d].steps) if d else 0) for d in displays)


def check(run: Run, ran: list[str | None], changes: dict[str, int],
          memory_changes: dict[int, int] | None = None, stop_at: int = 1):
    """The stop at ``stop_at`` ended the run after the forms in ``ran`` (the stop last);
    every register, flag and word is as expected and nothing else changed."""
    machine = run.emu
    assert (run.stop.kind, run.stop.address) == ("halted", stop_at)
    to_stop = cycles_of(*ran)
    extra = to_stop % 2
    assert machine.cycles == to_stop + extra
    assert_only_changes(run, VISIBLE + FLAGS, {**run.before, "pc": (stop_at + 1 + extra) % 256, **changes},
                        memory_changes)


# ----- transfers ------------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, address=data_address, value=word12)
def test_load(path, acc, flags, address, value):
    run = execute(stop_after(program(("load a", {"a": address}))), path, acc=acc, flags=flags,
                  memory={address: value})
    check(run, ["load a", "stop"], {"acc": value})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, address=data_address, old=word12)
def test_store(path, acc, flags, address, old):
    run = execute(stop_after(program(("store a", {"a": address}))), path, acc=acc, flags=flags,
                  memory={address: old})
    check(run, ["store a", "stop"], {}, {address: acc})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, k=st.integers(-128, 255))
def test_set_loads_the_8_bit_field_without_sign_extension(path, acc, flags, k):
    run = execute(stop_after(program(("set k", {"k": k}))), path, acc=acc, flags=flags)
    # acc <- k: the raw 8-bit field, so -1 reads back as 255
    check(run, ["set k", "stop"], {"acc": k % 256})


# ----- arithmetic and logic --------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, address=data_address, value=word12)
def test_plus(path, acc, flags, address, value):
    run = execute(stop_after(program(("plus a", {"a": address}))), path, acc=acc, flags=flags,
                  memory={address: value})
    result, link = reference_add(acc, value)
    check(run, ["plus a", "stop"], {"acc": result, "zf": int(result == 0), "lk": link})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, address=data_address, value=word12)
def test_minus(path, acc, flags, address, value):
    run = execute(stop_after(program(("minus a", {"a": address}))), path, acc=acc, flags=flags,
                  memory={address: value})
    result, borrow = reference_sub(acc, value)
    check(run, ["minus a", "stop"], {"acc": result, "zf": int(result == 0), "lk": borrow})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, address=data_address, value=word12)
def test_mask_sets_zf_and_keeps_the_link(path, acc, flags, address, value):
    run = execute(stop_after(program(("mask a", {"a": address}))), path, acc=acc, flags=flags,
                  memory={address: value})
    result = int(np.bitwise_and(np.uint16(acc), np.uint16(value)))
    check(run, ["mask a", "stop"], {"acc": result, "zf": int(result == 0)})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=st.one_of(word12, st.just(MASK)), flags=flag_values)
def test_bump(path, acc, flags):
    run = execute(stop_after(program(("bump", {}))), path, acc=acc, flags=flags)
    result, link = reference_add(acc, 1)
    check(run, ["bump", "stop"], {"acc": result, "zf": int(result == 0), "lk": link})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values)
def test_twice(path, acc, flags):
    run = execute(stop_after(program(("twice", {}))), path, acc=acc, flags=flags)
    with np.errstate(over="ignore"):
        result = masked(np.left_shift(np.uint16(acc), np.uint16(1)))
    check(run, ["twice", "stop"], {"acc": result, "zf": int(result == 0), "lk": acc >> 11})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values)
def test_carry_rotates_through_the_link(path, acc, flags):
    run = execute(stop_after(program(("carry", {}))), path, acc=acc, flags=flags)
    thirteen = flags["lk"] << 12 | acc
    rotated = (thirteen << 1 | thirteen >> 12) & 0x1FFF
    check(run, ["carry", "stop"], {"acc": rotated & MASK, "zf": int(rotated & MASK == 0), "lk": rotated >> 12})


@pytest.mark.parametrize(("display", "acc", "operand", "result", "zf", "lk"), [
    # worked examples, by hand
    ("plus a", 0xFFF, 0x001, 0x000, 1, 1),
    ("plus a", 0x7FF, 0x001, 0x800, 0, 0),
    ("minus a", 0x000, 0x001, 0xFFF, 0, 1),
    ("minus a", 0x123, 0x123, 0x000, 1, 0),
    ("bump", 0xFFF, None, 0x000, 1, 1),
    ("twice", 0x801, None, 0x002, 0, 1),
    ("carry", 0x800, None, 0x000, 1, 1),
])
def test_worked_examples(display, acc, operand, result, zf, lk):
    values = {"a": 0x80} if FORMS[display].fields else {}
    run = execute(stop_after(program((display, values))), "fused", acc=acc, flags={"zf": 0, "lk": 0},
                  memory={0x80: operand or 0})
    assert (run.emu.get("acc"), run.emu.get("zf"), run.emu.get("lk")) == (result, zf, lk)


# ----- jumps ------------------------------------------------------------------------------

jump_target = st.integers(0x10, 0xFF)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, target=jump_target)
def test_go(path, acc, flags, target):
    run = execute(program(("go a", {"a": target})), path, acc=acc, flags=flags,
                  memory={target: STOP.encode({})[0]})
    check(run, ["go a", "stop"], {}, stop_at=target)


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize(("display", "flag"), [("gozero a", "zf"), ("golink a", "lk")])
@EXAMPLES
@given(acc=word12, flags=flag_values, target=jump_target)
def test_conditional_go(path, display, flag, acc, flags, target):
    run = execute(stop_after(program((display, {"a": target}))), path, acc=acc, flags=flags,
                  memory={target: STOP.encode({})[0]})
    check(run, [display, "stop"], {}, stop_at=target if flags[flag] else 1)


# ----- ports ---------------------------------------------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, switches=word12)
def test_get_port_0_reads_all_12_switches(path, acc, switches):
    run = execute(stop_after(program(("get p", {"p": 0}))), path, acc=acc, switches=switches)
    check(run, ["get p", "stop"], {"acc": switches})


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(stream=st.binary(max_size=2))
def test_get_input_and_input_ready(path, stream):
    words = stop_after(program(("get p", {"p": 2}), ("store a", {"a": 0x20}),
                               ("get p", {"p": 1}), ("store a", {"a": 0x21}),
                               ("get p", {"p": 1})))
    run = execute(words, path, input_bytes=stream)
    padded = list(stream) + [0, 0]
    check(run, ["get p", "store a"] * 2 + ["get p", "stop"], {"acc": padded[1]},
          {0x20: int(len(stream) > 0), 0x21: padded[0]}, stop_at=5)


@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12)
def test_put_console_takes_the_low_byte_and_lamps_take_the_word(path, acc):
    run = execute(stop_after(program(("put p", {"p": 0}), ("put p", {"p": 1}))), path, acc=acc)
    check(run, ["put p", "put p", "stop"], {}, stop_at=2)
    assert run.emu.output == bytes([acc & 0xFF])
    assert run.emu.lamps == acc
    assert run.emu.warnings == []


@pytest.mark.parametrize("path", PATHS)
def test_unmapped_port_reads_0_and_is_counted(path):
    run = execute(stop_after(program(("get p", {"p": 9}), ("put p", {"p": 9}))), path, acc=0x555)
    check(run, ["get p", "put p", "stop"], {"acc": 0}, stop_at=2)
    assert run.emu.warnings == ["1 read from port 9, which has no device",
                                "1 write to port 9, which has no device"]


# ----- skip, stop, undefined words, cycle counts ----------------------------------------------

@pytest.mark.parametrize("path", PATHS)
@EXAMPLES
@given(acc=word12, flags=flag_values, skips=st.integers(0, 3))
def test_skip_and_the_freeze_one_cycle_into_the_next_instruction(path, acc, flags, skips):
    words = stop_after(program(*[("skip", {})] * skips))
    run = execute(words, path, acc=acc, flags=flags)
    odd = (skips * len(ACC12.fetch) + len(ACC12.fetch) + len(STOP.steps)) % 2
    assert run.emu.cycles == skips + 2 + odd
    # with an odd count, the next word's fetch has run: pc is two past the stop
    assert run.emu.pc == skips + 1 + odd
    check(run, ["skip"] * skips + ["stop"], {}, stop_at=skips)


UNDEFINED = [w for w, index in enumerate(ACC12.decode_table) if index < 0]


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("word", [UNDEFINED[0], UNDEFINED[-1]])
def test_undefined_word_runs_as_a_no_op_with_a_warning(path, word):
    run = execute(stop_after([word]), path, acc=0x321, flags={"zf": 1, "lk": 1})
    check(run, [None, "stop"], {})
    assert run.emu.warnings == ["undefined opcode at 0x00 ran as a no-op"]


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize("display", list(FORMS))
def test_cycle_count_is_fetch_plus_steps(path, display):
    ins = FORMS[display]
    machine = one_instruction(ACC12, ins.encode({name: 0x40 for name in ins.fields}), path, at=0x10)
    assert machine.cycles == len(ACC12.fetch) + len(ins.steps)
