"""``relaybench clock``: text, JSON and CSV output, warnings and exit statuses."""

import csv
import io
import json
import os
from pathlib import Path

import pytest

from emu.cli import main

REF8_FILE = Path(__file__).parent.parent / "emu" / "machines" / "ref8.toml"
ACC12_FILE = Path(__file__).parent / "machines" / "acc12.toml"


def run(capsys, *argv):
    status = main(["clock", *argv])
    out, err = capsys.readouterr()
    return status, out, err


def usage_error(capsys, *argv):
    with pytest.raises(SystemExit) as caught:
        main(["clock", *argv])
    _out, err = capsys.readouterr()
    assert caught.value.code == 2
    return err


def test_text_report(capsys):
    status, out, err = run(capsys, "--samples", "20000")
    assert status == 0
    lines = out.splitlines()
    assert lines[0] == "ref8 reference relay machine (ref8)"
    assert lines[1] == "nominal, from the phase table: 5 Hz, period 200 ms, duty cycle 50.0%"
    assert any(line.startswith("  A       high      60.0 ms    60.6 ms  stage 1, charging") for line in lines)
    assert any("(hold point)" in line for line in lines)
    assert "20,000 clocks built from parts within tolerance (seed 1, uniform spread, 2 turns each):" in out
    rate = next(line for line in lines if line.startswith("  rate (Hz)"))
    assert len(rate.split()) == 7
    histogram = lines[lines.index("rate (Hz):") + 1:]
    assert len(histogram) == 16 and all(line.rstrip().endswith("%") for line in histogram)


def test_warning_when_pulses_fall_below_the_datapath_minimum(capsys):
    status, out, err = run(capsys, "--json", "--samples", "50000", "--seed", "3")
    report = json.loads(out)
    share = report["monte_carlo"]["below_min_pulse"]
    assert 0 < share < 0.05
    assert err.startswith("relaybench: warning: the shortest high pulse falls below the datapath's "
                          f"minimum of 80 ms in {share:.2%} of built clocks (down to ")
    assert report["warnings"] and report["warnings"][0] in err


def test_json_is_reproducible_and_complete(capsys):
    _s, first, _e = run(capsys, "--json", "--samples", "5000", "--seed", "12")
    _s, again, _e = run(capsys, "--json", "--samples", "5000", "--seed", "12")
    _s, other, _e = run(capsys, "--json", "--samples", "5000", "--seed", "13")
    assert first == again != other
    report = json.loads(first)
    assert report["nominal"] == {"rate_hz": 5.0, "period_ms": 200.0, "turn_ms": 200.0, "duty": 0.5}
    assert [p["name"] for p in report["phases"]] == ["A", "B", "C", "D"]
    assert report["phases"][0]["parts_ms"] == pytest.approx(60.57, abs=0.01)
    figures = report["monte_carlo"]["figures"]
    assert set(figures) == {"rate_hz", "duty", "shortest_high_s", "shortest_low_s", "irregularity"}
    assert set(figures["duty"]["percentiles"]) == {"1", "5", "50", "95", "99"}


def test_csv_file_has_one_row_per_built_clock(capsys, tmp_path):
    target = tmp_path / "clocks.csv"
    status, out, _err = run(capsys, "--machine", str(ACC12_FILE), "--samples", "3000", "--csv", str(target))
    assert status == 0 and out.startswith("acc12 accumulator test machine (acc12)")
    rows = list(csv.DictReader(target.open()))
    assert len(rows) == 3000
    assert list(rows[0]) == ["rate_hz", "duty", "shortest_high_s", "shortest_low_s", "irregularity",
                             "phase_P1_s", "phase_G1_s", "phase_T1_s", "phase_P2_s", "phase_G2_s"]
    assert 8 < float(rows[0]["rate_hz"]) < 12
    assert os.listdir(tmp_path) == ["clocks.csv"]


def test_csv_to_standard_output_alone(capsys):
    status, out, _err = run(capsys, "--samples", "100", "--csv", "-")
    assert status == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0][0] == "rate_hz" and len(rows) == 101


@pytest.mark.parametrize("argv, message", [
    (["--samples", "0"], "argument --samples: must be 1…5,000,000, not 0"),
    (["--samples", "many"], "argument --samples: 'many' is not a number (write it as 42, 0x2A, 0b101010 or 'A')"),
    (["--seed", "-4"], "argument --seed: must be a seed of 0 or more, not -4"),
    (["--json", "--csv", "-"], "--json and --csv - both want standard output; give --csv a file name"),
    (["--colour"], "unrecognized arguments: --colour"),
])
def test_bad_command_lines_get_usage(capsys, argv, message):
    err = usage_error(capsys, *argv)
    assert err.startswith("usage: ")
    assert err.rstrip().endswith(message)


def test_missing_machine_file(capsys, tmp_path):
    status, out, err = run(capsys, "--machine", str(tmp_path / "nowhere.toml"))
    assert status == 1 and out == ""
    assert err.startswith(f"{tmp_path / 'nowhere.toml'}: error: ") and "no such machine file" in err
    assert len(err.splitlines()) == 1


def test_bad_timing_section_names_the_key(capsys, tmp_path):
    machine = tmp_path / "bent.toml"
    machine.write_text(REF8_FILE.read_text().replace("supply_v = 24.0", "supply_v = 0"))
    status, _out, err = run(capsys, "--machine", str(machine))
    assert status == 1
    assert err == f"{machine}:460: error: [timing]: 'supply_v' must be above zero, not 0\n"


def test_machine_without_timing(capsys, tmp_path):
    text = REF8_FILE.read_text()
    machine = tmp_path / "plain.toml"
    machine.write_text(text[:text.index("[timing]")].rsplit("# -----", 1)[0])
    status, out, _err = run(capsys, "--machine", str(machine))
    assert status == 0
    assert out.rstrip().endswith("no [timing] section: describe the clock's parts to see how their tolerances spread it")
    status, out, _err = run(capsys, "--machine", str(machine), "--json")
    assert json.loads(out)["monte_carlo"] is None
    status, _out, err = run(capsys, "--machine", str(machine), "--csv", str(tmp_path / "x.csv"))
    assert status == 1 and "no [timing] section" in err


def test_unwritable_csv(capsys, tmp_path):
    status, _out, err = run(capsys, "--samples", "10", "--csv", str(tmp_path / "missing" / "x.csv"))
    assert status == 1
    assert err.startswith(f"relaybench: error: cannot write {tmp_path / 'missing' / 'x.csv'}: ")
