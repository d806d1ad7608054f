"""skep's clock: two pulses a turn with a hold point after each, its parts, `relaybench clock`.

The instruction semantics are in tests/test_instructions_skep.py, the
programs in tests/test_programs_skep.py; P1–P7 run on skep through
tests/engine_support.py, which finds every machine under emu/machines/.
"""

from __future__ import annotations

import json
import math

import pytest

import emu
from emu.timing import count_wear, timing_model

from cli_support import cli
from engine_support import boot, encode

SKEP = emu.load_machine("skep")


def test_the_ring_gives_two_pulses_a_turn_each_followed_by_a_hold_point():
    phases = [(p.name, p.level, p.hold) for p in SKEP.phases]
    assert phases == [("pulse1", 1, False), ("gap1", 0, True), ("pulse2", 1, False), ("gap2", 0, True)]
    assert [p.duration_ns for p in SKEP.phases] == [48_000_000, 30_000_000, 40_000_000, 35_000_000]


@pytest.mark.parametrize("nops, frozen_at", [(0, "gap1"), (1, "gap2"), (2, "gap1"), (3, "gap2")])
def test_a_stop_freezes_right_after_its_cycle_on_either_pulse(nops, frozen_at):
    """Power-on is at gap1, time 0, so the pulses go pulse2 (entering gap2 at 30 + 40 ms),
    pulse1 (entering gap1 a turn, 153 ms, after power-on), …: an odd cycle count freezes at
    gap2, an even one at gap1, and no further cycle runs either way."""
    words = encode(SKEP, "nop") * nops + encode(SKEP, "stop")
    machine = boot(SKEP, words)
    stop = machine.run(max_cycles=100)
    cycles = nops + 2
    assert (stop.kind, stop.address) == ("halted", nops)
    assert machine.cycles == cycles and machine.pc == nops + 1
    assert SKEP.phases[machine.phase_index].name == frozen_at
    assert machine.time_ns == cycles // 2 * 153_000_000 + (70_000_000 if cycles % 2 else 0)


def test_stage_1_by_hand():
    """Stage 1 worked with the formulas of any primer (common practice): the capacitor across
    the 430-ohm coil is fed through 68 ohms from 24 V (no diode), so it charges towards the
    divider voltage with tau = (68 || 430) C, until the 16 V pick-up; then the armature's 8 ms."""
    held = 24.0 * 430 / (68 + 430)
    tau = (68 * 430 / (68 + 430)) * 470e-6
    expected = tau * math.log(held / (held - 16.0)) + 0.008
    assert timing_model(SKEP).nominal_phase_seconds()[0] == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(0.04881, abs=5e-5)


def test_the_parts_give_the_phase_table():
    model = timing_model(SKEP)
    for phase, seconds in zip(SKEP.phases, model.nominal_phase_seconds()):
        assert seconds == pytest.approx(phase.duration_ns * 1e-9, rel=0.02), phase.name


def test_relaybench_clock_reports_both_hold_points(capsys):
    code, out, err = cli(capsys, "clock", "--machine", "skep", "--samples", "5000")
    assert code == 0 and err == ""
    lines = out.splitlines()
    assert lines[1] == "nominal, from the phase table: 13.1 Hz, period 76.5 ms, duty cycle 57.5%"
    held = [line.split()[0] for line in lines if line.endswith("(hold point)")]
    assert held == ["gap1", "gap2"]
    code, out, _err = cli(capsys, "clock", "--machine", "skep", "--samples", "5000", "--json")
    report = json.loads(out)
    assert report["nominal"]["turn_ms"] == 153.0 and report["nominal"]["period_ms"] == 76.5


class _EveryPhase(emu.Observer):
    """Attached only to send the run down the phase-by-phase path."""


@pytest.mark.parametrize("stepped", [False, True], ids=["fast path", "phase by phase"])
def test_the_carry_in_relay_counts_only_on_pulses_where_carry_is_set(stepped):
    """adc's result step drives "c-in if c": of two adc's, one after sec and one after
    clc, only the first operates the relay. Counted by hand from skep.toml: the fetch
    drives adr-pc on each of the 5 instructions and each adc #k reads its constant with
    adr-pc once more (7 in all); sec, clc and stop take 2 cycles, adc #k 4, so 14 pulses,
    7 turns of the ring, each operating every ring relay once."""
    words = (encode(SKEP, "sec") + encode(SKEP, "adc #k", k=1) + encode(SKEP, "clc")
             + encode(SKEP, "adc #k", k=1) + encode(SKEP, "stop"))
    machine = boot(SKEP, words)
    if stepped:
        machine.observe(_EveryPhase())
    with count_wear(machine) as wear:
        assert machine.run(max_cycles=100).kind == "halted"
    assert machine.get("a") == 3
    counts = wear.counts
    assert counts["c-in"] == 1 and counts["alu-add"] == 2 and counts["adr-pc"] == 7
    assert counts["c-set"] == 1 and counts["c-clr"] == 1 and counts["halt-set"] == 1
    assert wear.pulses == 14 and [counts[k] for k in ("K1", "K2", "K3", "K4")] == [7, 7, 7, 7]
