"""Free cycles run one micro-step each, recorded compactly for an observer that writes them out.

A waveform of every cycle needs each micro-step's own effect, so the fused
fast path will not do; but the stepping path pays for every phase of the
ring and every hook. Between a cycle boundary and the next halt, while the
hold line is low and the clock is nominal, nothing but the micro-steps
varies: the ring, clock and times of each cycle follow from the phase
table. ``trace_cycles`` runs such a stretch and keeps, per cycle, which
step ran (a place number, ``_step_places``), the gated lines that fired on
it and the registers and flags it may have written. Straight runs of steps
and whole instructions go through generated recording variants
(``_trace_chains``); the rest through the same compiled step functions as
the stepping path. An observer that accepts traces
(``Observer.accepts_trace``) turns that into its own output; the ring and
counters are brought up to date as if the stretch had been stepped.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ._step_places import step_places
from ._trace_chains import trace_chains

__all__ = ["CycleTrace", "trace_cycles"]

_FETCH_START = (-1, 0)


@dataclass
class CycleTrace:
    """A stretch of free cycles: the ``k``-th ran step ``places[k]`` (numbers of ``StepPlaces``),
    ``fired[k]`` its gated lines that fired (absent when none did); ``values`` holds, cycle after
    cycle, the values each step left in what it may write (``StepPlaces.writes``).
    ``start_cycle``/``start_time_ns``/``start_phase`` are where it began (a cycle boundary);
    ``after`` is the sequencer's count where it ended."""
    start_cycle: int
    start_time_ns: int
    start_phase: int
    places: list[int] = field(default_factory=list)
    values: list[int] = field(default_factory=list)
    fired: dict[int, tuple[str, ...]] = field(default_factory=dict)
    after: int = 0


def trace_cycles(emu, budget: int, trace: CycleTrace) -> None:
    """Run up to ``budget`` cycles of ``emu`` from a cycle boundary into ``trace`` (begun there),
    stopping before a step that drives halt (the stepping path places the latch); the caller has
    checked that nothing else can happen in them (hold line low, nominal clock, no counting of
    lines). Interrupted, ``trace`` still holds every step counted as run (``values`` may hold
    some more, after theirs)."""
    machine = emu.machine
    table = step_places(machine)
    number = table.number
    ring = emu.ring
    s, pc, ir = emu._s, emu._pc, emu._ir
    fetch_steps, instruction_steps, jumps, groups = emu._fetch_steps, emu._instruction_steps, emu._jumps, emu._groups
    decode = emu._decode
    run = [fetch_steps[k] if i < 0 else instruction_steps[i][k] for i, k in table.places]
    static = table.following
    halting = [n in table.halts for n in range(len(table.places))]
    gate_of = [emu._gates.gates.get(place) for place in table.places]
    readers = table.readers
    places, fired = trace.places, trace.fired
    put_place, put_places, put_values = places.append, places.extend, trace.values.extend
    chains = trace_chains(emu)
    first_step = table.first_step
    run_fetch, fetch_length, fetch_places = chains.fetch or (None, budget + 1, ())
    run_whole, longest = chains.run_whole, chains.longest or budget + 1
    chains = chains.at
    n = number[emu._seq]
    address = emu._instruction_address
    left = budget
    try:
        while left > 0:
            chain = chains[n]
            if chain is not None and chain[1] <= left:
                run_chain, length, chain_places, following = chain
                put_values(run_chain())
                put_places(chain_places)
                left -= length
                n = following
                continue
            if n == 0 and longest <= left:
                was = left
                left = run_whole(left, put_values, put_places)
                if left != was:   # at the next instruction's fetch: one that ``run_whole`` cannot take
                    continue
            if n == 0 and fetch_length <= left:   # the fetch steps at once, then decoding
                address = s[pc]
                put_values(run_fetch())
                put_places(fetch_places)
                left -= fetch_length
                n = first_step[s[ir]]
                if n < 0:
                    emu._count_undefined(address)
                    n = 0
                continue
            if halting[n]:
                break
            gate = gate_of[n]
            if gate is not None:
                lines = gate()
                if lines:
                    fired[len(places)] = lines
            if n == 0:
                address = s[pc]
            following = static[n]
            if following >= 0:
                run[n]()
            else:   # the sequencer's choice: decoding, a jump or a decode group, as ``_microstep`` makes it
                index, step = table.places[n]
                if index < 0:
                    fetch_steps[step]()
                    decoded = decode[s[ir]]
                    if decoded < 0:
                        emu._count_undefined(address)
                    seq = _FETCH_START if decoded < 0 or not instruction_steps[decoded] else (decoded, 0)
                else:
                    jump = jumps[index][step]
                    after = step + 1 if jump is None else jump()
                    instruction_steps[index][step]()
                    grouped = groups.get(index)
                    if grouped is not None and step == grouped[0].decode_step:
                        index = grouped[0].member_for([s[slot] for slot in grouped[1]])
                        if index < 0:
                            emu._count_undefined(address)
                    seq = (index, after) if index >= 0 and after < len(instruction_steps[index]) else _FETCH_START
                following = number[seq]
            put_values(readers[n](s))
            put_place(n)   # last: ``places`` counts the steps done, also when interrupted
            left -= 1
            n = following
    finally:   # also when interrupted: the counters say what the steps did
        emu._instruction_address = address
        seq = table.places[n]
        emu._seq = seq
        ran = len(places)
        if ran:   # an instruction finished wherever the first fetch step came next
            emu.cycles += ran
            emu.instructions += places.count(0) - (places[0] == 0) + (n == 0)
            ring.skip_cycles(ran)
            emu._released = False
        trace.after = table.shown[n]
