"""Relay wear: the [wear] section, the extrapolation and the report."""

import dataclasses
import json

import pytest

from emu import Emulator, MachineError, load_machine
from emu.description import WearRatings, wear_section
from emu.timing import count_wear, format_wear, relay_names, wear_ratings

REF8 = load_machine("ref8")
ACC12 = load_machine("tests/machines/acc12.toml")


def with_wear(wear, machine=REF8):
    return dataclasses.replace(machine, wear=wear_section(wear, machine))


def counted(machine, cycles=200):
    emu = Emulator(machine)
    emu.load([(0, [0] * 16)])
    with count_wear(emu) as wear:
        emu.run(max_cycles=cycles)
    return emu, wear


def test_relays_are_the_ring_stages_then_the_control_lines():
    names = relay_names(REF8)
    assert names[:4] == ["stage 1", "stage 2", "stage 3", "stage 4"]
    assert "read" in names and "load pc" in names and "halt" in names
    assert relay_names(ACC12)[:5] == [f"stage {i}" for i in range(1, 6)]


def test_ratings_from_the_machine_file():
    ratings = wear_ratings(REF8)
    assert ratings.life("stage 1") == 20_000_000
    assert ratings.life("read") == 10_000_000
    assert wear_ratings(dataclasses.replace(REF8, wear=WearRatings())).life("read") is None


@pytest.mark.parametrize("wear, message", [
    ({"rated_operations": 0}, "[wear]: 'rated_operations' must be a positive number of operations, not 0"),
    ({"rated_operations": "many"},
     "[wear]: 'rated_operations' must be a positive number of operations, not 'many'"),
    ({"life": 5}, "[wear]: unknown key 'life' (expected one of: rated_operations, relays)"),
    ({"relays": 5}, "[wear]: 'relays' must be a table of relay name = rated operations"),
    ({"relays": {"stage 9": 100}}, "[wear.relays]: no relay named 'stage 9' (relays: stage 1, stage 2,"),
    ({"relays": {"read": -3}}, "[wear.relays]: 'read' must be a positive number of operations, not -3"),
])
def test_bad_wear_sections_are_named(wear, message):
    with pytest.raises(MachineError) as caught:
        wear_ratings(with_wear(wear))
    assert str(caught.value).startswith(f"{REF8.path}: error: {message}")


def test_nop_loop_wears_the_fetch_relays_once_a_pulse():
    # 200 cycles of nop on ref8: every pulse is the fetch step, which reads
    # memory and loads ir and pc; each ring stage lights once a turn
    emu, wear = counted(REF8)
    assert wear.pulses == 200
    for line in ("read", "load ir", "load pc"):
        assert wear.counts[line] == 200
    assert wear.counts["stage 1"] == wear.counts["stage 2"] == 200
    assert wear.counts["write"] == 0


def test_report_extrapolates_at_the_nominal_rate():
    emu, wear = counted(REF8)
    report = wear.report()
    by_name = {r["relay"]: r for r in report["relays"]}
    read = by_name["read"]
    # 1 operation a pulse at 5 pulses a second: 18,000 an hour, so a
    # 10-million-operation relay lasts 10e6 / 18,000 = 555.6 hours
    assert read["per_hour"] == pytest.approx(18_000)
    assert read["life_hours"] == pytest.approx(10e6 / 18_000)
    assert by_name["stage 1"]["life_hours"] == pytest.approx(20e6 / 18_000)
    assert report["relays"][0]["life_hours"] <= report["relays"][-1]["life_hours"]
    assert "stage 1" not in report["wears_first"] and "read" in report["wears_first"]
    assert "write" not in by_name
    json.dumps(report)


def test_report_text_names_the_relays_that_wear_first():
    _emu, wear = counted(REF8)
    text = format_wear(wear.report())
    assert "wears first: " in text and "read" in text.splitlines()[-1]
    assert "23 d 4 h" in text      # 556 h, written as every duration is (emu.formatting)


def test_report_without_rated_life():
    _emu, wear = counted(dataclasses.replace(REF8, wear=WearRatings()), cycles=10)
    report = wear.report()
    assert report["wears_first"] == [] and report["relays"][0]["life_hours"] is None
    assert "no rated life" in format_wear(report)


def test_report_of_a_run_without_pulses():
    emu = Emulator(REF8)
    with count_wear(emu) as wear:
        pass
    assert format_wear(wear.report()) == "relay wear: no clock pulses were run"
    assert not emu._observers
