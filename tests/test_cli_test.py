"""``relaybench test``: verdicts, failing checks with file:line, JSON, exit statuses."""

from __future__ import annotations

import json

import pytest

from cli_support import ACC12, cli, write

PASSING = """\
        li r0, 3
loop:   dec r0
        pause
        .expect r1 == 0
        jnz loop
        li r2, 'k'
        out 0, r2
        halt
        .expect r0 == 0, z == 1, out == "k", [loop] == 0x70
"""


def test_passing_program(capsys, tmp_path):
    prog = write(tmp_path, "good.asm", PASSING)
    code, out, err = cli(capsys, "test", prog)
    assert code == 0 and err == ""
    lines = out.splitlines()
    # three visits of the pause (one check each) and the final halt (four checks)
    assert lines[0].startswith(f"pass  {prog}  (7 checks at 4 halts, ")
    assert lines[-1] == "1 program: 1 passed, 0 failed"


def test_failing_checks_name_file_line_expected_and_actual(capsys, tmp_path):
    prog = write(tmp_path, "bad.asm", """\
        li r0, 3
loop:   dec r0
        pause
        .expect r0 == 1
        jnz loop
        halt
        .expect r1 != 0, out == "done\\n"
        halt
        .expect r2 == 9
""")
    code, out, _err = cli(capsys, "test", prog)
    assert code == 1
    assert out.splitlines()[1:] == [
        f"      {prog}:4: r0 == 1: expected 1, got 2",
        f"      {prog}:7: r1 != 0: expected anything but 0, got 0",
        f'      {prog}:7: out == "done\\n": expected "done\\n", got ""',
        f"      {prog}:9: r2 == 9: never checked, the run did not halt at address 0x0008",
        "1 program: 0 passed, 1 failed",
    ]
    assert out.startswith(f"FAIL  {prog}")


def test_a_check_failing_on_a_later_visit_says_which(capsys, tmp_path):
    prog = write(tmp_path, "later.asm", "li r0, 2\nl: dec r0\npause\n.expect r0 == 1\njnz l\nhalt\n")
    code, out, _ = cli(capsys, "test", prog)
    assert code == 1
    assert f"{prog}:4: r0 == 1: expected 1, got 0 (at halt 2 there)" in out


def test_cycle_limit_fails(capsys, tmp_path):
    prog = write(tmp_path, "spin.asm", "pause\n.expect r0 == 0\ntop: jmp top\n")
    code, out, _ = cli(capsys, "test", prog, "--max-cycles", "500")
    assert code == 1
    assert "ended at the cycle limit of 500 without reaching a halt" in out


def test_json_verdicts(capsys, tmp_path):
    good = write(tmp_path, "a_good.asm", PASSING)
    bad = write(tmp_path, "b_bad.asm", "halt\n.expect r0 == 5\n")
    code, out, _ = cli(capsys, "test", tmp_path, "--json")
    assert code == 1
    data = json.loads(out)
    assert (data["passed"], data["failed"]) == (1, 1)
    first, second = data["programs"]
    assert first["path"] == str(good) and first["passed"] and first["status"] == "halted"
    assert first["checks_run"] == 7 and first["halts"] == 4
    assert second["path"] == str(bad)
    assert second["failures"] == [{"file": str(bad), "line": 2, "check": "r0 == 5", "op": "==",
                                   "expected": 5, "actual": 0, "visit": 1}]


def test_directory_search_finds_programs_at_any_depth_but_not_includes(capsys, tmp_path):
    (tmp_path / "deeper").mkdir()
    write(tmp_path, "shared.inc", "helper: ret\n")
    write(tmp_path / "deeper", "one.asm", 'call helper\nhalt\n.expect sp == 0\n.include "../shared.inc"\n')
    write(tmp_path, "two.asm", "halt\n.expect pc == 1\n")
    code, out, _ = cli(capsys, "test", tmp_path)
    assert code == 0
    assert [line.split()[1] for line in out.splitlines()[:-1]] == \
        [str(tmp_path / "deeper" / "one.asm"), str(tmp_path / "two.asm")]


def test_no_programs_found(capsys, tmp_path):
    code, _out, err = cli(capsys, "test", tmp_path)
    assert code == 1
    assert err.strip() == f"relaybench: error: no *.asm programs in {tmp_path}"


def test_unloadable_program_fails_with_its_message(capsys, tmp_path):
    prog = write(tmp_path, "typo.asm", "li r9, 1\nhalt\n")
    code, out, _ = cli(capsys, "test", prog)
    assert code == 1
    assert out.splitlines()[:2] == [f"FAIL  {prog}: cannot run it",
                                    f"      {prog}:1:4: error: r9 is not a register of ref8 (r0–r7)"]


def test_panel_file_sets_switches_and_input(capsys, tmp_path):
    prog = write(tmp_path, "panel.asm", "in r0, 0\nin r1, 1\nin r2, 1\nhalt\n"
                                        ".expect r0 == 0x5A, r1 == 'h', r2 == 'i'\n")
    write(tmp_path, "panel.panel.toml", 'switches = 0x5A\ninput = "hi"\n')
    assert cli(capsys, "test", prog)[0] == 0


def test_panel_file_input_from_a_file(capsys, tmp_path):
    prog = write(tmp_path, "bytes.asm", "in r0, 1\nhalt\n.expect r0 == 250\n")
    (tmp_path / "bytes.in").write_bytes(bytes([250]))
    write(tmp_path, "bytes.panel.toml", 'input_file = "bytes.in"\nmax_cycles = 100\n')
    assert cli(capsys, "test", prog)[0] == 0


@pytest.mark.parametrize("panel, message", [
    ("switches = 300\n", "1: error: 'switches' must be an integer 0…255 (the 8 toggles of ref8), not 300"),
    ("# toggles\nspeed = 3\n", "2: error: unknown key 'speed' (expected one of: switches, input, input_file, "
                               "max_cycles, machine, at_halt)"),
    ('input = "a"\ninput_file = "b"\n', "2: error: give 'input' or 'input_file', not both"),
    ("max_cycles = 0\n", "1: error: 'max_cycles' must be a positive integer, not 0"),
    ("switches = \n", "1:12: error: not valid TOML: Invalid value"),
])
def test_bad_panel_file(capsys, tmp_path, panel, message):
    prog = write(tmp_path, "p.asm", "halt\n")
    panel_path = write(tmp_path, "p.panel.toml", panel)
    code, out, _ = cli(capsys, "test", prog)
    assert code == 1
    assert f"{panel_path}:{message}" in out


def test_image_with_debug_file_keeps_its_checks(capsys, tmp_path):
    prog = write(tmp_path, "img.asm", "li r0, 4\npause\n.expect r0 == 4\nhalt\n.expect r0 == 5\n")
    cli(capsys, "asm", prog)
    code, out, _ = cli(capsys, "test", prog.with_suffix(".hex"))
    assert code == 1
    assert f"{prog}:5: r0 == 5: expected 5, got 4" in out


def test_acc12_program(capsys, tmp_path):
    prog = write(tmp_path, "acc.asm", "set 7\nbump\npause\n.expect acc == 8, zf == 0\nstop\n.expect acc == 8\n")
    code, out, _ = cli(capsys, "test", "--machine", ACC12, prog)
    assert code == 0, out
