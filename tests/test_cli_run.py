"""``relaybench run`` ("Headless runs" in emu/machines/ref8.md): options, summary, JSON keys, exit statuses."""

from __future__ import annotations

import json

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import asm
import emu
import emu.cli
from emu.runs import load_program, report, run_loaded
from emu.formatting import duration_text, rate_text

from cli_support import ACC12, REF8_PROGRAMS, cli, write

SPEC_KEYS = {"status", "pc", "cycles", "instructions", "sim_seconds", "registers", "flags", "lamps",
             "output", "pauses", "warnings", "dumps"}

ADDER = """\
        li r0, 5
        li r1, 7
        add r0, r1
        out 0, r0
        pause
        .expect r0 == 12
        li r2, 'A'
        out 0, r2
        out 1, r1
        li x, 0x1234
        halt
"""


@pytest.fixture
def adder(tmp_path):
    return write(tmp_path, "adder.asm", ADDER)


def run_json(capsys, *argv):
    code, out, err = cli(capsys, "run", *argv, "--json")
    return code, json.loads(out) if out else None, err


def test_json_has_exactly_the_keys_of_the_spec(capsys, adder):
    code, data, err = run_json(capsys, adder)
    assert code == 0 and err == ""
    assert set(data) == SPEC_KEYS
    assert data["status"] == "halted"
    assert set(data["registers"]) == {f"r{i}" for i in range(8)} | {"x", "sp"}
    assert set(data["flags"]) == {"z", "n", "c", "v"}


def test_json_values_of_a_small_program(capsys, adder):
    _code, data, _err = run_json(capsys, adder, "--dump", "0:4", "--dump", "0x1F:2")
    assert data["registers"]["r0"] == 12 and data["registers"]["r2"] == ord("A")
    # x is the pair r6 (high) : r7 (low), ref8 reference, "Programmer's model"
    assert data["registers"]["x"] == 0x1234
    assert (data["registers"]["r6"], data["registers"]["r7"]) == (0x12, 0x34)
    assert data["output"] == "\x0cA"
    assert data["lamps"] == 7
    assert data["dumps"] == {"0:4": [0x18, 5, 0x19, 7], "0x1F:2": [0, 0]}
    assert data["pauses"] == [{"pc": 9, "cycles": data["pauses"][0]["cycles"], "file": str(adder), "line": 5}]
    # the pc at a halt points past it (ref8 reference, "Clock, halts and the panel"): the halt is the last byte, at 0x12
    assert data["pc"] == 0x13
    # 5 cycles a second on ref8's nominal clock (ref8 reference, "Clock, halts and the panel")
    assert data["sim_seconds"] == pytest.approx(data["cycles"] / 5)


def test_pause_resumes_by_itself_unless_stop_at_pause(capsys, adder):
    _code, full, _ = run_json(capsys, adder)
    code, stopped, _ = run_json(capsys, adder, "--stop-at-pause")
    assert code == 0
    assert stopped["pc"] == 9 and stopped["output"] == "\x0c"
    assert len(stopped["pauses"]) == 1
    assert stopped["cycles"] == full["pauses"][0]["cycles"] < full["cycles"]
    # a pause is reported as a pause, not a halt (before: status "halted", "halt at ...")
    assert stopped["status"] == "paused" and full["status"] == "halted"
    code, text, _ = cli(capsys, "run", adder, "--stop-at-pause")
    assert code == 0
    assert text.splitlines()[0] == f"{adder}: stopped at a pause (--stop-at-pause), pc 0x0009 (pause at {adder}:5)"


def test_pauses_in_included_files_name_their_file(capsys, tmp_path):
    """Before: only ``line 2`` was given, which is a line of neither file."""
    write(tmp_path, "wait.inc", "wait:   nop\n        pause\n        ret\n")
    main = write(tmp_path, "main.asm", "        li sp, 0x100\n        call wait\n        pause\n        halt\n"
                                       '        .include "wait.inc"\n')
    code, data, _ = run_json(capsys, main)
    assert code == 0
    assert [(p["file"], p["line"]) for p in data["pauses"]] == [(str(tmp_path / "wait.inc"), 2), (str(main), 3)]
    code, text, _ = cli(capsys, "run", main)
    assert f"  pauses     2 ({tmp_path / 'wait.inc'}:2, line 3)" in text.splitlines()


def test_cycle_limit_exits_3(capsys, tmp_path):
    loop = write(tmp_path, "loop.asm", "top: jmp top\n")
    code, data, _ = run_json(capsys, loop, "--max-cycles", "1000")
    assert code == 3
    assert data["status"] == "cycle_limit" and data["cycles"] == 1000


def test_text_summary(capsys, adder):
    code, out, err = cli(capsys, "run", adder)
    assert code == 0 and err == ""
    lines = out.splitlines()
    assert lines[0] == f"{adder}: halted, pc 0x0013 (halt at {adder}:11)"
    cycles = json.loads(cli(capsys, "run", adder, "--json")[1])["cycles"]
    assert f"{cycles:,} cycles ≈ {duration_text(cycles / 5)} at 5 Hz" in out
    assert "pauses     1 (line 5)" in out
    assert "r0 0x0C" in out and "x 0x1234" in out
    assert "lamps      00000111 (0x07)" in out
    assert "    | \\x0cA" in out
    assert "warnings   none" in out


def test_summary_lists_warnings_and_dumps(capsys, tmp_path):
    prog = write(tmp_path, "warn.asm", "li r0, 65\nout 9, r0\nin r1, 7\nhalt\n")
    code, out, _ = cli(capsys, "run", prog, "--dump", "0:3")
    assert code == 0
    assert "warnings   2" in out
    assert "1 write to port 9, which has no device" in out
    assert "1 read from port 7, which has no device" in out
    assert "    0x0000  18 41 58" in out


@pytest.mark.parametrize("seconds, text", [
    # the example of ref8 reference, "Headless runs": 41,370 cycles at 5 Hz = 8274 s
    (41_370 / 5, "2 h 17 min 54 s"),
    (0.2, "0.2 s"),
    (4.4, "4.4 s"),
    (60, "1 min 0 s"),
    (86_400 + 3_600 + 61, "1 d 1 h 1 min 1 s"),
])
def test_duration_text(seconds, text):
    assert duration_text(seconds) == text


@pytest.mark.parametrize("hz, text", [(5.0, "5 Hz"), (10.0, "10 Hz"), (2.5, "2.5 Hz"), (1200.0, "1.2 kHz")])
def test_rate_text(hz, text):
    assert rate_text(hz) == text


@given(st.integers(min_value=60, max_value=10**9))
def test_duration_text_adds_back_up(seconds):
    """The parts of a long duration add back up to the seconds (rounded)."""
    sizes = {"d": 86_400, "h": 3_600, "min": 60, "s": 1}
    words = duration_text(seconds).replace(",", "").split()
    assert sum(int(n) * sizes[u] for n, u in zip(words[::2], words[1::2])) == seconds


def test_switches_and_input_text(capsys, tmp_path):
    prog = write(tmp_path, "echo.asm", """\
        in r0, 0        ; switches
        in r1, 1        ; first input byte
        in r2, 1
        in r3, 2        ; more available?
        in r4, 1
        in r5, 1        ; exhausted: 0
        halt
""")
    _code, data, _ = run_json(capsys, prog, "--switches", "0b10100101", "--input-text", "a\\nb")
    regs = data["registers"]
    assert (regs["r0"], regs["r1"], regs["r2"], regs["r3"], regs["r4"], regs["r5"]) == \
        (0b10100101, ord("a"), ord("\n"), 1, ord("b"), 0)


def test_input_file(capsys, tmp_path):
    prog = write(tmp_path, "one.asm", "in r0, 1\nin r1, 1\nhalt\n")
    (tmp_path / "stream.bin").write_bytes(bytes([200, 7]))
    _code, data, _ = run_json(capsys, prog, "--input", tmp_path / "stream.bin", "--switches", "'A'")
    assert (data["registers"]["r0"], data["registers"]["r1"]) == (200, 7)


def test_image_with_and_without_debug_file(capsys, adder, tmp_path):
    assert cli(capsys, "asm", adder)[0] == 0
    image = adder.with_suffix(".hex")
    code, data, _ = run_json(capsys, image)
    assert code == 0 and len(data["pauses"]) == 1 and data["pc"] == 0x13
    asm.debug_path_for(image).unlink()
    code, data, _ = run_json(capsys, image)
    # without the debug file a pause is a halt and ends the run (ref8 reference, "Headless runs")
    assert code == 0 and data["pauses"] == [] and data["pc"] == 9


def test_raw_binary(capsys, adder):
    assert cli(capsys, "asm", adder, "--format", "bin", "--no-debug")[0] == 0
    code, data, _ = run_json(capsys, adder.with_suffix(".bin"))
    assert code == 0 and data["registers"]["r0"] == 12 and data["pauses"] == []


def test_acc12_run(capsys, tmp_path):
    """A 12-bit accumulator machine: registers and flags come from its file."""
    prog = write(tmp_path, "acc.asm", """\
        set 100
        plus forty
        put 1
        pause
        .expect acc == 140
        plus forty
        stop
forty:  .word 40
""")
    code, data, _ = run_json(capsys, "--machine", ACC12, prog, "--switches", "0xFFF")
    assert code == 0
    assert set(data["registers"]) == {"acc"} and set(data["flags"]) == {"zf", "lk"}
    assert data["registers"]["acc"] == 180 and data["lamps"] == 140
    assert len(data["pauses"]) == 1
    # acc12: two pulses per 200 ms turn, 10 Hz nominal
    assert "at 10 Hz" in cli(capsys, "run", "--machine", ACC12, prog)[1]


@settings(max_examples=25, deadline=None)
@given(st.integers(0, 255), st.integers(0, 255))
def test_run_adds_like_python(a, b):
    """8-bit add and its carry/zero flags, checked against Python integers."""
    machine = emu.load_machine("ref8")
    program = asm.assemble_text(f"li r0, {a}\nli r1, {b}\nadd r0, r1\nhalt\n", machine, "sum.asm")
    loaded = load_program_from(program)
    data = report(run_loaded(loaded, machine))
    assert data["registers"]["r0"] == (a + b) % 256
    assert data["flags"]["c"] == int(a + b > 255)
    assert data["flags"]["z"] == int((a + b) % 256 == 0)


def load_program_from(program):
    from emu.runs import LoadedProgram
    return LoadedProgram("sum.asm", "source", program.segments, frozenset(program.pauses))


def test_runner_loads_any_kind(tmp_path, capsys):
    machine = emu.load_machine("ref8")
    source = write(tmp_path, "p.asm", "li r0, 1\npause\nhalt\n")
    cli(capsys, "asm", source)
    for path in (source, source.with_suffix(".hex")):
        loaded = load_program(path, machine)
        assert loaded.segments == [(0, [0x18, 1, 1, 1])]
        assert loaded.pauses == frozenset({2})


def test_progress_stays_silent_when_disabled_or_early():
    from emu.commands import Progress
    with Progress(enabled=False, delay=0) as quiet:
        line = quiet.line("run", 100)
        line.update(50)
        assert quiet.bar is None and line.done == 50
    with Progress(enabled=True, delay=3600) as early:
        early.line("run", 100).update(99)
        assert early.bar is None


@pytest.mark.parametrize("attached", [False, True])
def test_no_progress_bar_when_piped(capsys, tmp_path, monkeypatch, attached):
    """Under capture stdout is no terminal, so the bar is switched off and only the
    summary is printed; the same run at a terminal switches it on."""
    from emu.commands import Progress, terminal_attached
    assert not terminal_attached()
    asked = []

    def recording_progress(enabled, **options):
        asked.append(enabled)
        return Progress(False, **options)
    monkeypatch.setattr("emu.commands.run.Progress", recording_progress)
    if attached:
        monkeypatch.setattr("sys.stdout.isatty", lambda: True, raising=False)
        monkeypatch.setattr("sys.stderr.isatty", lambda: True, raising=False)
    loop = write(tmp_path, "loop.asm", "top: jmp top\n")
    code, out, err = cli(capsys, "run", loop, "--max-cycles", "3000000")
    assert code == 3 and err == "" and out.startswith(f"{loop}: stopped at the cycle limit")
    assert asked == [attached]


def test_run_takes_the_panel_file_and_options_win_over_it(capsys):
    """tickets.panel.toml gives switches 0x82 and three groups; --input-text replaces the groups."""
    code, out, _err = cli(capsys, "run", REF8_PROGRAMS / "tickets.asm", "--json")
    assert code == 0 and "3 groups, 49 passengers, 42140p" in json.loads(out)["output"]
    code, out, _err = cli(capsys, "run", REF8_PROGRAMS / "tickets.asm", "--json", "--input-text", "5\\n")
    output = json.loads(out)["output"]
    assert code == 0 and "return to Far Ness" in output          # switches still from the panel file
    assert "group of 5: 4300p\n1 groups, 5 passengers, 4300p" in output


def test_debug_takes_the_input_stream_from_the_command_line(tmp_path, monkeypatch):
    """The debugger powers on with the toggles and input the options give."""
    seen = {}
    monkeypatch.setattr("emu.debugger.run_repl", lambda session: seen.setdefault("emu", session.emu) and 0)
    monkeypatch.setattr("emu.commands.debug.interactive", lambda: True)
    program = write(tmp_path, "echo.asm", "in r0, 1\nin r1, 0\nhalt\n")
    assert emu.cli.main(["debug", str(program), "--input-text", "A", "--switches", "0x21"]) == 0
    emulator = seen["emu"]
    assert (emulator.switches, emulator.input_bytes) == (0x21, b"A")


@pytest.mark.parametrize("done, total, unit, text", [
    (1_234_567, None, "cycles", "1,234,567 cycles"),
    (1, None, "cycles", "1 cycle"),
    (3, 8, "programs", "3/8 programs"),
])
def test_progress_amount_text(done, total, unit, text):
    from emu.commands import amount_text
    assert amount_text(done, total, unit) == text


def test_progress_rate_text():
    from emu.commands import rate_text_per_second
    assert rate_text_per_second(5_000_000, 2.0, "cycles") == "2,500,000 cycles/s"
    assert rate_text_per_second(10, 0.0, "cycles") == ""


def test_a_run_shows_progress_without_a_total(capsys, monkeypatch, adder):
    """The end of a run is unknown: before the fix its line counted towards the cycle limit."""
    from emu.commands import _progress, run
    asked = []
    real_line = _progress.Progress.line

    def line(self, label, total=None, unit="cycles", remove_when_done=False):
        asked.append((label, total, unit))
        return real_line(self, label, total, unit, remove_when_done)

    monkeypatch.setattr(run.Progress, "line", line)
    assert cli(capsys, "run", adder)[0] == 0
    assert asked == [(str(adder), None, "cycles")]
