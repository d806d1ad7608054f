"""The pytest plugin: programs with ``.expect`` checks as test items, run by a real pytest.

Each test starts ``python -m pytest`` on a folder of two or three tiny
programs (the plugin is found through its entry point, as in a builder's
project), so the collection, the failure text, ``-k``, ``-m`` and
pytest-xdist are the real ones.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from emu.testing import operator_scripts, power_on, spread_clocks

from cli_support import ACC12, ROOT

DOUBLE = """\
        li r0, 3
        add r0, r0
        halt
        .expect r0 == 6
"""

WRONG = """\
        li r0, 3
        add r0, r0
        st [total], r0
        halt
        .expect r0 == 7, [total] == 6
total:  .byte 0
"""

ACC12_LAMPS = f""".machine "{ACC12}"
        set 5
        put 1
        stop
        .expect lamps == 5
"""


def programs(folder: Path, **texts: str) -> Path:
    for name, text in texts.items():
        (folder / f"{name}.asm").write_text(text, encoding="utf-8")
    return folder


def pytest_in(folder: Path, *options: str, ini: str | None = None) -> subprocess.CompletedProcess:
    """A pytest of its own in ``folder`` (with ``ini`` as its pytest.ini), its output as text."""
    if ini is not None:
        (folder / "pytest.ini").write_text(ini, encoding="utf-8")
    env = {key: value for key, value in os.environ.items() if not key.startswith(("PYTEST_", "HYPOTHESIS"))}
    return subprocess.run([sys.executable, "-m", "pytest", "-p", "no:cacheprovider", "-q", *options],
                          cwd=folder, capture_output=True, text=True, timeout=300, env=env)


def test_a_passing_and_a_failing_program_with_the_check_and_its_source_line(tmp_path):
    programs(tmp_path, double=DOUBLE, wrong=WRONG)
    run = pytest_in(tmp_path, "-rA")
    assert run.returncode == 1, run.stdout
    assert "PASSED double.asm::double" in run.stdout
    assert "FAILED wrong.asm::wrong - wrong.asm:5: expected r0 == 7, got 6" in run.stdout
    failure = run.stdout.split("wrong.asm on ref8")[1]
    assert failure.splitlines()[1:3] == ["wrong.asm:5: expected r0 == 7, got 6",
                                         "    .expect r0 == 7, [total] == 6"]
    assert "1 failed, 1 passed" in run.stdout


def test_k_selects_by_name_and_by_machine(tmp_path):
    programs(tmp_path, double=DOUBLE, wrong=WRONG, lamps=ACC12_LAMPS)
    by_name = pytest_in(tmp_path, "-k", "double", "-rA")
    assert by_name.returncode == 0 and "1 passed, 2 deselected" in by_name.stdout
    by_machine = pytest_in(tmp_path, "-k", "acc12", "-rA")
    assert by_machine.returncode == 0 and "PASSED lamps.asm::lamps" in by_machine.stdout
    assert "1 passed, 2 deselected" in by_machine.stdout


def test_the_marker_selects_or_leaves_out_the_programs(tmp_path):
    programs(tmp_path, double=DOUBLE)
    (tmp_path / "test_plain.py").write_text("def test_plain():\n    assert True\n", encoding="utf-8")
    only_programs = pytest_in(tmp_path, "-m", "relaybench", "-rA")
    assert "PASSED double.asm::double" in only_programs.stdout and "1 deselected" in only_programs.stdout
    no_programs = pytest_in(tmp_path, "-m", "not relaybench", "-rA")
    assert "PASSED test_plain.py::test_plain" in no_programs.stdout and "1 deselected" in no_programs.stdout


def test_items_run_in_parallel_under_xdist(tmp_path):
    programs(tmp_path, double=DOUBLE, wrong=WRONG, lamps=ACC12_LAMPS)
    run = pytest_in(tmp_path, "-n", "2", "-v", "-v")
    assert run.returncode == 1
    assert "created: 2/2 workers" in run.stdout
    assert "[gw0]" in run.stdout and "[gw1]" in run.stdout
    assert "wrong.asm:5: expected r0 == 7, got 6" in run.stdout
    assert "1 failed, 2 passed" in run.stdout


def test_a_program_that_does_not_assemble_is_a_collection_error(tmp_path):
    programs(tmp_path, double=DOUBLE, broken="        li r0, 3\n        frob r0\n        halt\n")
    run = pytest_in(tmp_path)
    assert run.returncode == 2
    assert "ERROR collecting broken.asm" in run.stdout
    assert "broken.asm:2:9: error: unknown instruction 'frob'" in run.stdout
    assert "passed" not in run.stdout.splitlines()[-1]


def test_a_damaged_panel_file_is_a_collection_error(tmp_path):
    programs(tmp_path, double=DOUBLE)
    (tmp_path / "double.panel.toml").write_text("switches = 0x1FF\n", encoding="utf-8")
    run = pytest_in(tmp_path)
    assert run.returncode == 2 and "ERROR collecting double.asm" in run.stdout
    assert "double.panel.toml:1" in run.stdout


def test_a_program_without_checks_is_no_item(tmp_path):
    programs(tmp_path, double=DOUBLE, plain="        halt\n")
    run = pytest_in(tmp_path, "--collect-only")
    assert "double.asm::double" in run.stdout and "plain.asm" not in run.stdout


def test_programs_in_testpaths_are_collected_only_when_the_project_asks(tmp_path):
    programs(tmp_path, double=DOUBLE)
    quiet = pytest_in(tmp_path, "--collect-only", ini="[pytest]\ntestpaths = .\n")
    assert quiet.returncode == 5 and "double.asm" not in quiet.stdout       # 5: no tests collected
    asked = pytest_in(tmp_path, "--collect-only", ini="[pytest]\ntestpaths = .\nrelaybench_programs = true\n")
    assert "double.asm::double" in asked.stdout


def test_the_panel_files_operator_script_is_honoured(tmp_path):
    """crane.asm asks for two numbers at two pauses; its panel file answers them."""
    for name in ("crane.asm", "crane.panel.toml"):
        (tmp_path / name).write_text((ROOT / "programs" / "ref8" / name).read_text(encoding="utf-8"), encoding="utf-8")
    (tmp_path / "lib").mkdir()
    for inc in (ROOT / "programs" / "ref8" / "lib").iterdir():
        (tmp_path / "lib" / inc.name).write_text(inc.read_text(encoding="utf-8"), encoding="utf-8")
    run = pytest_in(tmp_path, "-rA")
    assert "PASSED crane.asm::crane" in run.stdout
    (tmp_path / "crane.panel.toml").write_text("switches = 0\n", encoding="utf-8")
    unanswered = pytest_in(tmp_path)
    assert unanswered.returncode == 1 and "crane.asm:" in unanswered.stdout


def test_the_fixture_gives_a_powered_on_program_with_its_panel(powered_on):
    board = powered_on(ROOT / "programs" / "ref8" / "tickets.asm")
    assert board.emulator.switches == 0x82 and board.emulator.cycles == 0
    assert board.run().status == "halted"


def test_the_strategies_draw_scripts_and_clocks_for_the_machine():
    from hypothesis import given, settings

    @settings(max_examples=20, deadline=None)
    @given(operator_scripts("ref8", answers=2), spread_clocks(ACC12))
    def check(script, clock):
        assert len(script) <= 2 and all(answer.resume and answer.switches is None for answer in script)
        assert clock.model.machine.name == "acc12" and len(clock.turns(3)) == 3

    check()


def test_a_machine_without_timing_has_no_spread_clocks():
    from emu import MachineError
    with pytest.raises(MachineError, match=r"\[timing\]"):
        spread_clocks(str(ROOT / "tests" / "machines" / "nib4.toml"))


def test_power_on_takes_the_machine_the_program_names(tmp_path):
    program = tmp_path / "lamps.asm"
    program.write_text(ACC12_LAMPS, encoding="utf-8")
    board = power_on(program)
    assert board.machine.name == "acc12"
    assert board.run().emulator.lamps == 5
