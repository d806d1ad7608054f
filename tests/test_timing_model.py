"""The [timing] section: derivation of the phase times, and every message for a bad one."""

import copy
import dataclasses
import math
import tomllib
from pathlib import Path

import pytest

from emu import MachineError, load_machine, machine_from_text
from emu.description import timing_section
from emu.timing import SILICON_DIODE_DROP_V, has_timing, timing_model

ACC12 = Path(__file__).parent / "machines" / "acc12.toml"
MACHINES = ["ref8", str(ACC12)]
REF8 = load_machine("ref8")


def with_timing(timing, machine=REF8):
    return dataclasses.replace(machine, timing=timing_section(timing, machine))


def ref8_timing():
    return copy.deepcopy(tomllib.loads(Path(REF8.path).read_text(encoding="utf-8"))["timing"])


@pytest.mark.parametrize("name", MACHINES)
def test_shipped_parts_agree_with_the_phase_table(name):
    machine = load_machine(name)
    model = timing_model(machine)
    for phase, seconds in zip(machine.phases, model.nominal_phase_seconds()):
        assert seconds == pytest.approx(phase.duration_ns * 1e-9, rel=0.02)


def test_charge_stage_by_hand():
    # ref8 stage 1 worked by hand with the formulas of any primer (common
    # practice): the coil and capacitor see the divider of 100 and 680 ohms
    # fed with 24 V less one diode, and charge with tau = (100 || 680) C.
    feed = 24.0 - 0.7
    held = feed * 680 / 780
    tau = (100 * 680 / 780) * 470e-6
    expected = tau * math.log(held / (held - 14.4)) + 0.010
    assert timing_model(REF8).nominal_phase_seconds()[0] == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(0.06057, abs=5e-5)


def test_discharge_stage_by_hand():
    # ref8 stage 2: charged to the divider voltage, then through the coil alone
    held = 23.3 * 680 / (240 + 680)
    expected = 680 * 33e-6 * math.log(held / 3.6) + 0.005
    assert timing_model(REF8).nominal_phase_seconds()[1] == pytest.approx(expected, rel=1e-12)


def test_a_silicon_diode_drops_0_7_volts():
    # common practice: a small-signal silicon diode drops about 0.7 V
    assert SILICON_DIODE_DROP_V == pytest.approx(0.7)
    stage = timing_model(REF8).stages[0]
    assert stage.diodes == 1 and stage.values["diode"] == pytest.approx(0.7)


def test_removing_the_diode_gives_the_stage_the_full_supply():
    timing = ref8_timing()
    timing["diodes"] = 0
    timing["table_tolerance"] = 0.5
    no_diode = timing_model(with_timing(timing)).nominal_phase_seconds()[0]
    held = 24.0 * 680 / 780
    tau = (100 * 680 / 780) * 470e-6
    assert no_diode == pytest.approx(tau * math.log(held / (held - 14.4)) + 0.010, rel=1e-12)
    assert no_diode < timing_model(REF8).nominal_phase_seconds()[0]


def test_stage_keys_override_the_defaults_in_timing():
    timing = ref8_timing()
    timing["stage"][2]["operate_ms"] = 11
    model = timing_model(with_timing(timing))
    assert model.stages[2].values["operate"] == pytest.approx(0.011)
    assert model.stages[1].values["operate"] == pytest.approx(0.010)
    assert model.stages[0].tolerances["c"] == 0.20 and model.stages[0].tolerances["coil"] == 0.10


def test_machine_without_timing():
    machine = dataclasses.replace(REF8, timing=None)
    assert not has_timing(machine)
    with pytest.raises(MachineError, match=r"no \[timing\] section"):
        timing_model(machine)


def _set(path, value):
    def change(timing):
        *parents, key = path
        table = timing
        for part in parents:
            table = table[part]
        table[key] = value
    return change


def _delete(path):
    def change(timing):
        *parents, key = path
        table = timing
        for part in parents:
            table = table[part]
        del table[key]
    return change


BAD = [
    (_delete(["supply_v"]), "[timing]: missing key 'supply_v' (the supply voltage)"),
    (_set(["supply_v"], "24"), "[timing]: 'supply_v' must be a number, not a string"),
    (_set(["supply_v"], -1), "[timing]: 'supply_v' must be above zero, not -1"),
    (_set(["min_pulse_ms"], math.inf), "[timing]: 'min_pulse_ms' must be a finite number, not inf"),
    (_set(["c_tol"], 0.9), "[timing]: 'c_tol' must be a fraction from 0 to 0.5 (0.05 is ±5 %), not 0.9"),
    (_set(["spread"], "gaussian"), "[timing]: 'spread' must be one of uniform, normal, not 'gaussian'"),
    (_set(["jitter"], True), "[timing]: 'jitter' must be a number, not a boolean"),
    (_set(["table_tolerance"], 1.5),
     "[timing]: 'table_tolerance' must be a fraction below 1 (0.05 is 5 %), not 1.5"),
    (_set(["diodes"], 1.5), "[timing]: 'diodes' must be a whole number of series diodes, not 1.5"),
    (_set(["stage", 1, "c_uf"], 0), "[[timing.stage]] 2: 'c_uf' must be above zero, not 0"),
    (_set(["stage", 0, "mode"], "fast"), "[[timing.stage]] 1: 'mode' must be one of charge, discharge, not 'fast'"),
    (_delete(["stage", 0, "mode"]), "[[timing.stage]] 1: missing key 'mode' (charge or discharge)"),
    (_delete(["stage", 3, "r_ohm"]), "[[timing.stage]] 4: missing key 'r_ohm' (the series resistor in ohms)"),
    (_set(["stage", 1, "drop_out_v"], 20),
     "[[timing.stage]] 2: 'drop_out_v' (20 V) must be below 'pick_up_v' (14.4 V): "
     "a relay lets go below where it picks up"),
    (_set(["stage", 0, "r_ohm"], 1000),
     "[[timing.stage]] 1: the coil only reaches 9.43 V through 'r_ohm' = 1000 ohms, "
     "below its 'pick_up_v' of 14.4 V: the relay would never pick up"),
    (_set(["stage", 0, "c_uf"], 600),
     "[[timing.stage]] 1 (phase 'A'): the parts give 74.6 ms but the phase table says 60 ms, "
     "more than 'table_tolerance' (2%) apart"),
    (lambda t: t["stage"].pop(), "[timing]: has 3 [[timing.stage]] tables but the ring has 4 stages"),
    (_set(["stage"], {"mode": "charge"}), "[timing]: needs one [[timing.stage]] table per ring stage (4)"),
]


@pytest.mark.parametrize("change, message", BAD)
def test_bad_timing_sections_are_named(change, message):
    timing = ref8_timing()
    change(timing)
    with pytest.raises(MachineError) as caught:
        timing_model(with_timing(timing))
    assert str(caught.value) == f"{REF8.path}: error: {message}"


def test_unknown_keys_list_the_expected_ones():
    timing = ref8_timing()
    timing["stage"][2]["cap"] = 1
    with pytest.raises(MachineError) as caught:
        timing_model(with_timing(timing))
    assert str(caught.value).startswith(f"{REF8.path}: error: [[timing.stage]] 3: unknown key 'cap' "
                                        f"(expected one of: mode, diodes, r_ohm, c_uf,")


def test_timing_that_is_not_a_table():
    with pytest.raises(MachineError) as caught:
        timing_model(with_timing(5))
    assert str(caught.value) == f"{REF8.path}: error: top level: 'timing' must be a table, not an integer"


def test_a_timed_phase_must_light_one_stage_of_its_own():
    """Refused when the machine loads (so by every command), at the line of the phase's ring."""
    source = Path(REF8.path).read_text(encoding="utf-8").replace("ring = [2]\n", "ring = [1]\n", 1)
    with pytest.raises(MachineError) as caught:
        machine_from_text(source, "my-clock.toml")
    assert str(caught.value) == ("my-clock.toml:86: error: [[clock.phase]] 2 ('B'): ring stage 1 already times "
                                 "phase 'A'; a timed clock gives each phase its own stage")


def test_the_message_names_the_file_it_came_from():
    source = Path(REF8.path).read_text(encoding="utf-8").replace("c_uf = 470\n", "c_uf = 600\n", 1)
    machine = machine_from_text(source, "my-clock.toml")
    with pytest.raises(MachineError) as caught:
        timing_model(machine)
    assert str(caught.value).startswith("my-clock.toml:475: error: [[timing.stage]] 1 (phase 'A'): "
                                        "the parts give 74.6 ms")
