"""Which machine a program runs on: --machine, then the program's .machine, then its panel
file, then ref8 — for run, test, asm, dis and debug, with located errors for unknown names."""

from __future__ import annotations

import io
import json
import shutil
from pathlib import Path

import pytest

from cli_support import cli

LINK8 = Path(__file__).parent / "machines" / "link8.toml"

ON_LINK8 = "        set 7\n        show\n        halt\n        .expect lamps == 7\n"
ON_REF8 = "        li r0, 5\n        halt\n        .expect r0 == 5\n"
ON_BOTH = "        halt\n        .expect lamps == 0\n"      # halt is 00000001 on both machines


@pytest.fixture
def bench(tmp_path, monkeypatch):
    """A machine file in machines/, programs in progs/, working in the folder above both.

    So ``../machines/link8.toml`` is found only relative to a program, and
    ``machines/link8.toml`` only relative to the working folder.
    """
    (tmp_path / "machines").mkdir()
    shutil.copy(LINK8, tmp_path / "machines" / "link8.toml")
    (tmp_path / "progs").mkdir()
    monkeypatch.chdir(tmp_path)
    return tmp_path


def program(bench: Path, name: str, text: str, panel: str | None = None) -> Path:
    path = bench / "progs" / name
    path.write_text(text, encoding="utf-8")
    if panel is not None:
        path.with_name(path.stem + ".panel.toml").write_text(panel, encoding="utf-8")
    return path


def machine_of(capsys, *argv) -> str:
    code, out, err = cli(capsys, "test", "--json", *argv)
    assert code == 0, out + err
    return json.loads(out)["programs"][0]["machine"]


def test_the_program_names_its_machine_by_a_path_relative_to_itself(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    code, out, _err = cli(capsys, "run", prog, "--json")
    assert code == 0 and json.loads(out)["lamps"] == 7
    assert machine_of(capsys, prog) == "link8"


def test_a_panel_file_names_the_machine_by_a_path_relative_to_itself(capsys, bench):
    prog = program(bench, "lamp.asm", ON_LINK8, panel='machine = "../machines/link8.toml"\n')
    assert machine_of(capsys, prog) == "link8"


def test_a_shipped_name_is_taken_before_a_file_of_that_name(capsys, bench):
    (bench / "progs" / "ref8").write_text("not a machine", encoding="utf-8")
    prog = program(bench, "five.asm", '.machine "ref8"\n' + ON_REF8)
    assert machine_of(capsys, prog) == "ref8"


def test_the_order_command_line_then_program_then_panel_then_ref8(capsys, bench):
    link = "../machines/link8.toml"
    both = program(bench, "both.asm", f'.machine "{link}"\n' + ON_BOTH, panel='machine = "ref8"\n')
    assert machine_of(capsys, both) == "link8"                        # the program over the panel file
    assert machine_of(capsys, both, "--machine", "ref8") == "ref8"    # the command line over both
    paneled = program(bench, "paneled.asm", ON_BOTH, panel=f'machine = "{link}"\n')
    assert machine_of(capsys, paneled) == "link8"
    plain = program(bench, "plain.asm", ON_BOTH)
    assert machine_of(capsys, plain) == "ref8"


def test_a_folder_of_programs_for_two_machines_needs_no_option(capsys, bench):
    program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    program(bench, "five.asm", ON_REF8)
    code, out, _err = cli(capsys, "test", bench / "progs")
    assert code == 0, out
    lines = out.splitlines()
    assert lines[0].startswith(f"pass  {bench / 'progs' / 'five.asm'} on ref8  (")
    assert lines[1].startswith(f"pass  {bench / 'progs' / 'lamp.asm'} on link8  (")
    assert lines[2] == "2 programs: 2 passed, 0 failed"


def test_one_machine_for_all_is_not_named(capsys, bench):
    program(bench, "five.asm", ON_REF8)
    program(bench, "again.asm", ON_REF8)
    code, out, _err = cli(capsys, "test", bench / "progs")
    assert code == 0 and " on ref8" not in out


def test_an_unknown_machine_in_a_directive_is_a_located_error(capsys, bench):
    prog = program(bench, "typo.asm", '; for the link machine\n.machine  "lnk8"\n' + ON_LINK8)
    code, _out, err = cli(capsys, "run", prog)
    assert code == 1
    lines = err.splitlines()
    assert lines[0] == (f"{prog}:2:11: error: no machine 'lnk8': not a shipped machine (ref8, skep) nor a machine "
                        f"file (a path is relative to the program file)")
    assert lines[1:] == ['    .machine  "lnk8"', "              ^"]


def test_an_unknown_machine_in_a_panel_file_names_its_line(capsys, bench):
    prog = program(bench, "typo.asm", ON_REF8, panel='switches = 3\nmachine = "machines/link8.toml"\n')
    code, out, _err = cli(capsys, "test", prog)
    assert code == 1
    panel = prog.with_name("typo.panel.toml")
    assert (f"      {panel}:2: error: 'machine': no machine 'machines/link8.toml': not a shipped machine "
            f"(ref8, skep) nor a machine file (a path is relative to the panel file)") in out.splitlines()


def test_a_panel_machine_that_is_not_a_string_is_refused(capsys, bench):
    prog = program(bench, "bad.asm", ON_REF8, panel="machine = 8\n")
    code, _out, err = cli(capsys, "run", prog)
    assert code == 1 and f"{prog.with_name('bad.panel.toml')}:1: error: 'machine' must be a machine name" in err


def test_machine_must_be_the_first_statement(capsys, bench):
    prog = program(bench, "late.asm", ON_REF8 + '.machine "ref8"\n')
    code, _out, err = cli(capsys, "asm", prog, "--check")
    assert code == 1
    assert err.startswith(f"{prog}:4:1: error: .machine must be the first statement of the program file")


def test_asm_and_dis_follow_the_program_and_its_panel_file(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8,
                   panel='machine = "../machines/link8.toml"\n')
    code, out, err = cli(capsys, "asm", prog)
    assert code == 0, err
    image = prog.with_suffix(".hex")
    assert image.with_name("lamp.panel.toml").exists()
    code, out, err = cli(capsys, "dis", image)
    assert code == 0, err
    assert "for link8" in out.splitlines()[0]
    assert "set 7" in out and "show" in out


def test_debug_follows_the_program(capsys, bench, monkeypatch):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    monkeypatch.setattr("sys.stdin", io.StringIO("registers\n"))
    code, out, err = cli(capsys, "debug", prog)
    assert code == 0, err
    assert "lr" in out and "r0" not in out


def test_an_image_finds_its_machine_file_through_its_debug_file(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    (bench / "images").mkdir()
    image = bench / "images" / "lamp.hex"
    code, _out, err = cli(capsys, "asm", prog, "-o", image)
    assert code == 0, err
    recorded = json.loads(image.with_name("lamp.dbg.json").read_text(encoding="utf-8"))
    assert (recorded["machine"], recorded["machine_file"]) == ("link8", "../machines/link8.toml")
    code, out, err = cli(capsys, "dis", image)
    assert code == 0, err
    assert out.splitlines()[0].endswith("for link8") and "set 7" in out
    code, out, err = cli(capsys, "run", image, "--json")
    assert code == 0, err
    assert json.loads(out)["lamps"] == 7


def test_a_shipped_machine_is_recorded_by_name_alone(capsys, bench):
    prog = program(bench, "five.asm", ON_REF8)
    code, _out, err = cli(capsys, "asm", prog)
    assert code == 0, err
    recorded = json.loads(prog.with_suffix(".dbg.json").read_text(encoding="utf-8"))
    assert (recorded["machine"], recorded["machine_file"]) == ("ref8", None)


def test_an_image_whose_machine_file_is_gone_says_so_and_suggests_the_option(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    code, _out, err = cli(capsys, "asm", prog)
    assert code == 0, err
    (bench / "machines" / "link8.toml").rename(bench / "machines" / "moved.toml")
    debug = prog.with_suffix(".dbg.json")
    for command in ("dis", "run"):
        code, _out, err = cli(capsys, command, prog.with_suffix(".hex"))
        assert code == 1
        assert err.splitlines() == [f"{debug}: error: the image was assembled for machine 'link8' from "
                                    f"{bench / 'machines' / 'link8.toml'}, which is not there: name its "
                                    f"machine file with --machine FILE"]
    code, out, err = cli(capsys, "dis", prog.with_suffix(".hex"), "--machine", bench / "machines" / "moved.toml")
    assert code == 0 and "set 7" in out, err


def test_a_debug_file_naming_an_unknown_machine_and_no_file_suggests_the_option(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    cli(capsys, "asm", prog)
    debug = prog.with_suffix(".dbg.json")
    recorded = json.loads(debug.read_text(encoding="utf-8"))
    del recorded["machine_file"]                 # as a debug file of an earlier release
    debug.write_text(json.dumps(recorded), encoding="utf-8")
    code, _out, err = cli(capsys, "run", prog.with_suffix(".hex"))
    assert code == 1
    assert err.strip() == (f"{debug}: error: the image was assembled for machine 'link8', which is not a "
                           f"shipped machine, and the debug file names no machine file: name its machine "
                           f"file with --machine FILE")


def test_a_damaged_debug_file_is_the_images_error_not_a_reason_to_fall_back_to_ref8(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    cli(capsys, "asm", prog)
    debug = prog.with_suffix(".dbg.json")
    recorded = json.loads(debug.read_text(encoding="utf-8"))
    recorded["machine_file"] = 5
    debug.write_text(json.dumps(recorded), encoding="utf-8")
    code, _out, err = cli(capsys, "run", prog.with_suffix(".hex"))
    assert code == 1
    assert err.strip() == f"{debug}: error: top level: 'machine_file' must be a machine file's path or null, not 5"


def test_an_image_run_on_another_machine_names_both(capsys, bench):
    prog = program(bench, "lamp.asm", '.machine "../machines/link8.toml"\n' + ON_LINK8)
    cli(capsys, "asm", prog)
    code, _out, err = cli(capsys, "run", prog.with_suffix(".hex"), "--machine", "ref8")
    assert code == 1
    assert err.strip() == f"{prog.with_suffix('.dbg.json')}: error: the debug file is for machine 'link8', not 'ref8'"
