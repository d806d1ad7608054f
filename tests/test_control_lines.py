"""Control lines as the builder names them, gated lines, named ring stages, and wear
counted on the fast path.

The expected counts of ``WIRING`` are worked out by hand from
tests/machines/wire8.toml's steps (common practice for a micro-coded
machine: every instruction is its fetch step, then its own steps, one a
cycle); the waveform is read back with vcdvcd, a VCD parser from PyPI
independent of pyvcd, which writes it.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from vcdvcd import VCDVCD

from emu import Emulator, MachineError, Observer, machine_from_text
from emu.testing import programs, run_resuming
from emu.timing import count_wear, format_wear, record_vcd

from cli_support import cli
from debugger_programs import session_for
from engine_support import MACHINES, boot, skip_unless_properties_run

WIRE8_PATH = Path(__file__).parent / "machines" / "wire8.toml"
WIRE8_TEXT = WIRE8_PATH.read_text()
WIRE8 = MACHINES["wire8"]

WIRING = [
    0x10, 0x01,   # 0: li 1       a = 1
    0x20,         # 2: add        a = 1 + 0: z = 0, c = 0
    0x40, 0x00,   # 3: jz 0       not taken: only pc-inc fires
    0x50,         # 5: dec        a = 0: z = 1
    0x40, 0x09,   # 6: jz 9       taken: mem-rd and ld-pc fire
    0x00,         # 8: mov        jumped over
    0x80, 0x01,   # 9: out 1      an odd port: lamp-strobe fires
    0x80, 0x00,   # 11: out 0     an even port: it does not
    0xF0, 0x02,   # 13: neg       c was 0: carry-in does not fire
    0x50,         # 15: dec       a = 0xFF, the borrow sets c
    0xF0, 0x02,   # 16: neg       c is 1: carry-in fires; a = 1, c = 1
    0x61,         # 18: skc 1     f & c: seq-end fires, the instruction ends
    0x60,         # 19: skc 0     runs on: pc-inc, skipping 20
    0x00,         # 20: mov       skipped
    0xFF,         # 21: stop
]
WIRING_CYCLES = 31        # 13 instructions: five of 3 cycles, eight of 2
WIRING_LINES = {"mem-rd": 19, "ld-ir": 13, "pc-inc": 20, "ld-a": 6, "sel-b": 1, "alu-add": 1, "alu-dec": 2,
                "ld-pc": 1, "ld-t": 4, "io-wr": 2, "lamp-strobe": 1, "alu-sub": 2, "carry-in": 1, "seq-end": 1,
                "halt-set": 1, "load b": 0, "zero-a": 0, "seq-back": 0}


def refusal(old: str, new: str) -> str:
    assert old in WIRE8_TEXT, old
    with pytest.raises(MachineError) as caught:
        machine_from_text(WIRE8_TEXT.replace(old, new, 1), "wire8.toml")
    return str(caught.value)


LI_STEP = '{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["mem-rd", "ld-a", "pc-inc"] }'


@pytest.mark.parametrize("new, message", [
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["mem rd"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: 'lines' holds 'mem rd': a control line is a name of "
     "letters, digits, '-' and '_', optionally followed by 'if CONDITION' (\"ld-pc if z\")"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["ld-a if q"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: line 'ld-a' if q: unknown register or field 'q' "
     "(registers: a, b, pc, ir, t; fields: k)"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["ld-a if a"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: line 'ld-a' if a: a condition operand must be 1 bit "
     "wide (a flag, a 1-bit register or field, or a slice like x[0]), but 'a' has 8"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["ld-a if z &"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: line 'ld-a': cannot read the line's condition at "
     "column 3 (expected '!',"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["ld-a if in(2)[0]"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: line 'ld-a' if in(2)[0]: a line's condition may not "
     "read an input port (a read takes a byte from the input)"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = ["ld-a", "ld-a if z"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: 'lines' names the line 'ld-a' twice"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", lines = "ld-a" }',
     "wire8.toml:75: error: instruction 'li k' step 2: 'lines' must be a list of control line names "
     "(\"ld-a\", or \"ld-pc if z\"), not 'ld-a'"),
    ('{ do = "a <- mem[pc]; pc <- pc + 1", line = ["ld-a"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: unknown key 'line' in a step table (expected one of: "
     "do, lines)"),
    ('{ lines = ["ld-a"] }',
     "wire8.toml:75: error: instruction 'li k' step 2: a step table needs 'do', the micro-step "
     "(e.g. { do = \"a <- t\", lines = [\"ld-a\"] })"),
], ids=["a space in a name", "an unknown flag", "an 8-bit register", "a broken condition", "an input port",
        "a line twice", "lines not a list", "an unknown key", "no do"])
def test_a_bad_step_table_is_refused_at_its_place(new, message):
    assert refusal(LI_STEP, new).startswith(message)


def test_an_idle_step_names_no_lines():
    message = refusal('{ do = "a <- add(a, b) sets z c"', '{ do = "idle"')
    assert message == ("wire8.toml:80: error: instruction 'add' step 2: an idle step drives no control line: "
                       "leave out 'lines' or give it statements")


def test_a_gate_may_not_read_a_field_before_its_word_is_fetched():
    old = '{ do = "t <- mem[pc]; pc <- pc + 1", lines = ["mem-rd", "ld-t", "pc-inc"] },\n    { do = "out(t, a)"'
    new = '{ do = "t <- mem[pc]; pc <- pc + 1", lines = ["mem-rd", "ld-t if p[0]", "pc-inc"] },\n    { do = "out(t, a)"'
    assert "instruction 'out p' step 2: line 'ld-t' if p[0]: field 'p'" in refusal(old, new)


@pytest.mark.parametrize("new, message", [
    ('stage_names = ["A", "B"]', "[clock]: 'stage_names' names 2 stages, but the ring has 3 ('stages')"),
    ('stage_names = ["A", "B", "A"]', "[clock]: 'stage_names' names two stages 'A'; each stage needs a name "
                                      "of its own"),
    ('stage_names = ["A", "B", "stage 3"]', "[clock]: 'stage_names' must be a list of 3 stage names (letters, "
                                            "digits, '-', '_'), one per ring stage, not a list holding 'stage 3'"),
    ('stage_names = ["A", "B", "ld-a"]', "[clock]: 'stage_names' names a stage 'ld-a', which is also a control "
                                         "line of the machine (wear and waveforms name relays by these names)"),
], ids=["too few", "twice", "a space", "a line's name"])
def test_bad_stage_names_are_refused_with_the_clock_section_named(new, message):
    assert message in refusal('stage_names = ["A", "B", "C"]', new)


def test_wear_ratings_name_builder_lines_and_named_stages():
    assert WIRE8.wear.life("ld-a") == 5_000_000 and WIRE8.wear.life("A") == 20_000_000
    assert "no relay named 'stage 1' (relays: A, B, C, mem-rd," in refusal("A = 20_000_000",
                                                                           '"stage 1" = 20_000_000')


def test_a_decode_group_shares_the_lines_of_its_shared_steps_too():
    old = ('syntax = "neg"\ndecode_words = 2\nencoding = ["11110000", "00000010"]\nsteps = [\n'
           '    { do = "t <- mem[pc]; pc <- pc + 1", lines = ["mem-rd", "ld-t", "pc-inc"] },')
    message = refusal(old, old.replace('"ld-t", "pc-inc"', '"ld-t", "pc-up"'))
    assert "must be the same text, driving the same control lines; they differ" in message


def test_isa_lists_each_step_with_its_lines_and_gates(capsys):
    code, out, _ = cli(capsys, "isa", "--machine", WIRE8_PATH)
    assert code == 0
    assert "   1  ir <- mem[pc]; pc <- pc + 1   [mem-rd, ld-ir, pc-inc]" in out
    assert "   2  pc <- z ? mem[pc] : pc + 1   [mem-rd if z, ld-pc if z, pc-inc if !z]" in out
    assert "   2  b <- a   [load b]" in out          # no lines given: the derived names stay
    code, out, _ = cli(capsys, "isa", "--json", "--machine", WIRE8_PATH, "jz")
    step = json.loads(out)["instructions"][0]["steps"][0]
    assert step["control_lines"] == [] and step["gated_lines"][1] == {"line": "ld-pc", "if": "z"}


class _Watching(Observer):
    """Any observer: attached, it makes the engine step phase by phase."""


@pytest.mark.parametrize("stepped", [False, True], ids=["fast path", "phase by phase"])
def test_wear_counts_gated_lines_only_when_they_fire(stepped):
    emu = boot(WIRE8, WIRING)
    if stepped:
        emu.observe(_Watching())
    with count_wear(emu) as wear:
        assert emu.run(max_cycles=1000).kind == "halted"
    assert emu.cycles == WIRING_CYCLES and emu.get("a") == 1
    counts = wear.counts
    assert {line: counts[line] for line in WIRING_LINES} == WIRING_LINES
    assert (counts["A"], counts["B"], counts["C"]) == (31, 31, 31) and wear.pulses == 31
    report = wear.report()
    # every pulse operates B and C (rated 10 million); A is rated 20 million, ld-a 5 million but
    # operates on 6 pulses of 31
    assert report["wears_first"] == ["B", "C"]
    assert "\n  ld-a " in format_wear(report, top=20)


def test_the_waveform_names_stages_and_lines_and_pulses_a_gated_line_when_it_fires(tmp_path):
    emu = boot(WIRE8, WIRING)
    path = tmp_path / "wiring.vcd"
    with record_vcd(emu, path):
        emu.run(max_cycles=1000)
    vcd = VCDVCD(str(path))
    rises = {name: sum(1 for t, v in vcd[f"wire8.lines.{name}"].tv if t > 0 and v == "1")
             for name in ("lamp-strobe", "carry-in", "ld-pc", "pc-inc", "seq-end", "load_b")}
    assert rises == {"lamp-strobe": 1, "carry-in": 1, "ld-pc": 1, "pc-inc": 20, "seq-end": 1, "load_b": 0}
    assert {"wire8.ring.A", "wire8.ring.B", "wire8.ring.C"} <= set(vcd.signals)
    # the strobe is up for the pulse of out 1's second own step: cycles 12 and 13 are out 1's
    unit_ns = round(vcd.timescale["timescale"] * 10 ** 9)   # the dump's own $timescale
    strobe = [(t * unit_ns, v) for t, v in vcd["wire8.lines.lamp-strobe"].tv if t > 0]
    cycle_ns = WIRE8.cycle_ns
    assert strobe == [(12 * cycle_ns + 20_000_000, "1"), (13 * cycle_ns, "0")]


def test_scope_and_panel_show_named_stages_and_the_lines_that_fire(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    session = session_for(tmp_path, "        li 1\n        add\n        jz 0\n        stop\n",
                          machine=WIRE8, name="wiring.asm")
    session.execute("throw run")
    session.execute("go")
    assert "next drives mem-rd, ld-ir, pc-inc\n" in session.execute("panel")
    rows = session.execute("scope 8").splitlines()
    named = {row.split()[0] for row in rows[1:] if row.strip() and not row.startswith(" ")}
    assert {"A", "B", "C", "pc-inc", "sel-b", "alu-add"} <= named
    assert "ld-pc" not in named            # jz 0 did not jump: its gated lines never fired


def test_the_next_step_drives_its_gated_lines_by_the_present_state():
    emu = boot(WIRE8, [0x40, 0x05])     # jz 5
    emu.run(max_cycles=1)                # the fetch: jz's own step is next
    assert emu.sequencer[1] == 1
    assert emu.driven_lines() == ("pc-inc",)
    emu.set("z", 1)
    assert emu.driven_lines() == ("mem-rd", "ld-pc")


@pytest.mark.parametrize("machine_name", sorted(MACHINES))
def test_wear_counted_on_the_fast_path_equals_the_count_phase_by_phase(machine_name):
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    _fast_and_stepped_wear_agree(machine)


@settings(max_examples=40, deadline=None)
@given(data=st.data(), cycles=st.integers(1, 2000), hot=st.booleans())
def _fast_and_stepped_wear_agree(machine, data, cycles, hot):
    """``hot``: blocks are translated from the first visits on (else the run is too short for them)."""
    words = data.draw(programs(machine))
    fast, stepped = boot(machine, words), boot(machine, words)
    stepped.observe(_Watching())
    with count_wear(fast) as fast_wear, count_wear(stepped) as stepped_wear:
        if hot:
            fast_wear.tally.blocks.warm_up, fast_wear.tally.blocks.threshold = 0, 2
        assert run_resuming(fast, cycles) == run_resuming(stepped, cycles)
    assert fast_wear.counts == stepped_wear.counts
    assert fast_wear.pulses == stepped_wear.pulses == fast.cycles
