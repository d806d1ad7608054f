"""Watched runs stop where the instruction-by-instruction check stops.

A debugger condition (watchpoints, an instruction count, a call depth) now
tells the engine where it can become true (``emu.Lookout``), and the engine
asks it only there, on block translation. The reference is the check as it
was: the same condition wrapped in a plain function, which the engine asks
after every instruction. Both runs, with breakpoints too, must stop at the
same cycles with the same reason and the same whole state, on every machine
file (engine_support discovers them), with blocks made hot at once.
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import asm
from emu import Observer, load_machine
from emu.debugger import AnyOf, CallDepth, Count, Watch, Watches, call_shape
from emu.testing import programs
from emu.timing import count_wear

from engine_support import MACHINES, boot, full_state, skip_unless_properties_run

SETTINGS = settings(max_examples=60, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
RUNS = 5
CYCLES = 4000


@st.composite
def goals(draw, machine, span: int):
    """What a debugger command may watch for: (kind, argument) pairs, one to three of them."""
    names = [r.name for r in machine.visible_registers] + list(machine.groups) + list(machine.flags)
    shape = call_shape(machine)
    kinds = ["register", "memory", "count"] + (["depth"] if shape.calls else [])
    chosen = []
    for kind in draw(st.lists(st.sampled_from(kinds), min_size=1, max_size=3)):
        if kind == "register":
            chosen.append((kind, draw(st.sampled_from(names))))
        elif kind == "memory":
            chosen.append((kind, draw(st.integers(0, span))))
        elif kind == "count":
            chosen.append((kind, draw(st.integers(1, 60))))
        else:
            chosen.append((kind, draw(st.integers(0, 1))))
    return chosen


def condition(emu, goals):
    """The goals as the debugger's RunPolicy builds them: watchpoints and a goal in one AnyOf."""
    watches = [Watch(n, name=arg) if kind == "register" else Watch(n, address=arg)
               for n, (kind, arg) in enumerate(goals) if kind in ("register", "memory")]
    parts = [Watches(watches, emu)] if watches else []
    for kind, arg in goals:
        if kind == "count":
            parts.append(Count(arg, emu))
        elif kind == "depth":
            parts.append(CallDepth(emu.machine, call_shape(emu.machine), emu.instruction_address, arg, "depth"))
    return AnyOf(parts)


def case(machine, data) -> tuple[list[int], list, frozenset[int]]:
    """A program, goals and breakpoints (up to two) to run it under."""
    words = data.draw(programs(machine))
    span = len(words) + 4
    return (words, data.draw(goals(machine, span)),
            frozenset(data.draw(st.lists(st.integers(0, span), max_size=2))))


def drive(emu, goals, points, *, every_instruction: bool) -> list:
    """Several watched runs in a row (RESUME after a halt); what each ended with."""
    ends = []
    for _ in range(RUNS):
        until = condition(emu, goals)
        asked = (lambda e: until(e)) if every_instruction else until
        stop = emu.run(max_cycles=CYCLES, until=asked, breakpoints=points)
        fired = until.fired
        ends.append((stop.kind, stop.pc, full_state(emu), getattr(fired, "hit", None)))
        if stop.kind == "halted":
            emu.press_resume()
    return ends


@pytest.mark.parametrize("machine_name", sorted(MACHINES))
@SETTINGS
@given(data=st.data())
def test_a_watched_run_stops_where_the_check_after_every_instruction_does(machine_name, data):
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    words, wanted, points = case(machine, data)
    reference = boot(machine, words)
    watched = boot(machine, words)
    watched.blocks.threshold, watched.blocks.warm_up = 1, 0
    assert drive(watched, wanted, points, every_instruction=False) == \
        drive(reference, wanted, points, every_instruction=True)


class _Watching(Observer):
    """Any observer: attached, it makes the engine step phase by phase."""


@pytest.mark.parametrize("machine_name", sorted(MACHINES))
@settings(SETTINGS, max_examples=25)
@given(data=st.data(), hot=st.booleans())
def test_wear_counted_during_a_watched_run_equals_the_count_phase_by_phase(machine_name, data, hot):
    """Wear's counting runners watch as the plain ones do: same stops, and the same counts as
    an observer stepping every phase with the condition asked after every instruction."""
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    words, wanted, points = case(machine, data)
    fast, stepped = boot(machine, words), boot(machine, words)
    stepped.observe(_Watching())
    with count_wear(fast) as fast_wear, count_wear(stepped) as stepped_wear:
        if hot:
            fast_wear.tally.blocks.threshold, fast_wear.tally.blocks.warm_up = 1, 0
        assert drive(fast, wanted, points, every_instruction=False) == \
            drive(stepped, wanted, points, every_instruction=True)
    assert fast_wear.counts == stepped_wear.counts
    assert fast_wear.pulses == stepped_wear.pulses


TALLY = """\
; a turnstile tally: count passengers in r0 and post the count to a word each time
start:  li r0, 0
pass:   inc r0
        st [0x40], r0
        jmp pass
"""


def test_a_store_to_a_watched_word_stops_a_hot_block_right_after_it():
    machine = MACHINES["ref8"]
    image = asm.assemble_text(TALLY, machine).segments
    seen = []
    for every_instruction in (False, True):
        emu = boot(machine, [])
        emu.load(image)
        emu.blocks.threshold, emu.blocks.warm_up = 1, 0
        ends = []
        for _ in range(4):
            until = AnyOf([Watches([Watch(1, address=0x40)], emu)])
            stop = emu.run(max_cycles=5000, until=(lambda e: until(e)) if every_instruction else until)
            ends.append((stop.kind, emu.cycles, until.fired.hit[1:]))
        seen.append(ends)
    assert seen[0] == seen[1]
    assert [hit for _kind, _cycles, hit in seen[0]] == [(0, 1), (1, 2), (2, 3), (3, 4)]


@st.composite
def watched_names(draw, machine):
    """One to three registers, groups or flags, flags drawn as often as the rest."""
    registers = [r.name for r in machine.visible_registers] + list(machine.groups)
    flags = list(machine.flags)
    pools = [registers] + [flags] * bool(flags)
    return draw(st.lists(st.sampled_from(pools[draw(st.integers(0, len(pools) - 1))]), min_size=1, max_size=3))


@pytest.mark.parametrize("machine_name", sorted(MACHINES))
@settings(SETTINGS, max_examples=25)
@given(data=st.data(), threshold=st.sampled_from([1, 3]))
def test_a_hot_block_stops_at_the_first_change_of_a_watched_register_or_flag(machine_name, data, threshold):
    """Watching blocks test what they watch inside the block (loops included): each of a
    run's stops, one per change, lands where the check after every instruction puts it."""
    machine = MACHINES[machine_name]
    skip_unless_properties_run(machine)
    words = data.draw(programs(machine))
    wanted = [("register", name) for name in data.draw(watched_names(machine))]
    points = frozenset(data.draw(st.lists(st.integers(0, len(words)), max_size=1)))
    reference, watched = boot(machine, words), boot(machine, words)
    watched.blocks.threshold, watched.blocks.warm_up = threshold, 0
    assert drive(watched, wanted, points, every_instruction=False) == \
        drive(reference, wanted, points, every_instruction=True)


BEATS = {
    # a metronome: r1 steps a quarter turn a beat; the sum of two positives that comes out
    # negative (0x40 + 0x40) sets v, the next sum (0x80 + 0x40, a negative and a positive)
    # clears it: two's-complement overflow (common practice)
    "ref8": ("""\
start:  li r1, 0
beat:   inc r0
        add r1, 0x40
back:   jmp beat
""", "v", [(0, 1), (1, 0), (0, 1), (1, 0)]),
    # the same on skep's 10-bit accumulator: a quarter turn is 256; carry out of 768 + 256
    "skep": ("""\
        .machine "skep"
start:  ldi a, 0
beat:   inx
        add #256
back:   jmp beat
""", "c", [(0, 1), (1, 0), (0, 1), (1, 0)]),
}


@pytest.mark.parametrize("machine_name", sorted(BEATS))
def test_a_flag_that_changes_inside_a_looping_block_stops_the_run_at_each_change(machine_name):
    """The loop's block keeps the flag's writer (on ref8 it goes round inside its function;
    skep's jumps test flags in their steps, so the jump runs outside it), and each change
    stops the run after that writer, as the check after every instruction does, with the
    values the flag had before and after (the comments in ``BEATS``)."""
    machine = load_machine(machine_name)
    source, flag, changes = BEATS[machine_name]
    image = asm.assemble_text(source, machine)
    beat = image.symbols["beat"]
    seen = []
    for every_instruction in (False, True):
        emu = boot(machine, [])
        emu.load(image.segments)
        emu.blocks.threshold, emu.blocks.warm_up = 1, 0
        ends = []
        for _ in range(len(changes)):
            until = AnyOf([Watches([Watch(1, name=flag)], emu)])
            stop = emu.run(max_cycles=5000, until=(lambda e: until(e)) if every_instruction else until)
            ends.append((stop.kind, stop.pc, emu.cycles, until.fired.hit[1:]))
        seen.append(ends)
        if not every_instruction:
            assert emu.blocks._active[beat][0] >= image.symbols["back"], "the loop was split at the flag's writer"
    assert seen[0] == seen[1]
    assert [hit for _kind, _pc, _cycles, hit in seen[0]] == changes
