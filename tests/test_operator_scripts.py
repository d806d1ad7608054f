"""Operator scripts in panel files: the answers given at successive halts.

Each program here asks for numbers on the toggles at its pauses; the values
it must compute are worked out in Python beside each test (sum, product),
outside the assembler and the emulator.
"""

from __future__ import annotations

import pytest

from emu import load_machine
from emu.runs import (HaltAnswer, check_program, load_program, operator_script_for, panel_path_for,
                      read_panel_file, report, run_loaded)

from cli_support import ACC12 as ACC12_PATH
from cli_support import cli, write

REF8 = load_machine("ref8")
ACC12 = load_machine(ACC12_PATH)

ADDER = """\
; the wharf tally: two counts keyed in on the toggles, their sum shown
        pause
        in r0, 0
        st [first], r0
        pause
        in r1, 0
        add r0, r1
        out 1, r0
        halt
        .expect lamps == 47
first:  .byte 0
"""

ADDER_ACC12 = """\
; acc12: two numbers from the toggles, the sum on the lamps
        pause
        get 0
        store first
        pause
        get 0
        plus first
        put 1
        stop
        .expect acc == 3000, lamps == 3000
first:  .word 0
"""


def script(tmp_path, program: str, panel: str, name: str = "p.asm"):
    path = write(tmp_path, name, program)
    write(tmp_path, name.replace(".asm", ".panel.toml"), panel)
    return path


def run(path, machine, **options):
    """As ``relaybench run`` does: the panel file's toggles, input and script."""
    panel = read_panel_file(panel_path_for(str(path)), machine)
    return run_loaded(load_program(path, machine), machine, switches=panel.switches,
                      input_bytes=panel.input_bytes, operator=operator_script_for(str(path), machine), **options)


def test_the_operator_answers_both_pauses_on_ref8(tmp_path):
    path = script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\n\n[[at_halt]]\nswitches = 28\n")
    result = run(path, REF8)
    assert (result.status, result.emulator.lamps, result.answers_left) == ("halted", 19 + 28, 0)
    assert len(result.pauses) == 2
    verdict = check_program(str(path), REF8)
    assert verdict.passed and verdict.halts == 3, verdict


def test_the_operator_answers_both_pauses_on_acc12(tmp_path):
    path = script(tmp_path, ADDER_ACC12, "[[at_halt]]\nswitches = 0x7D0\n\n[[at_halt]]\nswitches = 1000\n")
    result = run(path, ACC12)
    assert (result.status, result.emulator.get("acc"), result.emulator.lamps) == ("halted", 2000 + 1000, 3000)
    assert check_program(str(path), ACC12).passed


def test_without_answers_the_pauses_resume_with_the_toggles_as_they_are(tmp_path):
    """The script ran out after one answer: the second pause resumes by itself."""
    path = script(tmp_path, ADDER, "switches = 5\n[[at_halt]]\nswitches = 19\n")
    result = run(path, REF8)
    assert (result.status, result.emulator.lamps) == ("halted", 19 + 19)
    assert not check_program(str(path), REF8).passed   # lamps == 47 fails


def test_answers_left_over_warn_and_fail_the_test(tmp_path):
    """Every halt takes an answer, so answers are left only when the run ends otherwise
    (here at the cycle limit, in a loop the script did not foresee)."""
    path = script(tmp_path, "pause\nloop: jmp loop\n", "max_cycles = 500\n[[at_halt]]\n[[at_halt]]\n[[at_halt]]\n")
    result = run(path, REF8, max_cycles=500)
    assert (result.status, result.answers_left) == ("cycle_limit", 2)
    warning = "the operator script has 2 answer(s) left that no halt used"
    assert any(w.startswith(warning) for w in report(result)["warnings"])
    verdict = check_program(str(path), REF8)
    assert not verdict.passed and any(w.startswith(warning) for w in verdict.warnings)


def test_an_answer_at_the_final_halt_resumes_past_it_as_the_operator_would(tmp_path):
    """RESUME at the final halt runs on into the zeroed memory after the program
    (0x00 is ref8's halt), where the fourth answer is used."""
    path = script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\n[[at_halt]]\nswitches = 28\n"
                                   "[[at_halt]]\n[[at_halt]]\n")
    result = run(path, REF8)
    assert (result.status, result.halt_address, result.answers_left) == ("halted", 13, 0)


def test_resume_false_ends_the_run_at_that_pause(tmp_path):
    path = script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\n[[at_halt]]\nresume = false\n")
    result = run(path, REF8)
    assert result.status == "halted" and result.halt_address == 6   # the second pause (in 2 words, st 3)
    assert result.emulator.lamps == 0 and result.emulator.memory[load_program(path, REF8).labels["first"]] == 19


def test_input_is_fed_after_what_is_still_unread(tmp_path):
    program = "in r0, 1\npause\nin r1, 1\nin r2, 1\nhalt\n"
    path = script(tmp_path, program, 'input = "a"\n[[at_halt]]\ninput = "bc"\n')
    result = run(path, REF8)
    assert [result.emulator.get(r) for r in ("r0", "r1", "r2")] == [ord("a"), ord("b"), ord("c")]
    assert result.emulator.warnings == []


def test_stop_steps_and_run_again_leave_the_result_of_a_free_run(tmp_path):
    """STOP thrown 40 cycles after RESUME, 7 STEP pulses, RUN: the same result, 7 cycles
    of it given by hand (every pulse a cycle on ref8)."""
    free = run(script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\n[[at_halt]]\nswitches = 28\n"), REF8)
    stepped = run(script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\nstop_after = 5\nsteps = 7\n"
                                          "[[at_halt]]\nswitches = 28\n", name="q.asm"), REF8)
    assert stepped.emulator.lamps == free.emulator.lamps == 47
    assert stepped.emulator.cycles == free.emulator.cycles


def test_steps_stop_when_the_halt_lamp_lights(tmp_path):
    """STEP pressed 1,000 times one cycle after the first pause: the operator stops at the
    halt lamp of the second, which (the script run out) resumes by itself, so the run ends
    at the final halt after 5 instructions, not in the empty memory past it."""
    program = "pause\nli r0, 1\npause\nli r1, 2\nhalt\n"
    path = script(tmp_path, program, "[[at_halt]]\nstop_after = 1\nsteps = 1000\n")
    result = run(path, REF8)
    assert result.status == "halted" and result.halt_address == 6
    assert [p["pc"] for p in result.pauses] == [1, 4]
    assert (result.emulator.get("r0"), result.emulator.get("r1"), result.emulator.instructions) == (1, 2, 5)


def test_relaybench_run_follows_the_script(tmp_path, capsys):
    path = script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\n[[at_halt]]\nswitches = 28\n")
    code, out, _err = cli(capsys, "run", path)
    assert code == 0 and "lamps      00101111 (0x2F)" in out


def test_the_readme_example_is_a_valid_script():
    from pathlib import Path
    text = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    example = text[text.index("```toml\n[[at_halt]]") + 8:]
    example = example[:example.index("```")]
    panel = Path(__file__).parent / "_readme_panel.toml"
    try:
        panel.write_text(example, encoding="utf-8")
        settings = read_panel_file(panel, REF8)
    finally:
        panel.unlink()
    assert settings.at_halt == (HaltAnswer(5, b"7\n", True, 120, 3),)


@pytest.mark.parametrize("panel, line, message", [
    ("[[at_halt]]\nswitches = 1\n[[at_halt]]\ntoggle = 3\n", 4, "unknown key 'toggle'"),
    ("[[at_halt]]\n\nsteps = 3\n", 3, "'steps' needs 'stop_after'"),
    ("[[at_halt]]\nresume = false\nstop_after = 9\n", 3, "'stop_after' needs 'resume = true'"),
    ("[[at_halt]]\nresume = false\n[[at_halt]]\n", 2, "'resume = false' ends the run, so the 1 answer(s) after it would never be used"),
    ("[[at_halt]]\nstop_after = 0\n", 2, "'stop_after' must be a positive number of cycles"),
    ("[[at_halt]]\nswitches = 256\n", 2, "'switches' must be an integer 0…255 (the 8 toggles of ref8)"),
    ("[[at_halt]]\ninput = 7\n", 2, "'input' must be a string"),
    ("at_halt = [1, 2]\n", 1, "'at_halt' must be tables written [[at_halt]]"),
])
def test_a_bad_script_names_its_line(tmp_path, panel, line, message):
    path = script(tmp_path, ADDER, panel)
    verdict = check_program(str(path), REF8)
    assert verdict.error.startswith(f"{tmp_path / 'p.panel.toml'}:{line}: error: {message}"), verdict.error


def test_acc12_takes_twelve_bit_toggles_in_a_script(tmp_path):
    path = script(tmp_path, ADDER_ACC12, "[[at_halt]]\nswitches = 0x1000\n")
    error = check_program(str(path), ACC12).error
    assert "'switches' must be an integer 0…4095 (the 12 toggles of acc12)" in error


def test_stop_at_pause_ends_before_the_first_answer_without_a_warning(tmp_path, capsys):
    path = script(tmp_path, ADDER, "[[at_halt]]\nswitches = 19\n[[at_halt]]\nswitches = 28\n")
    result = run(path, REF8, stop_at_pause=True)
    assert (result.status, result.answers_left, result.emulator.switches) == ("paused", 2, 0)
    assert report(result)["warnings"] == []
