"""A make-before-break ring as parts: which stage's event ends each phase, checked
against the RC formulas by hand, and irregularity measured against the design.

duo4 (tests/machines/duo4.toml) lights stages [1], [1, 2], [2], [2, 3], [3],
[3, 1]: each stage picks up while the one before still holds, and the
overlap ends when that one drops out. The formulas are the first-order RC
ones of any electronics primer (common practice; e.g. Horowitz and Hill,
The Art of Electronics, 3rd ed., section 1.4, from memory): a capacitor
charging through R towards V has v(t) = V (1 - e^(-t/RC)), one discharging
from V0 has v(t) = V0 e^(-t/RC); a capacitor across a coil fed through R
sees the Thevenin divider V Rcoil / (R + Rcoil) and R || Rcoil.
"""

from __future__ import annotations

import copy
import dataclasses
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest

import emu
from emu import Emulator, load_machine, machine_from_text
from emu.description import timing_section
from emu.timing import PARTS, monte_carlo, spread_source, timing_model

DUO4_PATH = Path(__file__).parent / "machines" / "duo4.toml"
DUO4_TEXT = DUO4_PATH.read_text(encoding="utf-8")
DUO4 = load_machine(DUO4_PATH)
SUPPLY, COIL, PICK_UP, DROP_OUT, OPERATE, RELEASE = 24.0, 680.0, 14.4, 3.6, 0.010, 0.005
STAGES = {1: (285.0, 52.3e-6), 2: (119.0, 80.5e-6), 3: (182.0, 48.7e-6)}
"""Stage → (series resistor, capacitor), as duo4.toml gives them."""


def pick_up_seconds(stage: int) -> float:
    r, c = STAGES[stage]
    held = SUPPLY * COIL / (r + COIL)
    tau = (r * COIL / (r + COIL)) * c
    return tau * math.log(held / (held - PICK_UP)) + OPERATE


def drop_out_seconds(stage: int) -> float:
    r, c = STAGES[stage]
    held = SUPPLY * COIL / (r + COIL)
    return COIL * c * math.log(held / DROP_OUT) + RELEASE


def test_the_stage_that_changes_ends_each_phase():
    timing = DUO4.timing
    # A [1] ends when 2 picks up; AB [1, 2] when 1 drops out; B [2] when 3 picks up;
    # BC [2, 3] when 2 drops out; C [3] when 1 picks up; CA [3, 1] when 3 drops out
    assert [s + 1 for s in timing.phase_stage] == [2, 1, 3, 2, 1, 3]
    assert timing.phase_event == ("charge", "discharge", "charge", "discharge", "charge", "discharge")
    assert all(stage.mode is None for stage in timing.stages)


def test_each_phase_is_the_rc_event_of_its_stage_by_hand():
    expected = [pick_up_seconds(2), drop_out_seconds(1), pick_up_seconds(3),
                drop_out_seconds(2), pick_up_seconds(1), drop_out_seconds(3)]
    assert timing_model(DUO4).nominal_phase_seconds() == pytest.approx(expected, rel=1e-12)
    # and they are the table's phases: 20, 60, 20, 100, 30, 60 ms
    assert expected == pytest.approx([0.020, 0.060, 0.020, 0.100, 0.030, 0.060], abs=1e-4)


@pytest.mark.parametrize("stage", [1, 2, 3])
def test_at_the_derived_times_the_coil_is_at_its_pick_up_and_drop_out_voltages(stage):
    """The derived times put back into v(t) = V (1 - e^(-t/RC)) and v(t) = V0 e^(-t/RC)."""
    r, c = STAGES[stage]
    held = SUPPLY * COIL / (r + COIL)
    charging = held * (1 - math.exp(-(pick_up_seconds(stage) - OPERATE) / ((r * COIL / (r + COIL)) * c)))
    discharging = held * math.exp(-(drop_out_seconds(stage) - RELEASE) / (COIL * c))
    assert (charging, discharging) == pytest.approx((PICK_UP, DROP_OUT), rel=1e-12)


def test_a_stage_is_lit_several_time_constants_before_it_drops_out():
    """The drop-out starts from the full divider voltage: from its pick-up to its drop-out each
    stage stays lit at least five charging time constants (within 1 % of the full voltage)."""
    seconds = timing_model(DUO4).nominal_phase_seconds()
    phases = DUO4.phases
    for stage, (r, c) in STAGES.items():
        tau = (r * COIL / (r + COIL)) * c
        picked = next(i for i in range(len(phases)) if stage in phases[i].ring and stage not in phases[i - 1].ring)
        lit, i = 0.0, picked
        while True:
            following = (i + 1) % len(phases)
            if stage not in phases[following].ring:
                break          # phase i is the overlap its drop-out ends; it is let go when i begins
            lit += seconds[i]
            i = following
        assert lit > 5 * tau, stage


def raw_timing():
    return copy.deepcopy(tomllib.loads(DUO4_TEXT)["timing"])


def duo4_model(changes=None, stage_changes=None):
    timing = raw_timing()
    timing.update(changes or {})
    for index, extra in (stage_changes or {}).items():
        timing["stage"][index].update(extra)
    return timing_model(dataclasses.replace(DUO4, timing=timing_section(timing, DUO4)))


def no_spread():
    return {f"{name}_tol": 0.0 for name in PARTS} | {"supply_tol": 0.0, "jitter": 0.0}


def test_two_different_pulses_a_turn_are_not_irregularity():
    """A clock built exactly as designed: the cycles are 80 ms (AB + B) and 210 ms
    (BC + C + CA + A), which a plain cycle-to-cycle change would call 90 % irregular."""
    result = monte_carlo(duo4_model(no_spread()), 10, seed=1)
    a, ab, b, bc, c, ca = timing_model(DUO4).nominal_phase_seconds()
    assert (ab + b, bc + c + ca + a) == pytest.approx((0.080, 0.210), abs=2e-4)
    assert np.all(np.abs(result.irregularity) < 1e-12)
    assert result.shortest_high_s[0] == pytest.approx(ab)


def test_irregularity_is_the_change_from_each_cycles_own_nominal_length():
    """Only stage 2's capacitor spread (±20 %), no jitter: every turn alike, the short
    cycle r0 and the long r1 times their nominal lengths, so the turn alternates
    r0, r1, r0, r1 and the irregularity is |r0 - r1| / ((r0 + r1) / 2)."""
    model = duo4_model(no_spread(), {1: {"c_tol": 0.2}})
    result = monte_carlo(model, 2_000, seed=5)
    a, ab, b, bc, c, ca = timing_model(DUO4).nominal_phase_seconds()
    built = result.phase_s
    r0 = (built[:, 1] + built[:, 2]) / (ab + b)
    r1 = (built[:, 3] + built[:, 4] + built[:, 5] + built[:, 0]) / (bc + c + ca + a)
    assert result.irregularity == pytest.approx(np.abs(r0 - r1) / ((r0 + r1) / 2), rel=1e-9)
    assert result.irregularity.max() > 0.05


def test_the_spread_clock_draws_make_before_break_turns():
    source = spread_source(DUO4, seed=3)
    built = source.built_phase_ns / 1e6
    assert built == pytest.approx([20, 60, 20, 100, 30, 60], rel=0.5)
    program = [1, 7, 0]      # li 7, halt
    even, spread = Emulator(DUO4), Emulator(DUO4)
    for emulator in (even, spread):
        emulator.load([(0, program)])
    spread.clock_source = spread_source(DUO4, seed=3)
    assert even.run(max_cycles=50).kind == spread.run(max_cycles=50).kind == "halted"
    assert (even.get("a"), even.cycles) == (spread.get("a"), spread.cycles) == (7, even.cycles)
    assert even.time_ns != spread.time_ns


def duo4_error(old: str, new: str) -> str:
    assert DUO4_TEXT.count(old) == 1, old
    with pytest.raises(emu.MachineError) as caught:
        machine_from_text(DUO4_TEXT.replace(old, new), "duo4.toml")
    return str(caught.value).split("\n")[0]


def line_of(text: str, after: int = 0) -> int:
    lines = DUO4_TEXT.splitlines()
    return lines.index(text, after) + 1


def test_a_ring_whose_phases_change_two_stages_is_refused_at_the_phase():
    # CA lights [1] instead of [3, 1]: from C [3] to it, 1 picks up and 3 drops out at once
    message = duo4_error("ring = [3, 1]", "ring = [1]")
    ring_of_c = line_of("ring = [3]")
    assert message == (f"duo4.toml:{ring_of_c}: error: [[clock.phase]] 5 ('C'): a timed "
                       "make-before-break ring changes one stage from each phase to the next (one picks up, "
                       "or one drops out), but from [3] to [1] (in 'CA') stage 1 picks up and stage 3 drops out")


def test_mode_has_no_place_in_a_make_before_break_ring():
    message = duo4_error("r_ohm = 285\n", "r_ohm = 285\nmode = \"charge\"\n")
    assert message == (f"duo4.toml:{line_of('r_ohm = 285') + 1}: error: [[timing.stage]] 1: 'mode' has no place "
                       "when a phase lights 2 stages ('AB'): then each stage picks up, ending one phase, and "
                       "drops out, ending another, as the ring says; leave 'mode' out")


def test_every_stage_of_a_make_before_break_ring_needs_both_events():
    message = duo4_error("release_ms = 5\n", "")
    assert message.endswith("error: [[timing.stage]] 1: missing key 'release_ms' (the release time in milliseconds)")


def test_a_stage_that_never_changes_times_nothing():
    # stage 4 lit in every phase: it never picks up nor drops out
    text = DUO4_TEXT.replace("stages = 3", "stages = 4")
    for ring in ("[1]", "[1, 2]", "[2]", "[2, 3]", "[3]", "[3, 1]"):
        text = text.replace(f"ring = {ring}\n", f"ring = {ring[:-1]}, 4]\n", 1)
    text = text.replace("[fetch]", "[[timing.stage]]\nr_ohm = 100\nc_uf = 10\n\n[fetch]")
    with pytest.raises(emu.MachineError) as caught:
        machine_from_text(text, "duo4.toml")
    assert str(caught.value).split("\n")[0].endswith(
        "error: [clock]: ring stage 4 never picks up or drops out, so its parts time nothing")
