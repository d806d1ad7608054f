"""Conditions, widths, slices, sign extension, register groups, plain flags and idle steps.

Run on the test machine tests/machines/cond4.toml on both engine paths (the
stepping path one micro-step per falling edge, the fused path a whole
instruction per call) and checked against plain Python integers. Each new
kind of mistake in a machine file has a located load error.
"""

from __future__ import annotations

import itertools

import pytest
from hypothesis import given, settings, strategies as st

import emu
from engine_support import COND4_PATH, MACHINES, encode, run_program

COND4 = MACHINES["cond4"]
COND4_TEXT = COND4_PATH.read_text(encoding="utf-8")
PATHS = pytest.mark.parametrize("path", ["stepped", "fused"])
STOP = encode(COND4, "stop")


def run(words, path, **values):
    return run_program(COND4, words + STOP, path, values=values).emu


def twos_complement(value: int, bits: int) -> int:
    """The signed number a ``bits``-bit pattern stands for (two's complement, by its definition)."""
    return value - (1 << bits) if value >> (bits - 1) & 1 else value


# ----- semantics, both paths -------------------------------------------------------------

@PATHS
@pytest.mark.parametrize("k", range(16))
def test_sign_extension_keeps_the_twos_complement_value(path, k):
    """sext(k, 12) of a 4-bit k is the same signed number in 12 bits (two's complement definition)."""
    machine = run(encode(COND4, "lx hml, k", k=k), path)
    hml = machine.get("hml")
    assert twos_complement(hml, 12) == twos_complement(k, 4)
    by_hand = {15: 0xFFF, 8: 0xFF8, 7: 0x007, 0: 0x000}        # -1, -8, 7, 0 in 12 bits
    assert hml == by_hand.get(k, hml)


@PATHS
@settings(max_examples=30, deadline=None)
@given(value=st.integers(0, 0xFFF))
def test_a_group_of_three_reads_and_writes_its_parts_and_a_slice_takes_the_top(path, value):
    machine = run(encode(COND4, "top a"), path, hml=value)
    assert (machine.get("h"), machine.get("m"), machine.get("l")) == (value >> 8, value >> 4 & 15, value & 15)
    assert machine.get("hml") == value
    assert machine.get("a") == value >> 8


@PATHS
def test_the_incrementer_on_a_group_wraps_and_the_group_addresses_memory(path):
    machine = run(encode(COND4, "inc hml") + encode(COND4, "st [hml], a"), path, hml=0xFFF, a=9)
    assert machine.get("hml") == 0 and machine.memory[0] == 9     # the store lands on the wrapped address
    machine = run(encode(COND4, "inc hml") + encode(COND4, "ld a, [hml]"), path, hml=0x0FF)
    assert machine.get("hml") == 0x100 and (machine.get("h"), machine.get("m"), machine.get("l")) == (1, 0, 0)


@PATHS
@pytest.mark.parametrize("a, b", list(itertools.product(range(16), (0, 5, 10, 15))))
def test_a_join_of_slices_shifts_in_a_bit(path, a, b):
    machine = run(encode(COND4, "sh b, a"), path, a=a, b=b)
    assert machine.get("b") == (a & 1) << 3 | b >> 1


@PATHS
@pytest.mark.parametrize("z, c, cz, cc", list(itertools.product((0, 1), repeat=4)))
def test_a_goto_takes_the_flags_its_bits_choose(path, z, c, cz, cc):
    """pc <- (z & cc[1]) | (c & cc[0]) ? dest : next: one row for every combination of tested flags."""
    go = encode(COND4, "go cc, dest", cc=cz << 1 | cc, dest=0x123)
    machine = run(go, path, z=z, c=c)
    taken = (z and cz) or (c and cc)
    # memory at 0x123 holds 0, a stop: a taken goto halts there, one not taken on the stop after it
    assert machine.pc == (0x123 + 1 if taken else len(go) + 1)


@PATHS
@pytest.mark.parametrize("rdy, z", list(itertools.product((0, 1), repeat=2)))
def test_a_plain_flag_is_written_by_transfers_and_read_as_a_bit(path, rdy, z):
    machine = run(encode(COND4, "look a"), path, rdy=rdy, z=z, a=15)
    assert machine.get("a") == rdy & (1 - z)              # one bit, zero-extended into a
    machine = run(encode(COND4, "ready"), path, rdy=0)
    assert machine.get("rdy") == 1


@PATHS
@pytest.mark.parametrize("pending, expected", [(b"", 0), (b"x", 1)])
def test_a_plain_flag_copies_bit_0_of_an_input_port(path, pending, expected):
    program = encode(COND4, "poll") + STOP
    machine = run_program(COND4, program, path, values={"rdy": 1 - expected}, input_bytes=pending).emu
    assert machine.get("rdy") == expected


@PATHS
def test_idle_steps_cost_cycles_and_change_nothing(path):
    values = {"a": 3, "b": 4, "hml": 0x5A5, "z": 1, "c": 0, "rdy": 1}
    machine = run(encode(COND4, "wait"), path, **values)
    assert machine.cycles == 3 + 2           # wait: fetch and two idle steps; stop: fetch and halt
    assert {name: machine.get(name) for name in values} == values


def test_an_idle_step_drives_no_line_and_shows_as_idle():
    wait = next(i for i in COND4.instructions if i.mnemonic == "wait")
    assert [(s.text, s.control_lines) for s in wait.steps] == [("idle", ()), ("idle", ())]
    assert not any("idle" in line for line in COND4.relay_names())   # wear and VCD count only lines


# ----- located load errors ----------------------------------------------------------------

def load_error(old: str, new: str) -> tuple[str, int]:
    assert old in COND4_TEXT
    text = COND4_TEXT.replace(old, new, 1)
    line = COND4_TEXT[:COND4_TEXT.index(old)].count("\n") + 1
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text, "cond4.toml")
    return str(caught.value).splitlines()[0], line


STEP_MISTAKES = {
    "a condition operand wider than a bit": (
        '"pc <- (z & cc[1]) | (c & cc[0]) ? {u, w, mem[pc]} : pc + 1"',
        '"pc <- (z & cc[1]) | (u & cc[0]) ? {u, w, mem[pc]} : pc + 1"',
        "instruction 'go cc, dest' step 5: a condition operand must be 1 bit wide (a flag, a 1-bit "
        "register or field, or a slice like x[0]), but 'u' has 4"),
    "a choice on a register": (
        '"pc <- (z & cc[1]) | (c & cc[0]) ? {u, w, mem[pc]} : pc + 1"', '"pc <- w ? {u, w, mem[pc]} : pc + 1"',
        "instruction 'go cc, dest' step 5: a condition operand must be 1 bit wide (a flag, a 1-bit "
        "register or field, or a slice like x[0]), but 'w' has 4"),
    "a value wider than its register": (
        '"a <- hml[11:8]"', '"a <- hml[11:4]"',
        "instruction 'top a' step 2: 'a' holds 4 bits but the value written to it has 8"),
    "a constant wider than the incrementer's value": (
        '"a <- k"', '"a <- k + 0xF0"',
        "instruction 'li a, k' step 3: the constant 240 does not fit the 4 bits of the value it is added to "
        "or taken from"),
    "a constant wider than the ALU's other operand": (
        '"a <- add(a, b) sets z c"', '"a <- add(a, 0x1F) sets z c"',
        "instruction 'add a, b' step 2: the constant 31 does not fit the 4 bits of add()'s other operand"),
    "a slice outside its value": (
        '"a <- hml[11:8]"', '"a <- hml[12:9]"',
        "instruction 'top a' step 2: slice [12:9] reaches outside the 12 bits of its value (bits 11…0)"),
    "a slice written backwards": (
        '"a <- hml[11:8]"', '"a <- hml[8:11]"',
        "instruction 'top a' step 2: slice [8:11] runs backwards: write the high bit first"),
    "sign extension to fewer bits": (
        '"hml <- sext(k, 12)"', '"hml <- sext(hml, 8)"',
        "instruction 'lx hml, k' step 3: sext() to 8 bits, but its value already has 12"),
    "a constant in a join": (
        '"b <- {a[0], b[3:1]}"', '"b <- {1, b[3:1]}"',
        "instruction 'sh b, a' step 2: a constant in a join {…} has no width of its own: write zext(1, N)"),
    "hi() of one word": (
        '"a <- hml[11:8]"', '"a <- hi(a)"',
        "instruction 'top a' step 2: hi() needs a value wider than one data word (4 bits), not one of 4"),
    "idle beside a transfer": (
        'steps = ["", "idle"]', 'steps = ["", "idle; a <- b"]',
        "instruction 'wait' step 3: 'idle' cannot stand with statements that transfer or drive something"),
    "idle beside a goto whose condition reads a port": (
        'steps = ["", "idle"]', 'steps = ["", "idle; goto 3 if !in(2)[0]"]',
        "instruction 'wait' step 3: 'idle' cannot stand with this goto: its condition reads a port (the 'in' "
        "line), and an idle step drives no line; leave out 'idle' (the goto alone takes the same one cycle)"),
    "idle beside a wait on a memory bit": (
        'steps = ["", "idle"]', 'steps = ["", "idle; wait until mem[hml][0]"]',
        "instruction 'wait' step 3: 'idle' cannot stand with this wait until: its condition reads memory (the "
        "'read' line), and an idle step drives no line; leave out 'idle' (the wait until alone takes the same "
        "one cycle)"),
}


def test_idle_stands_with_a_goto_on_a_flag_and_the_goto_alone_may_read_a_port():
    def wait_step(steps: str):
        machine = emu.machine_from_text(COND4_TEXT.replace('steps = ["", "idle"]', steps))
        return next(ins for ins in machine.instructions if ins.mnemonic == "wait").steps[1]

    assert wait_step('steps = ["", "idle; goto 3 if !z"]').line_names == ()
    assert wait_step('steps = ["", "goto 3 if !in(2)[0]"]').line_names == ("in",)


@pytest.mark.parametrize("name", list(STEP_MISTAKES))
def test_a_step_mistake_names_file_line_instruction_and_step(name):
    old, new, message = STEP_MISTAKES[name]
    first_line, line = load_error(old, new)
    assert first_line == f"cond4.toml:{line}: error: {message}"


KEY_MISTAKES = {
    "a group of one register": (
        'hml = ["h", "m", "l"]', 'hml = ["h"]',
        "[groups] hml: a group must be a list of two or more registers, most significant first, "
        'e.g. ["r6", "r7"]'),
    "a group naming a register twice": (
        'hml = ["h", "m", "l"]', 'hml = ["h", "m", "h"]', "[groups] hml: a group must not name a register twice"),
    "a group named like a register": (
        'hml = ["h", "m", "l"]', 'a = ["h", "m", "l"]', "[groups] a: a group must not have the name of a register"),
    "an unknown flag role": (
        'rdy = "plain"', 'rdy = "ready"',
        "[flags] rdy: a flag's role must be one of zero, negative, carry, overflow (set by the ALU) or 'plain' "
        "(a 1-bit register transfers write), not 'ready'"),
}


@pytest.mark.parametrize("name", list(KEY_MISTAKES))
def test_a_key_mistake_names_file_line_and_key(name):
    old, new, message = KEY_MISTAKES[name]
    first_line, line = load_error(old, new)
    assert first_line == f"cond4.toml:{line}: error: {message}"


def test_two_carry_flags_load_but_a_carry_in_operation_cannot_tell_which():
    text = COND4_TEXT.replace('c = "carry"', 'c = "carry"\nc2 = "carry"')
    machine = emu.machine_from_text(text, "cond4.toml")            # more than one flag per role is allowed
    assert [f.name for f in machine.flags.values() if f.role == "carry"] == ["c", "c2"]
    text = text.replace('"a <- add(a, b) sets z c"', '"a <- adc(a, b) sets z c2"')
    with pytest.raises(emu.MachineError, match=r"adc reads the carry flag, and the machine has 2 \(c, c2\)"):
        emu.machine_from_text(text, "cond4.toml")


def test_a_machine_without_flags_loads():
    start = COND4_TEXT.index("[flags]")
    end = COND4_TEXT.index("[operands]")
    text = COND4_TEXT[:start] + COND4_TEXT[end:]
    for old, new in (('"a <- add(a, b) sets z c"', '"a <- add(a, b)"'), ('"rdy <- 1"', '"b <- 1"'),
                     ('"a <- rdy & !z"', '"a <- b[0] ^ b[1]"'), ('"rdy <- in(2)[0]"', '"b <- in(2)[0]"'),
                     ("(z & cc[1]) | (c & cc[0])", "(a[0] & cc[1]) | (a[1] & cc[0])")):
        text = text.replace(old, new)
    assert emu.machine_from_text(text, "noflags.toml").flags == {}


@PATHS
@pytest.mark.parametrize("selector, expected", [("hi", lambda v: v >> 8), ("lo", lambda v: v & 0xF)])
def test_hi_and_lo_of_a_three_word_value_are_its_top_and_bottom_words(path, selector, expected):
    """On 4-bit words a 12-bit value is three words: hi() is bits 11:8 (the top word), lo() bits 3:0."""
    text = COND4_TEXT.replace('"a <- hml[11:8]"', f'"a <- {selector}(hml)"')
    machine = emu.machine_from_text(text, "cond4.toml")
    for value in (0x000, 0x123, 0xABC, 0xFFF):
        words = encode(machine, "top a") + encode(machine, "stop")
        result = run_program(machine, words, path, values={"hml": value}).emu
        assert result.get("a") == expected(value)


def test_scope_marks_idle_cycles_and_draws_no_line_for_them(tmp_path, monkeypatch):
    from debugger_programs import session_for
    monkeypatch.chdir(tmp_path)
    session = session_for(tmp_path, "        wait\n        stop\n", machine=COND4, name="idle.asm")
    session.execute("go")
    rows = session.execute("scope 5").splitlines()
    named = {row[:10].strip(): row[10:] for row in rows[1:] if row[:10].strip()}
    # power-on at the hold point (two low columns), then cycles 1-5, a high and a low column each:
    # wait's fetch, its two idle steps, stop's fetch, its halt step
    assert named["clock"] == "__‾_‾_‾_‾_‾_"
    assert named["idle"] == "    · ·"
    assert named["read"] == "  █     █"        # only the two fetches touch memory
    assert rows[-1] == "idle: · a cycle whose micro-step drives no control line"


def test_idle_cycles_drive_no_line_in_the_waveform_and_wear_nothing(tmp_path):
    from vcdvcd import VCDVCD
    from emu.timing import count_wear, record_vcd
    machine = emu.Emulator(COND4)
    machine.load([(0, encode(COND4, "wait") + STOP)])
    path = tmp_path / "idle.vcd"
    with record_vcd(machine, path), count_wear(machine) as wear:
        assert machine.run(max_cycles=20).kind == "halted"
    # the steps run: two fetches (read, load ir, load pc each), two idle steps, halt
    expected = {"read": 2, "load ir": 2, "load pc": 2, "halt": 1}
    assert {line: n for line, n in wear.counts.items() if not line.startswith("stage") and n} == expected
    vcd = VCDVCD(str(path))
    rises = {name.rsplit(".", 1)[1]: sum(1 for t, v in vcd[name].tv if t > 0 and v == "1")
             for name in vcd.signals if ".lines." in name}
    assert sum(rises.values()) == sum(expected.values())


def test_an_alu_operation_in_a_branch_of_a_choice_is_refused_at_load():
    """The compiler has no way to gate an ALU operation by a condition, so the loader says so, located."""
    text = COND4_TEXT.replace('steps = ["rdy <- in(2)[0]"]', 'steps = ["a <- z ? inc(a) : a"]')
    assert text != COND4_TEXT
    with pytest.raises(emu.MachineError) as caught:
        emu.machine_from_text(text, "cond4.toml")
    assert "step 2: the ALU operation inc() cannot stand in a branch of a choice" in str(caught.value)
