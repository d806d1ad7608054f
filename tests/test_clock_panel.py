"""[clock] step and power_on: what one STEP press gives, and where the ring powers on.

duo4 (tests/machines/duo4.toml) has a make-before-break ring with two
pulses a turn, 60 ms and 100 ms, one hold point (C), step = "hold" and
power_on = "C"; the expected times below are sums of its phase table.
"""

from __future__ import annotations

from pathlib import Path

import pytest

import emu
from emu import Emulator, load_machine, machine_from_text
from emu.runs import load_program, operator_script_for, panel_path_for, read_panel_file, run_loaded

from cli_support import write
from debugger_programs import session_for
from engine_support import MACHINES, boot, encode

DUO4_PATH = Path(__file__).parent / "machines" / "duo4.toml"
DUO4_TEXT = DUO4_PATH.read_text(encoding="utf-8")
DUO4 = load_machine(DUO4_PATH)
MS = 1_000_000


def duo4_with(old: str, new: str):
    assert DUO4_TEXT.count(old) == 1, old
    return machine_from_text(DUO4_TEXT.replace(old, new), "duo4.toml")


def line_of(text: str) -> int:
    return DUO4_TEXT.splitlines().index(text) + 1


STEP_LINE = line_of('step = "hold"')
POWER_ON_LINE = line_of('power_on = "C"')


BAD = {
    "an unknown STEP": ('step = "hold"\npower', 'step = "turn"\npower',
                        f"duo4.toml:{STEP_LINE}: error: [clock]: 'step' must be \"pulse\" (one "
                        "STEP press gives one pulse) or \"hold\" (one press runs every pulse up to the next hold "
                        "point), not 'turn'"),
    "a phase that is not there": ('power_on = "C"', 'power_on = "D"',
                                  f"duo4.toml:{POWER_ON_LINE}: error: [clock]: 'power_on' must name a "
                                  "phase of the table (A, AB, B, BC, C, CA), not 'D'"),
    "a number for a phase": ('power_on = "C"', 'power_on = 5',
                             f"duo4.toml:{POWER_ON_LINE}: error: [clock]: 'power_on' must be the name "
                             "of a phase (A, AB, B, BC, C, CA), not 5"),
    "a high phase": ('power_on = "C"', 'power_on = "BC"',
                     f"duo4.toml:{POWER_ON_LINE}: error: [clock]: 'power_on' names 'BC', a high "
                     "phase: the ring would come up in the middle of a pulse and clip it; name a low phase"),
}


@pytest.mark.parametrize("case", list(BAD))
def test_a_bad_panel_key_names_file_line_key_and_what_was_expected(case):
    old, new, message = BAD[case]
    with pytest.raises(emu.MachineError) as caught:
        duo4_with(old, new)
    assert str(caught.value).split("\n")[0] == message


def test_without_the_keys_a_press_is_one_pulse_and_the_ring_powers_on_after_a_falling_edge():
    assert (MACHINES["ref8"].step_press, MACHINES["ref8"].power_on_phase) == ("pulse", 2)    # C, after A B
    assert (MACHINES["acc12"].step_press, MACHINES["acc12"].power_on_phase) == ("pulse", 1)  # G1, after P1
    plain = duo4_with('step = "hold"\npower_on = "C"\n', "")
    assert (plain.step_press, plain.phases[plain.power_on_phase].name) == ("pulse", "B")     # after AB


def test_the_first_pulse_is_the_one_after_the_power_on_phase():
    # from C: C 30 + CA 60 + A 20 + AB 60 = 170 ms to the first falling edge,
    # then B 20 + BC 100 = 120 ms more to the second
    emulator = boot(DUO4, encode(DUO4, "li k", k=3))
    assert DUO4.phases[emulator.phase_index].name == "C"
    emulator.run(max_cycles=1)
    assert emulator.time_ns == 170 * MS
    emulator.run(max_cycles=1)
    assert emulator.time_ns == 290 * MS
    # powered on at B instead (the default rule): B 20 + BC 100 to the first edge
    from_b = boot(duo4_with('power_on = "C"', 'power_on = "B"'), encode(DUO4, "li k", k=3))
    from_b.run(max_cycles=1)
    assert from_b.time_ns == 120 * MS


def test_a_hold_press_runs_the_ring_through_both_pulses_to_the_hold_point():
    words = encode(DUO4, "li k", k=5) + encode(DUO4, "tab") + encode(DUO4, "addb") + encode(DUO4, "halt")
    twin = boot(DUO4, words)
    twin.run(max_cycles=2)
    emulator = boot(DUO4, words)
    emulator.set_switch_run(False)
    emulator.run(max_cycles=10)
    assert emulator.frozen and emulator.cycles == 0     # powered on at the hold point C, held there
    assert emulator.press_step()
    assert (emulator.cycles, emulator.time_ns) == (2, 290 * MS)   # one whole turn, both pulses
    assert emulator.frozen and DUO4.phases[emulator.phase_index].name == "C"
    assert emulator.get("a") == twin.get("a") == 5 and emulator.pc == twin.pc
    assert emulator.press_step() and emulator.cycles == 4 and emulator.time_ns == 580 * MS
    assert emulator.get("b") == 5


def test_a_pulse_press_gives_one_panel_pulse_and_the_ring_stands_still():
    machine = duo4_with('step = "hold"', 'step = "pulse"')
    emulator = boot(machine, encode(machine, "li k", k=5))
    emulator.set_switch_run(False)
    emulator.run(max_cycles=10)
    assert emulator.press_step()
    # as long as the first high pulse after the power-on phase C: AB, 60 ms
    assert (emulator.cycles, emulator.time_ns, emulator.phase_index) == (1, 60 * MS, 4)


@pytest.mark.parametrize("name, step, expected", [
    ("ref8", "pulse", {"C": 1}), ("ref8", "hold", {"C": 1}),
    ("acc12", "pulse", {"G1": 1}), ("acc12", "hold", {"G1": 2}),
    ("duo4", "hold", {"C": 2}),
])
def test_what_one_press_gives_from_each_hold_point(name, step, expected):
    import dataclasses
    machine = dataclasses.replace(MACHINES[name], step_press=step)
    assert machine.pulses_per_step_press() == expected


PAUSED_SUM = """\
        .machine "duo4.toml"
        halt
        li 5
        tab
        addb
        show
        halt
"""


def test_operator_steps_are_presses_of_the_machines_step(tmp_path):
    """STOP one cycle after RESUME, 2 presses (4 pulses on duo4), RUN: the result and
    the cycle count of a free run."""
    (tmp_path / "duo4.toml").write_text(DUO4_TEXT, encoding="utf-8")

    def run(name, panel):
        path = write(tmp_path, name, PAUSED_SUM)
        write(tmp_path, name.replace(".asm", ".panel.toml"), panel)
        settings = read_panel_file(panel_path_for(str(path)), DUO4)
        return run_loaded(load_program(path, DUO4), DUO4, switches=settings.switches,
                          operator=operator_script_for(str(path), DUO4))

    free = run("free.asm", "[[at_halt]]\n")
    stepped = run("stepped.asm", "[[at_halt]]\nstop_after = 1\nsteps = 2\n")
    assert free.emulator.lamps == stepped.emulator.lamps == 10
    assert stepped.emulator.cycles == free.emulator.cycles


def test_the_debugger_lists_each_pulse_of_a_press(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    program = PAUSED_SUM.replace('        .machine "duo4.toml"\n        halt\n', "")
    session = session_for(tmp_path, program, machine=DUO4, name="sum.asm")
    assert "phase C, clock low, frozen at a hold point; STEP runs 2 pulses to the next" in session.execute("panel")
    listing = session.execute("pulse 2").splitlines()
    assert [line.split(":")[0] for line in listing[:4]] == [
        "press 1, pulse 1", "press 1, pulse 2", "press 2, pulse 3", "press 2, pulse 4"]
    assert [line.split(":")[1].strip() for line in listing[:4]] == [
        "fetch step 1", "li step 2", "fetch step 1", "tab step 2"]
    assert "(1 STEP press, 2 pulses)" in session.execute("instr")
    assert (session.emu.get("a"), session.emu.cycles) == (10, 6)
