"""Free cycles run one micro-step each, recorded compactly for an observer that writes them out.

A waveform of every cycle needs each micro-step's own effect, so the fused
fast path will not do; but the stepping path pays for every phase of the
ring and every hook. Between a cycle boundary and the next halt, while the
hold line is low and the clock is nominal, nothing but the micro-steps
varies: the ring, clock and times of each cycle follow from the phase
table. ``trace_cycles`` runs such a stretch through the same compiled step
functions as the stepping path and keeps, per cycle, which step ran (a
place number), the gated lines that fired on it and the registers and
flags after it. An observer that accepts traces (``Observer.accepts_trace``)
turns that into its own output; the ring and counters are brought up to
date as if the stretch had been stepped.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from operator import itemgetter

from ..description import Instruction, Machine, Step
from ..description.notation import Assign, FlagsOnly, Name
from ._line_gates import per_machine

__all__ = ["CycleTrace", "StepPlaces", "step_places", "trace_cycles"]

_FETCH_START = (-1, 0)


class StepPlaces:
    """Every micro-step of a machine numbered: ``places[n]`` is (instruction index or -1 for the
    fetch, step index), ``number`` the reverse, ``steps[n]`` the description's step, ``shown[n]``
    the sequencer's count at it (fetch steps first) and ``halts`` the numbers that drive halt."""

    def __init__(self, machine: Machine):
        self.places = [(-1, j) for j in range(len(machine.fetch))]
        self.places += [(ins.index, k) for ins in machine.instructions for k in range(len(ins.steps))]
        self.number = {place: n for n, place in enumerate(self.places)}
        self.steps = [machine.fetch[k] if i < 0 else machine.instructions[i].steps[k] for i, k in self.places]
        self.shown = [k if i < 0 else len(machine.fetch) + k for i, k in self.places]
        self.halts = frozenset(n for n, step in enumerate(self.steps) if step.drives_halt)
        names = [*machine.registers, *machine.flags]
        position = {name: i for i, name in enumerate(names)}
        self.slots = [machine.registers[name].slot for name in machine.registers]
        self.slots += [flag.slot for flag in machine.flags.values()]
        self.writes = [tuple(sorted(position[name] for name in _written(machine, step, None if i < 0 else
                                                                        machine.instructions[i])))
                       for (i, _k), step in zip(self.places, self.steps)]
        """Per step, the positions (in ``names``: registers, then flags) of what it may write."""
        self.readers = [_reader([self.slots[i] for i in positions]) for positions in self.writes]
        """Per step, a function of the state giving the values at ``writes``."""


def _reader(slots: list[int]):
    if len(slots) > 1:
        return itemgetter(*slots)
    if slots:
        slot = slots[0]
        return lambda state: (state[slot],)
    return lambda state: ()


def _written(machine: Machine, step: Step, ins: Instruction | None) -> set[str]:
    """Registers and flags ``step`` may write: a register field any register (or group) of its kind, a
    group its parts."""
    written: set[str] = set()
    for st in step.statements:
        if isinstance(st, (Assign, FlagsOnly)):
            written.update(st.flags)
        if isinstance(st, Assign) and isinstance(st.target, Name):
            name = st.target.name
            fld = ins.fields.get(name) if ins is not None else None
            chosen = fld.kind.registers if fld is not None and fld.kind.is_register else (name,)
            for one in chosen:
                written.update(machine.groups[one].parts if one in machine.groups else (one,))
    return written


step_places = per_machine(StepPlaces)


@dataclass
class CycleTrace:
    """A stretch of free cycles: the ``k``-th ran step ``places[k]`` (numbers of ``StepPlaces``),
    ``fired[k]`` its gated lines that fired (absent when none did); ``values`` holds, cycle after
    cycle, the values each step left in what it may write (``StepPlaces.writes``). ``start_cycle``/``start_time_ns``/``start_phase``
    are where it began (a cycle boundary); ``after`` is the sequencer's count where it ended."""
    start_cycle: int
    start_time_ns: int
    start_phase: int
    places: list[int] = field(default_factory=list)
    values: list[int] = field(default_factory=list)
    fired: dict[int, tuple[str, ...]] = field(default_factory=dict)
    after: int = 0


def trace_cycles(emu, budget: int) -> CycleTrace:
    """Run up to ``budget`` cycles of ``emu`` from a cycle boundary, stopping before a step that
    drives halt (the stepping path places the latch); the caller has checked that nothing else
    can happen in them (hold line low, nominal clock, no counting of lines)."""
    machine = emu.machine
    table = step_places(machine)
    number = table.number
    ring = emu.ring
    trace = CycleTrace(emu.cycles, ring.time_ns, ring.index)
    s, pc, ir = emu._s, emu._pc, emu._ir
    fetch_steps, instruction_steps, jumps, groups = emu._fetch_steps, emu._instruction_steps, emu._jumps, emu._groups
    decode, last_fetch = emu._decode, len(fetch_steps) - 1
    run = [fetch_steps[k] if i < 0 else instruction_steps[i][k] for i, k in table.places]
    static = [_static_next(table, emu, place) for place in table.places]
    halting = [n in table.halts for n in range(len(table.places))]
    gate_of = [emu._gates.gates.get(place) for place in table.places]
    readers = table.readers
    places, fired = trace.places, trace.fired
    put_place, put_values = places.append, trace.values.extend
    n = number[emu._seq]
    address = emu._instruction_address
    finished = 0
    try:
        for _ in range(budget):
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
            if not following:
                finished += 1
            put_place(n)   # after the step: ``places`` counts the steps done, also when interrupted
            put_values(readers[n](s))
            n = following
    finally:   # also when interrupted: the counters say what the steps did
        emu._instruction_address = address
        seq = table.places[n]
        emu._seq = seq
        ran = len(places)
        if ran:
            emu.cycles += ran
            emu.instructions += finished
            ring.skip_cycles(ran)
            emu._released = False
    trace.after = table.shown[n]
    return trace


def _static_next(table: StepPlaces, emu, place: tuple[int, int]) -> int:
    """The number of the step that follows ``place`` whatever the state, or -1 where the state
    decides (the last fetch step decodes; a jump; a decode group's deciding step).
    Number 0 is the first fetch step."""
    index, step = place
    if index < 0:
        return table.number[(-1, step + 1)] if step + 1 < len(emu._fetch_steps) else -1
    group = emu._groups.get(index)
    if emu._jumps[index][step] is not None or group is not None and step == group[0].decode_step:
        return -1
    return table.number[(index, step + 1)] if step + 1 < len(emu._instruction_steps[index]) else 0
