"""The timing tools where a builder meets them: ``run --vcd/--wear/--clock-spread``
and the debugger's ``waves`` and ``beat`` commands."""

from __future__ import annotations

import json

import vcdvcd

from emu import load_machine
from emu.debugger import Session, load_view

from cli_support import ACC12, REF8_PROGRAMS, cli, write

FARES = REF8_PROGRAMS / "fares.asm"


def _rising_edges(path, name) -> int:
    """Rising edges of one signal, read back with vcdvcd (an independent VCD parser from PyPI)."""
    dump = vcdvcd.VCDVCD(str(path))
    signal = next(s for s in dump.signals if s.endswith("." + name) or s == name)
    values = [v for _t, v in dump[signal].tv]
    return sum(1 for a, b in zip(values, values[1:]) if a == "0" and b == "1")


def test_run_vcd_holds_one_rising_clock_edge_per_cycle(tmp_path, capsys):
    program = write(tmp_path, "count.asm", "li r0, 0\nloop: inc r0\ncmp r0, 5\njnz loop\nhalt\n")
    code, out, _err = cli(capsys, "run", program, "--vcd", tmp_path / "count.vcd", "--json")
    assert code == 0
    report = json.loads(out)
    assert _rising_edges(tmp_path / "count.vcd", "clock") == report["cycles"]


def test_run_wear_reports_counts_in_json_and_text(tmp_path, capsys):
    program = write(tmp_path, "count.asm", "li r0, 0\nloop: inc r0\ncmp r0, 5\njnz loop\nhalt\n")
    code, out, _err = cli(capsys, "run", program, "--wear", "--json")
    assert code == 0
    wear = json.loads(out)["wear"]
    assert wear["pulses"] == json.loads(out)["cycles"]
    halt = next(r for r in wear["relays"] if r["relay"] == "halt")
    assert halt["operations"] == 1
    code, out, _err = cli(capsys, "run", program, "--wear")
    assert "wears first:" in out


def test_clock_spread_changes_time_but_not_results(capsys):
    code, even, _ = cli(capsys, "run", FARES, "--json")
    code2, spread, _ = cli(capsys, "run", FARES, "--json", "--clock-spread", "11")
    assert code == code2 == 0
    even, spread = json.loads(even), json.loads(spread)
    for key in ("cycles", "instructions", "registers", "flags", "output", "pc"):
        assert even[key] == spread[key]
    assert even["sim_seconds"] == even["cycles"] / 5
    assert spread["sim_seconds"] != even["sim_seconds"]
    code, text, _ = cli(capsys, "run", FARES, "--clock-spread", "11")
    assert "on the spread clock (seed 11)" in text.splitlines()[1]
    assert "the time above is for the spread clock" in text


def test_timing_options_refuse_bad_values(tmp_path, capsys):
    code, _out, err = cli(capsys, "run", FARES, "--clock-spread", "-3")
    assert code == 2 and "must be a seed of 0 or more, not -3" in err
    code, _out, err = cli(capsys, "run", FARES, "--vcd", tmp_path / "missing" / "w.vcd")
    assert code == 2 and "argument --vcd: cannot write" in err and "No such file or directory" in err
    code, _out, err = cli(capsys, "run", FARES, "--vcd", "/proc/w.vcd")
    assert code == 2 and "argument --vcd: cannot write '/proc/w.vcd'" in err


def test_debugger_records_waves_and_beats_irregularly(tmp_path):
    machine = load_machine("ref8")
    session = Session(machine, load_view(str(FARES), machine))
    assert "irregular clock" in session.execute("beat 4")
    assert "recording a waveform" in session.execute(f"waves {tmp_path / 'd.vcd'}")
    session.execute("go 300")
    assert "waveform written" in session.execute("waves off")
    assert _rising_edges(tmp_path / "d.vcd", "clock") == session.emu.cycles
    assert session.emu.sim_seconds != session.emu.cycles / machine.nominal_hz
    assert "evenly" in session.execute("beat even")
    assert "no waveform is being recorded" in session.execute("waves off")


def test_beat_on_a_machine_without_parts_says_why(tmp_path):
    text = open(ACC12).read()
    plain = write(tmp_path, "plain.toml", text.split("[timing]")[0])
    session = Session(load_machine(plain))
    assert "no irregular clock for acc12" in session.execute("beat 1")


def test_vcd_and_waves_refuse_a_folder(tmp_path, capsys):
    code, _out, err = cli(capsys, "run", FARES, "--vcd", tmp_path)
    assert code == 2 and f"argument --vcd: cannot write '{tmp_path}' (Is a directory)" in err
    machine = load_machine("ref8")
    session = Session(machine, load_view(str(FARES), machine))
    assert session.execute(f"waves {tmp_path}") == f"error: cannot write {tmp_path}: Is a directory"


def test_scope_follows_the_run_on_an_irregular_clock():
    machine = load_machine("ref8")
    session = Session(machine, load_view(str(FARES), machine))
    session.execute("go 100")
    session.execute("beat 3")
    session.execute("go 20")
    assert session.emu.cycles == 120
    assert session.execute("scope 4").splitlines()[0] == "cycles 117 to 120"
