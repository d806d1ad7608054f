"""``relaybench sweep``: inputs, outputs, checks, files, errors, interruption and a dask cluster.

The reference for the sweeps' results is Python's own integer arithmetic
(the language reference: ``*``, ``+`` and ``&`` on unbounded integers), not
the emulator; the files written are read back with the standard library's
``csv`` and ``json`` readers.
"""

from __future__ import annotations

import csv
import json
import os
import signal
import subprocess
import sys
import time

from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from emu import load_machine
from emu.runs import (SweepPlan, SweepRows, chunk_bounds, load_program, parse_input, parse_output, run_chunk,
                      run_loaded, start_emulator, sweep_locally)

from cli_support import ACC12, REF8_PROGRAMS, ROOT, cli, write

TOLLS = REF8_PROGRAMS / "tolls.asm"


def _rows(text: str) -> list[list[str]]:
    """The table printed without --out, as lists of cells (header first), summary lines left out."""
    lines = text.splitlines()
    return [line.split() for line in lines[:next(k for k, line in enumerate(lines) if ": " in line)]]


def test_every_pair_of_a_range_and_a_list_is_run_and_checked(capsys):
    code, out, err = cli(capsys, "sweep", TOLLS, "--each", "load=0..5", "--each", "rate=1,17,255",
                         "--collect", "toll:2", "--check", "toll == load * rate", "--workers", "1")
    assert (code, err) == (0, "")
    rows = _rows(out)
    assert rows[0] == ["load", "rate", "toll", "ok", "status"]
    assert [(int(a), int(b), int(t)) for a, b, t, _ok, _s in rows[1:]] == \
        [(a, b, a * b) for a in range(6) for b in (1, 17, 255)]        # Python's product, first input slowest
    assert "18 runs in" in out and "18 passed, 0 failed (toll == load * rate)" in out


def test_a_failing_check_lists_the_rows_and_exits_1(capsys):
    code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=254,255", "--each", "rate=2..3",
                          "--collect", "toll:2", "--check", "toll < 512", "--workers", "1")
    assert code == 1
    assert "2 passed, 2 failed (toll < 512)" in out
    assert "fail       load=255, rate=3, toll=765" in out and "fail       load=254, rate=3, toll=762" in out
    assert "load=254, rate=2" not in out


def test_an_expected_column_is_compared_with_its_output(capsys):
    """--expect adds the output if it was not collected; toll:1 is the low byte only."""
    code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=15,16", "--each", "rate=16,17",
                          "--expect", "toll=(load * rate) & 0xFF", "--workers", "1")
    assert code == 0, out
    code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=15,16", "--each", "rate=16,17",
                          "--expect", "toll=load * rate", "--workers", "1")
    assert code == 1
    assert "2 passed, 2 failed (toll == load * rate)" in out     # 15 * 16 and 15 * 17 fit the byte
    assert "fail       load=16, rate=17, toll=16 (toll should be 272)" in out
    code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=15,16", "--each", "rate=16,17",
                          "--collect", "toll:2", "--expect", "toll=load * rate", "--workers", "1")
    assert code == 0 and _rows(out)[0] == ["load", "rate", "toll", "ok", "status"]   # the collected toll:2


def test_registers_flags_toggles_and_input_text_are_inputs_and_outputs(tmp_path, capsys):
    program = write(tmp_path, "mix.asm", "        add r0, r1\n        in r2, 0\n        out 1, r2\n"
                                         "        in r3, 1\n        out 0, r3\n        halt\n")
    code, out, _err = cli(capsys, "sweep", program, "--each", "r0=200,255", "--each", "r1=1,56",
                          "--each", "toggles=0x0F", "--each", "input=a|Z", "--collect", "r0,c,lamps,console",
                          "--check", "r0_after == (r0 + r1) & 0xFF", "--check", "c == ((r0 + r1) >> 8)",
                          "--check", "lamps == toggles", "--check", "console == chr(ord(input))",
                          "--workers", "1")
    assert code == 0, out
    rows = _rows(out)
    assert rows[0] == ["r0", "r1", "toggles", "input", "r0_after", "c", "lamps", "console", "ok", "status"]
    assert rows[1] == ["200", "1", "15", "a", "201", "0", "15", "a", "yes", "halted"]
    assert rows[-1] == ["255", "56", "15", "Z", "55", "1", "15", "Z", "yes", "halted"]


def test_values_drawn_from_a_range_follow_the_seed():
    machine = load_machine("ref8")
    program = load_program(TOLLS, machine)
    drawn = [parse_input("load=0..255~5", machine, program, seed).values for seed in (3, 3, 4)]
    assert drawn[0] == drawn[1] != drawn[2]
    assert len(set(drawn[0])) == 5 and all(0 <= v <= 255 for v in drawn[0])
    rows = SweepRows([parse_input("load=0..99", machine, program, 0),
                      parse_input("rate=0..99", machine, program, 0)], draws=50, seed=9)
    picked = [rows[k] for k in range(len(rows))]
    again = SweepRows(rows_inputs := [parse_input("load=0..99", machine, program, 0),
                                      parse_input("rate=0..99", machine, program, 0)], draws=50, seed=9)
    assert len(rows_inputs) == 2 and picked == [again[k] for k in range(50)]
    assert len(set(picked)) == 50


def test_drawn_rows_are_reproducible_from_the_command_line(capsys):
    def sweep(seed):
        return cli(capsys, "sweep", TOLLS, "--each", "load=0..255", "--each", "rate=0..255", "--draw", "6",
                   "--seed", seed, "--collect", "toll:2", "--check", "toll == load * rate", "--workers", "1")
    first, second, other = sweep(11), sweep(11), sweep(13)
    assert first[0] == other[0] == 0
    assert _rows(first[1]) == _rows(second[1]) != _rows(other[1])
    assert len(_rows(first[1])) == 7 and len({tuple(row[:2]) for row in _rows(first[1])[1:]}) == 6


def test_csv_and_json_files_hold_every_row(tmp_path, capsys):
    table, data = tmp_path / "tolls.csv", tmp_path / "tolls.json"
    for path in (table, data):
        code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=0..15", "--each", "rate=0..15",
                              "--collect", "toll:2,cycles", "--check", "toll == load * rate", "--out", path)
        assert code == 0 and f"-> {path}" in out and out.startswith(f"{TOLLS}: 256 runs")
    with open(table, newline="") as stream:
        rows = list(csv.DictReader(stream))
    assert len(rows) == 256 and rows[17] == {"load": "1", "rate": "1", "toll": "1", "cycles": rows[17]["cycles"],
                                             "ok": "yes", "status": "halted"}
    facts = json.loads(data.read_text())
    assert facts["columns"] == ["load", "rate", "toll", "cycles", "ok", "status"]
    assert facts["checks"] == ["toll == load * rate"]
    assert [(r["load"], r["rate"], r["toll"]) for r in facts["rows"]] == \
        [(a, b, a * b) for a in range(16) for b in range(16)]
    assert all(r["ok"] is True and int(r["cycles"]) == int(c["cycles"]) for r, c in zip(facts["rows"], rows))


def test_many_workers_give_the_rows_of_one(capsys):
    argv = ["sweep", TOLLS, "--each", "load=0..31", "--each", "rate=200..215", "--collect", "toll:2,cycles"]
    one = cli(capsys, *argv, "--workers", "1")
    two = cli(capsys, *argv, "--workers", "2")
    assert one[0] == two[0] == 0
    assert _rows(one[1]) == _rows(two[1]) and len(_rows(one[1])) == 513
    assert "on 2 workers" in two[1]


def test_a_run_that_does_not_halt_reaches_its_limit_and_exits_3(tmp_path, capsys):
    program = write(tmp_path, "loop.asm", "top:    dec r0\n        jnz top\n        halt\n")
    code, out, _err = cli(capsys, "sweep", program, "--each", "r0=1,0", "--collect", "cycles,status",
                          "--max-cycles", "300", "--workers", "1")
    assert code == 3
    rows = _rows(out)
    assert rows[0] == ["r0", "cycles", "status"]          # status collected: still one column
    assert rows[1][-1] == "halted" and rows[2] == ["0", "300", "cycle_limit"]
    assert "1 run reached the cycle limit (300 cycles)" in out


def test_another_machine(tmp_path, capsys):
    program = write(tmp_path, "twice.asm", "        load n\n        twice\n        store n\n        stop\n"
                                           "n:      .word 0\n")
    code, out, _err = cli(capsys, "sweep", program, "--machine", ACC12, "--each", "n=0..4095~20",
                          "--collect", "n,lk", "--check", "n_after == (2 * n) & 0xFFF", "--check",
                          "lk == (n >> 11)", "--workers", "1")
    assert code == 0, out
    assert "20 passed, 0 failed" in out


@pytest.mark.parametrize("argv, message", [
    (["--each", "lod=1"], "argument --each: 'lod' is no input of this sweep"),
    (["--each", "load=9..2"], "argument --each: 'load': the range 9..2 runs backwards (2 is below 9)"),
    (["--each", "load=256"], "argument --each: 'load': 256 is out of range (0…255)"),
    (["--each", "load=0..9~11"], "argument --each: 'load': 0..9~11 draws 11 values from a range of 10"),
    (["--each", "load=1x"], "argument --each: 'load': '1x' is not a number"),
    (["--each", "load"], "argument --each: 'load' is not NAME=VALUES"),
    (["--each", "LAMPS=1"], "argument --each: 'LAMPS' is a constant of the program (= 1), not a label"),
    (["--each", "load=1", "--each", "load=2"], "argument --each: an input is named twice (load, load)"),
    (["--each", "load=1", "--collect", "tol"], "argument --collect: 'tol' is no output of this sweep"),
    (["--each", "load=1", "--collect", "toll:9"], "a label's value spans 1 to 8 words, not 9"),
    (["--each", "load=1", "--check", "load =="], "argument --check: invalid syntax\n    load ==\n           ^"),
    (["--each", "load=1", "--check", "speed > 1"], "argument --check: 'speed' is not a column of this sweep"),
    (["--each", "load=1", "--collect", "toll,cycles,toll"], "argument --collect: an output is named twice (toll)"),
    (["--each", "load=1", "--check", "load.__class__"], "argument --check: '.__class__' is not allowed"),
    (["--each", "load=1", "--check", "[x for x in load]"], "listcomp is not allowed in a check"),
    (["--each", "load=1", "--expect", "toll"], "argument --expect: 'toll' is not NAME=EXPR"),
    (["--each", "load=1..3", "--draw", "4"], "argument --draw: 4 rows asked, but the inputs make only 3"),
    (["--each", "load=1", "--out", "rows.txt"], "argument --out: 'rows.txt' must end in .csv or .json"),
    ([], "give at least one --each NAME=VALUES"),
    (["--each", "load=1", "--workers", "0"], "argument --workers: must be a positive number of worker processes, not 0"),
    (["--each", "load=1", "--draw", "0"], "argument --draw: must be a positive number of rows, not 0"),
])
def test_bad_options_are_usage_errors(argv, message, capsys):
    code, out, err = cli(capsys, "sweep", TOLLS, *argv)
    assert code == 2 and out == ""
    assert message in err and "Traceback" not in err


def test_labels_of_an_image_come_from_its_debug_file(tmp_path, capsys):
    image = tmp_path / "tolls.hex"
    assert cli(capsys, "asm", TOLLS, "-o", image, "--format", "hex")[0] == 0
    code, out, _err = cli(capsys, "sweep", image, "--each", "load=3,200", "--each", "rate=5",
                          "--collect", "toll:2,console", "--check", "toll == load * rate", "--workers", "1")
    assert code == 0 and _rows(out)[2] == ["200", "5", "1000", "toll", "1000p\\n", "yes", "halted"]
    (tmp_path / "tolls.dbg.json").unlink()
    code, _out, err = cli(capsys, "sweep", image, "--each", "load=3")
    assert code == 2 and "(labels: none: the image has no debug file beside it)" in err


def test_a_bad_program_is_located(tmp_path, capsys):
    program = write(tmp_path, "bad.asm", "        ld r0, [nowhere]\n        halt\n")
    code, _out, err = cli(capsys, "sweep", program, "--each", "r1=1")
    assert code == 1 and f"{program}:1:" in err and "undefined label 'nowhere'" in err


def test_a_row_whose_check_raises_fails_alone_and_says_why(capsys):
    code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=0..2", "--each", "rate=1",
                          "--check", "rate // load >= 0", "--workers", "1")
    assert code == 1 and "2 passed, 1 failed" in out
    assert "fail       load=0, rate=1 ('rate // load >= 0' raised ZeroDivisionError: " in out


def test_a_run_that_warns_does_not_pass_whatever_its_checks_say(tmp_path, capsys):
    """As in ``relaybench test``: a read past the end of the input is damaged input, not a result."""
    program = write(tmp_path, "pair.asm", "        in r0, 1\n        in r1, 1\n        halt\n")
    code, out, _err = cli(capsys, "sweep", program, "--each", "input=A|AB", "--collect", "r0,r1",
                          "--check", "r0 == 65", "--workers", "1")
    assert code == 1
    warning = "1 read past the end of the input stream (1 byte), answered with 0"
    assert _rows(out)[0] == ["input", "r0", "r1", "ok", "status", "warnings"]
    assert out.splitlines()[1].split()[:5] == ["A", "65", "0", "no", "halted"] and warning in out.splitlines()[1]
    assert out.splitlines()[2].split() == ["AB", "65", "66", "yes", "halted"]
    assert "1 passed, 0 failed (r0 == 65)" in out and f"1 run warned and did not pass (first: {warning})" in out
    assert f"fail       input=A, r0=65, r1=0 ({warning})" in out


def test_a_check_collects_the_outputs_it_names_and_status_is_one_column(capsys):
    code, out, _err = cli(capsys, "sweep", TOLLS, "--each", "load=2,3", "--each", "rate=5",
                          "--check", "toll == load * rate and status == 'halted'", "--collect", "status")
    assert code == 0, out
    assert _rows(out)[0] == ["load", "rate", "status", "toll", "ok"]
    assert [row[3] for row in _rows(out)[1:]] == ["10", "15"]      # toll:1, Python's product


def test_few_long_runs_are_shared_among_the_workers_and_a_long_run_ticks(tmp_path):
    """Four rows on two workers are four chunks; a long run calls its chunk's tick as it goes
    (about every 100,000 cycles), so a progress line can show before the first run ends."""
    assert chunk_bounds(4, 2) == [(0, 1), (1, 2), (2, 3), (3, 4)]
    assert chunk_bounds(65536, 2)[0] == (0, 1024)
    machine = load_machine("ref8")
    wait = write(tmp_path, "wait.asm", "        ld r1, [rounds]\nagain:  inc r0\n        jnz again\n"
                                       "        dec r1\n        jnz again\n        halt\nrounds: .byte 1\n")
    program = load_program(wait, machine)
    plan = SweepPlan.made(machine, Path(machine.path).read_text(encoding="utf-8"), program, switches=0,
                          input_bytes=b"", inputs=(parse_input("rounds=1,255", machine, program, 0),),
                          outputs=(parse_output("cycles", machine, program, set()),))
    ticks = []
    rows = run_chunk(plan, 0, 2, tick=lambda: ticks.append(1))
    short, long = rows[0][1][0], rows[1][1][0]
    assert short < 100_000 < long and len(ticks) == long // 100_000


def test_ctrl_c_stops_the_sweep_and_writes_nothing(tmp_path):
    """SIGINT once the sweep runs (the FIFO tells when the options were read): 130, no file."""
    forever = write(tmp_path, "forever.asm", "top: inc r0\njmp top\n")
    fifo, table = tmp_path / "input", tmp_path / "rows.csv"
    os.mkfifo(fifo)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    process = subprocess.Popen([sys.executable, "-m", "emu.cli", "sweep", forever, "--each", "r1=0..255",
                                "--input", fifo, "--max-cycles", "10000000000", "--out", table, "--workers", "2"],
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
    with open(fifo, "w") as stream:
        stream.write("go")
    time.sleep(1.0)
    process.send_signal(signal.SIGINT)
    out, err = process.communicate(timeout=60)
    assert process.returncode == 130
    assert out == "" and "Traceback" not in err
    assert err.startswith("relaybench: sweep interrupted before all 256 runs ended; no results written")
    assert sorted(tmp_path.iterdir()) == sorted([forever, fifo])      # no table, no temporary left


try:
    import distributed
except ImportError:
    distributed = None
needs_dask = pytest.mark.skipif(distributed is None, reason="dask.distributed is not installed (the 'cluster' extra)")


@needs_dask
@pytest.mark.parametrize("processes", [False, True], ids=["threads", "processes"])
def test_a_local_dask_cluster_gives_the_rows_of_a_local_sweep(processes, tmp_path, capsys):
    """A cluster started here, on this machine only; with processes, its worker builds the
    machine from the text the plan carries, as a worker on another computer would."""
    argv = ["sweep", TOLLS, "--each", "load=0..15", "--each", "rate=240..255", "--collect", "toll:2,cycles",
            "--check", "toll == load * rate"]
    local = cli(capsys, *argv, "--workers", "1")
    with distributed.LocalCluster(processes=processes, n_workers=2 if not processes else 1, threads_per_worker=1,
                                  dashboard_address=None, **({"host": "127.0.0.1"} if processes else {})) as cluster:
        remote = cli(capsys, *argv, "--cluster", cluster.scheduler_address)
    assert local[0] == remote[0] == 0
    assert _rows(remote[1]) == _rows(local[1]) and len(_rows(local[1])) == 257
    assert f"on the cluster at {cluster.scheduler_address}" in remote[1]


@needs_dask
def test_an_unreachable_cluster_is_an_error(capsys):
    code, _out, err = cli(capsys, "sweep", TOLLS, "--each", "load=1", "--cluster", "tcp://127.0.0.1:9")
    assert code == 1 and "cannot reach the cluster at tcp://127.0.0.1:9" in err and "Traceback" not in err


@settings(max_examples=15, deadline=None)
@given(loads=st.lists(st.integers(0, 255), min_size=1, max_size=4, unique=True),
       rates=st.lists(st.integers(0, 255), min_size=1, max_size=4, unique=True))
def test_each_row_is_what_a_new_emulator_gives_for_its_inputs(loads, rates):
    """A worker reuses one emulator; each row must still be a run from power-on."""
    machine = load_machine("ref8")
    program = load_program(TOLLS, machine)
    inputs = (parse_input(f"load={','.join(map(str, loads))}", machine, program, 0),
              parse_input(f"rate={','.join(map(str, rates))}", machine, program, 0))
    outputs = tuple(parse_output(name, machine, program, set()) for name in ("toll:2", "cycles", "console"))
    plan = SweepPlan.made(machine, Path(machine.path).read_text(encoding="utf-8"), program, switches=0,
                          input_bytes=b"", inputs=inputs, outputs=outputs)
    rows = sweep_locally(plan, 1)
    for (values, found, ok, status, warnings), (load, rate) in zip(rows, [(a, b) for a in loads for b in rates]):
        emulator = start_emulator(program, machine)
        emulator.memory[program.labels["load"]], emulator.memory[program.labels["rate"]] = load, rate
        fresh = run_loaded(program, machine, emulator=emulator)
        toll = emulator.memory[program.labels["toll"]] | emulator.memory[program.labels["toll"] + 1] << 8
        assert values == (load, rate) and ok and status == fresh.status == "halted" and warnings == ()
        assert found == (toll, emulator.cycles, emulator.output.decode("latin-1"))
        assert toll == load * rate      # Python's product


@needs_dask
def test_a_cluster_without_workers_is_an_error(capsys, monkeypatch):
    import emu.commands.sweep as sweep_command
    monkeypatch.setattr(sweep_command, "CLUSTER_WORKER_WAIT", 0.5)
    with distributed.LocalCluster(processes=False, n_workers=0, dashboard_address=None) as cluster:
        code, _out, err = cli(capsys, "sweep", TOLLS, "--each", "load=1", "--cluster", cluster.scheduler_address)
    assert code == 1 and "has no workers (waited 0.5 s for one)" in err and "Traceback" not in err
