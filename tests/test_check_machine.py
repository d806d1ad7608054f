"""``relaybench check --machine``: the properties pass on every machine we have, catch
faults planted in a copy of a machine file or in the engine, and the design report
states the facts of ref8's and acc12's phase tables.

The report's expected values are worked out by hand from the phase tables in
emu/machines/ref8.toml and tests/machines/acc12.toml (the arithmetic is in each
test); the broken engines and descriptions are ours, made for these tests.
"""

from __future__ import annotations

import dataclasses
import json

import pytest

import asm
from emu import Emulator, load_machine
from emu.checks import (FAILED, MACHINE_PROPERTIES, NOT_APPLICABLE, PASSED, check_property, design_report,
                        design_report_lines)
from emu.commands import check as check_command
from emu.testing import PanelAction, apply_panel_action, play_schedule

from cli_support import ACC12, cli
from engine_support import MACHINES, ROOT

PROPERTY = {prop.key: prop for prop in MACHINE_PROPERTIES}
REF8 = MACHINES["ref8"]
ACC12_MACHINE = MACHINES["acc12"]


def results_on(machine, examples=20, seed=1) -> dict:
    return {prop.key: check_property(prop, machine, examples, seed) for prop in MACHINE_PROPERTIES}


@pytest.mark.parametrize("name", MACHINES)
def test_every_property_passes_on_every_machine_we_have(name):
    results = results_on(MACHINES[name])
    assert {key: r.status for key, r in results.items()} == {key: PASSED for key in PROPERTY}
    assert all(r.examples == 20 for r in results.values())


def test_the_command_passes_ref8_with_one_line_a_property_and_exit_0(capsys):
    code, out, err = cli(capsys, "check", "--machine", "ref8", "--examples", 5, "--seed", 3)
    assert code == 0 and err == ""
    lines = out.splitlines()
    assert lines[0] == f"checking ref8 ({ROOT / 'emu' / 'machines' / 'ref8.toml'}): 5 examples a property, seed 3"
    assert lines[1:9] == [f"  pass  {p.key:<10} {p.title} (5 examples)" for p in MACHINE_PROPERTIES]
    assert lines[-1] == "8 properties: 8 passed, 0 failed, 0 not applicable"


# ----- planted faults -------------------------------------------------------------------

def _hold_on_second_high_phase(machine):
    """ref8's phase B (high, after A) made a hold point, as a loader bug would let through."""
    phases = list(machine.phases)
    phases[1] = dataclasses.replace(phases[1], hold=True)
    return dataclasses.replace(machine, phases=tuple(phases))


def test_a_hold_point_on_a_high_phase_is_caught_as_a_stretched_pulse(capsys, monkeypatch):
    broken = _hold_on_second_high_phase(REF8)
    monkeypatch.setattr(check_command, "machine_from", lambda args: broken)
    code, out, _err = cli(capsys, "check", "--machine", "ref8", "--examples", 15, "--seed", 1)
    assert code == 1
    assert "  FAIL  P1         no clipped or stretched pulse" in out
    assert "expected: the clock to stand low while the generator is frozen" in out
    assert "happened: it froze in phase B, which is high" in out
    assert "reproduce: relaybench check --machine ref8 --seed 1 --examples 15" in out
    assert "  pass  P6 " in out     # the paths still agree: the fault is in the table, not the engine


def _acc12_with_halt_first(tmp_path):
    """acc12 with 'stop' driving halt on its first step and incrementing acc on a second one."""
    text = (ROOT / "tests" / "machines" / "acc12.toml").read_text(encoding="utf-8")
    old = 'syntax = "stop"\nencoding = ["1111 00000000"]\nsteps = ["halt"]'
    assert text.count(old) == 1
    path = tmp_path / "acc12-halt-first.toml"
    path.write_text(text.replace(old, old[:-1] + ', "acc <- inc(acc) sets zf lk"]'), encoding="utf-8")
    return path


def test_a_halt_that_the_phase_table_cuts_off_mid_instruction_is_caught(capsys, tmp_path):
    """Halt step on pulse P1 and G1 right after: the clock freezes with stop's second step to run."""
    path = _acc12_with_halt_first(tmp_path)
    code, out, _err = cli(capsys, "check", "--machine", path, "--examples", 30, "--seed", 2, "--json")
    assert code == 1
    report = json.loads(out)
    status = {p["key"]: p["status"] for p in report["properties"]}
    assert status == {**{key: PASSED for key in PROPERTY}, "P5": FAILED}
    failure = next(p for p in report["properties"] if p["key"] == "P5")["counterexample"]
    assert failure["expected"] == "the clock to freeze after the halting instruction has finished"
    assert failure["happened"].startswith("it froze inside it, before its step 'acc <- inc(acc) sets zf lk'")
    assert failure["phase"] == "G1"
    assert any(line.startswith("stop ") for line in failure["listing"])
    assert failure["reproduce"] == f"relaybench check --machine {path} --seed 2 --examples 30"
    first = report["design"]["halts"][0]
    assert (first["pulse"], first["pulses_after"], first["finished"]) == ("P1", 0, False)


def test_the_same_seed_gives_the_same_counterexample(capsys, tmp_path):
    path = _acc12_with_halt_first(tmp_path)
    runs = [cli(capsys, "check", "--machine", path, "--examples", 10, "--seed", 9) for _ in range(2)]
    assert runs[0] == runs[1] and runs[0][0] == 1


def test_an_engine_whose_step_gives_two_micro_steps_fails_p3(monkeypatch):
    pulse = Emulator.press_step

    def double_step(emu):
        return pulse(emu) and pulse(emu)
    monkeypatch.setattr(Emulator, "press_step", double_step)
    result = check_property(PROPERTY["P3"], REF8, 100, 1)
    assert result.status == FAILED
    assert (result.failure.expected, result.failure.happened) == (
        "one STEP press to give exactly one micro-step", "it gave 2")
    assert [a.action for a in result.example.schedule].count("step") >= 1


def test_an_engine_whose_generator_ignores_the_stop_switch_fails_p2(monkeypatch):
    monkeypatch.setattr(Emulator, "hold_line", property(lambda emu: emu.halt_latch))
    result = check_property(PROPERTY["P2"], ACC12_MACHINE, 100, 1)
    assert result.status == FAILED
    assert result.failure.expected == "the generator to freeze on entering hold point G1 (the switch at stop)"
    assert result.failure.happened == "it ran phase G1 on"


def test_an_engine_whose_resume_skips_a_word_fails_p4(monkeypatch):
    resume = Emulator.press_resume

    def skipping(emu):
        resume(emu)
        emu.set(emu.machine.program_counter, emu.pc + 1)
    monkeypatch.setattr(Emulator, "press_resume", skipping)
    result = check_property(PROPERTY["P4"], REF8, 100, 1)
    assert result.status == FAILED
    assert result.failure.happened.startswith("it differs (here vs free run): ")


def test_an_engine_whose_resume_never_clears_the_latch_fails_and_does_not_hang(monkeypatch):
    monkeypatch.setattr(Emulator, "press_resume", lambda emu: None)
    result = check_property(PROPERTY["P5"], REF8, 30, 1)
    assert result.status == FAILED
    assert (result.failure.expected, result.failure.happened) == (
        "the clock to run with the switch at run after RESUME", "it stays frozen")


def test_a_disassembler_that_drops_the_last_instruction_fails_the_round_trip(monkeypatch):
    lines = asm.disassemble
    monkeypatch.setattr(asm, "disassemble", lambda *args: lines(*args)[:-1])
    result = check_property(PROPERTY["round trip"], REF8, 50, 1)
    assert result.status == FAILED and result.failure.expected.startswith("the source to assemble to ")


def test_a_snapshot_that_keeps_the_cycle_count_only_to_the_last_thousand_fails_p7(monkeypatch):
    state = Emulator.snapshot_state
    monkeypatch.setattr(Emulator, "snapshot_state", lambda emu: {**state(emu), "cycles": state(emu)["cycles"] % 1000})
    result = check_property(PROPERTY["P7"], REF8, 200, 1)
    assert result.status == FAILED
    assert result.failure.happened.startswith("they differ (restored vs uninterrupted): cycles: ")
    assert result.example.counts["before"] >= 1000


# ----- not applicable, bad files, usage -------------------------------------------------------

def _without_halts(machine):
    """The machine with no step marked as driving halt (a loaded file always has one: its pause)."""
    def unmarked(ins):
        return dataclasses.replace(ins, steps=tuple(dataclasses.replace(s, drives_halt=False) for s in ins.steps))
    return dataclasses.replace(machine, instructions=[unmarked(i) for i in machine.instructions])


def test_a_machine_without_a_halt_gets_not_applicable_with_the_reason(capsys, monkeypatch):
    monkeypatch.setattr(check_command, "machine_from", lambda args: _without_halts(REF8))
    code, out, _err = cli(capsys, "check", "--machine", "ref8", "--examples", 3, "--seed", 1)
    assert code == 0
    assert "  n/a   P5         halt and RESUME behave as the latch does: no instruction drives halt" in out
    assert "where a halt freezes the clock: no instruction drives halt" in out
    assert out.splitlines()[-1] == "8 properties: 7 passed, 0 failed, 1 not applicable"
    assert check_property(PROPERTY["P5"], _without_halts(REF8), 3, 1).status == NOT_APPLICABLE


def test_a_phase_table_without_a_hold_point_makes_stop_step_and_halt_not_applicable():
    """The loader refuses such a table; a machine built in code can still have one."""
    machine = dataclasses.replace(REF8, phases=tuple(dataclasses.replace(p, hold=False) for p in REF8.phases))
    statuses = {key: check_property(PROPERTY[key], machine, 3, 1) for key in ("P2", "P3", "P5")}
    assert {key: (r.status, r.reason) for key, r in statuses.items()} == {
        key: (NOT_APPLICABLE, "the phase table has no hold point") for key in ("P2", "P3", "P5")}
    lines = design_report_lines(design_report(machine))
    assert lines[0] == "clock: 1 pulse a turn, no hold point"
    assert "STOP never freezes the clock: the phase table has no hold point" in lines


def test_a_machine_file_that_does_not_load_is_a_located_error_exit_1(capsys, tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text('[machine]\nname = "bad"\ndata_bits = "eight"\n', encoding="utf-8")
    code, out, err = cli(capsys, "check", "--machine", path)
    assert (code, out) == (1, "")
    assert err.strip() == f"{path}:3: error: [machine]: 'data_bits' must be an integer, not a string"


@pytest.mark.parametrize("argv, message", [
    ((), "what to check? give a PROGRAM, or --machine FILE"),
    (("--machine", "ref8", "--sample", "3"), "--sample goes with a PROGRAM"),
    (("--machine", "ref8", "--examples", "0"), "argument --examples: must be 1…100,000, not 0"),
    (("--machine", "ref8", "--seed", "-2"), "argument --seed: must be a seed of 0 or more, not -2"),
])
def test_a_bad_command_line_is_a_usage_error(capsys, argv, message):
    code, out, err = cli(capsys, "check", *argv)
    assert code == 2 and out == "" and message in err and err.startswith("usage: relaybench check")


def test_json_has_every_property_the_design_and_the_counts(capsys):
    code, out, _err = cli(capsys, "check", "--machine", ACC12, "--examples", 4, "--seed", 5, "--json")
    report = json.loads(out)
    assert code == 0
    assert set(report) == {"machine", "file", "seed", "examples_per_property", "passed", "counts", "properties",
                           "design"}
    assert (report["machine"], report["seed"], report["examples_per_property"], report["passed"]) == (
        "acc12", 5, 4, True)
    assert report["counts"] == {"passed": 8, "failed": 0, "not_applicable": 0}
    assert [p["key"] for p in report["properties"]] == list(PROPERTY)
    assert report["properties"][0] == {"key": "P1", "title": "no clipped or stretched pulse", "status": "passed",
                                       "examples": 4, "reason": None, "counterexample": None}
    assert report["design"]["stop_worst_ns"] == 200_000_000


# ----- the design report ----------------------------------------------------------------

def test_ref8_report_halt_at_the_boundary_stop_within_one_turn_step_one_pulse():
    """ref8: A 60 high, B 40 high, C 50 low (hold), D 50 low. The halt step latches as B ends,
    the next phase is C, a hold point: 0 pulses later, pc just past the halt. STOP thrown just
    as the generator passes C waits C + D + A + B = 50 + 50 + 60 + 40 = 200 ms, 1 pulse.
    The panel pulse is the generator's: A + B = 100 ms."""
    report = design_report(REF8)
    [halt] = report.halts
    assert (halt.instruction, halt.pulse, halt.pulses_after, halt.freezes_in, halt.pc_past_end, halt.finished) == (
        "halt", "A+B", 0, "C", 0, True)
    assert (report.stop_worst_ns, report.stop_worst_pulses, report.stop_worst_after) == (200_000_000, 1, "C")
    assert report.hold_points == ("C",) and report.pulses_per_turn == 1
    assert report.repeating_steps == ()
    assert "100 ms" in report.step_press


def test_acc12_report_a_halt_on_the_second_pulse_freezes_one_pulse_into_the_next_instruction():
    """acc12: P1 40 high, G1 30 low (hold), T1 30 low, P2 40 high, G2 60 low. A halt step on P1
    is followed by G1: frozen at once, pc just past stop. On P2 the ring runs G2, P1 (the next
    fetch, pc + 1) before G1: 1 pulse later, pc one word past stop. STOP thrown just as the
    generator passes G1 waits G1 + T1 + P2 + G2 + P1 = 30 + 30 + 40 + 60 + 40 = 200 ms, 2 pulses."""
    report = design_report(ACC12_MACHINE)
    rows = [(h.pulse, h.pulses_after, h.freezes_in, h.steps_after, h.pc_past_end, h.finished) for h in report.halts]
    assert rows == [("P1", 0, "G1", (), 0, True),
                    ("P2", 1, "G1", ("ir <- mem[pc]; pc <- pc + 1",), 1, True)]
    assert (report.stop_worst_ns, report.stop_worst_pulses, report.stop_worst_after) == (200_000_000, 2, "G1")
    assert "40 ms" in report.step_press
    assert report.instruction_presses == (1, 2)       # skip: the fetch only; every other: fetch + 1 step
    lines = design_report_lines(report)
    assert lines[0] == "clock: 2 pulses a turn, hold point at G1"
    assert lines[3] == ("  `stop` with its halt step on pulse P2: freezes in G1 1 pulse later (ran: ir <- mem[pc]; "
                        "pc <- pc + 1); pc points 1 word past the halt instruction (the next instruction has begun)")


def test_nib4_report_names_the_steps_that_repeat():
    report = design_report(MACHINES["nib4"])
    assert report.repeating_steps == ("get: step 2 'sub(in(2), 1) sets z; wait until z'",
                                      "spin: step 1 'a <- dec(a) sets z c; goto 2 if !z'")
    assert report.instruction_presses[1] is None


# ----- the public schedule strategy --------------------------------------------------------

def test_a_schedule_acts_at_its_cycle_and_phase_or_at_once_when_frozen():
    machine = REF8
    nop = next(i for i in machine.instructions if i.mnemonic == "nop")
    emu = Emulator(machine)
    emu.load([(0, nop.encode({}) * 40)])
    seen = []
    play_schedule(emu, [PanelAction("stop", 5, 0), PanelAction("step", 30, 3)],
                  before=lambda planned: seen.append((planned.action, emu.cycles, emu.phase_index, emu.frozen)))
    # stop at cycle 5 entering phase A (index 0); the clock then freezes in C after one more pulse,
    # so STEP is pressed at once, at cycle 6, not at cycle 30.
    assert seen == [("stop", 5, 0, False), ("step", 6, 2, True)]
    assert emu.cycles == 7 and emu.frozen


def test_the_readme_shows_acc12s_design_report_as_the_command_prints_it():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    shown = readme.split("design report (facts of the machine as described, not pass/fail):\n")[1].split("\n\n")[0]
    assert shown.splitlines() == ["  " + line for line in design_report_lines(design_report(ACC12_MACHINE))]


def test_an_unknown_panel_action_is_refused_with_the_known_ones():
    with pytest.raises(ValueError, match=r"no panel action 'halt' \(one of stop, run, step, resume, reset\)"):
        apply_panel_action(Emulator(REF8), "halt")
