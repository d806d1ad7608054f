"""Every micro-step of a machine numbered, with what it may write and which step follows it.

Traces (``_cycle_trace``) keep a cycle as one small number, the step that
ran; this table says what that number means: the description's step, the
sequencer's count shown at it, the registers and flags it may write and how
to read them from the state, and the step after it when the state does not
decide; and narrowed copies of steps that write a register a field chooses,
for when the first word has chosen it. Made once per machine.
"""

from __future__ import annotations

from itertools import product
from operator import itemgetter

from ..description import Instruction, Machine, Step
from ..description.notation import Assign, FlagsOnly, Name
from ._line_gates import per_machine

__all__ = ["StepPlaces", "step_places"]


class StepPlaces:
    """Every micro-step of a machine numbered: ``places[n]`` is (instruction index or -1 for the
    fetch, step index), ``number`` the reverse, ``steps[n]`` the description's step, ``shown[n]``
    the sequencer's count at it (fetch steps first) and ``halts`` the numbers that drive halt.

    The machine's own steps are numbered below ``own``; past it come *narrowed copies*: the same
    step when the register fields of its instruction's first word are known, so that one that
    may write any register of a field's kind writes one (``writes``; see ``variants``)."""

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
        self.position = position
        self.writes = [self._positions(machine, step, None if i < 0 else machine.instructions[i])
                       for (i, _k), step in zip(self.places, self.steps)]
        """Per step, the positions (in ``names``: registers, then flags) of what it may write."""
        self.own = len(self.places)
        self.chosen: dict[int, tuple[str, ...]] = {}
        """Instruction index → its register fields wholly in the first word that a step writes."""
        self.variants: dict[tuple[int, tuple], tuple[int, ...]] = {}
        """(instruction index, sorted (field, register index) of its ``chosen`` fields) → the
        numbers of its steps with those registers known (a narrowed copy where that narrows)."""
        self._narrow_all(machine)
        self.readers = [_reader([self.slots[i] for i in positions]) for positions in self.writes]
        """Per step, a function of the state giving the values at ``writes``."""
        first = {index: self.number[(index, 0)] if machine.instructions[index].steps else 0
                 for index in set(machine.decode_table) if index >= 0}
        self.first_step = [first.get(index, -1) for index in machine.decode_table]
        """First word → the number of its instruction's first step (0 for one with no steps of its
        own, -1 for an undefined word): where the sequencer goes after the last fetch step."""
        self.following = [_following(machine, self.number, place) for place in self.places[:self.own]]
        """Per own step, the number of the step that follows it whatever the state, or -1 where the state
        decides (the last fetch step decodes; a jump; a decode group's deciding step); 0 is the
        first fetch step."""


    def _positions(self, machine: Machine, step: Step, ins: Instruction | None, fixed: dict | None = None):
        return tuple(sorted(self.position[name] for name in _written(machine, step, ins, fixed or {})))

    def _narrow_all(self, machine: Machine) -> None:
        """Fill ``chosen`` and ``variants``, adding the narrowed copies they need: a whole
        instruction traced for a known first word records only the registers its fields name."""
        copies: dict[tuple[int, tuple[int, ...]], int] = {}
        for ins in machine.instructions:
            chosen = tuple(sorted({st.target.name for step in ins.steps for st in step.statements
                                   if isinstance(st, Assign) and isinstance(st.target, Name)
                                   and st.target.name in ins.fields
                                   and ins.fields[st.target.name].kind.is_register
                                   and all(piece.word == 0 for piece in ins.fields[st.target.name].pieces)}))
            if not chosen or ins.drives_halt or ins.index in machine.decode_groups:
                continue
            self.chosen[ins.index] = chosen
            for registers in product(*(range(len(ins.fields[name].kind.registers)) for name in chosen)):
                fixed = dict(zip(chosen, registers))
                numbers = []
                for k, step in enumerate(ins.steps):
                    n = self.number[(ins.index, k)]
                    narrow = self._positions(machine, step, ins, fixed)
                    if narrow != self.writes[n]:
                        if (n, narrow) not in copies:
                            copies[(n, narrow)] = len(self.places)
                            self.places.append(self.places[n])
                            self.steps.append(step)
                            self.shown.append(self.shown[n])
                            self.writes.append(narrow)
                        n = copies[(n, narrow)]
                    numbers.append(n)
                self.variants[(ins.index, tuple(sorted(fixed.items())))] = tuple(numbers)


def _following(machine: Machine, number: dict, place: tuple[int, int]) -> int:
    index, step = place
    if index < 0:
        return number[(-1, step + 1)] if step + 1 < len(machine.fetch) else -1
    steps = machine.instructions[index].steps
    group = machine.decode_groups.get(index)
    if steps[step].jump or group is not None and step == group.decode_step:
        return -1
    return number[(index, step + 1)] if step + 1 < len(steps) else 0


def _reader(slots: list[int]):
    if len(slots) > 1:
        return itemgetter(*slots)
    if slots:
        slot = slots[0]
        return lambda state: (state[slot],)
    return lambda state: ()


def _written(machine: Machine, step: Step, ins: Instruction | None, fixed: dict[str, int]) -> set[str]:
    """Registers and flags ``step`` may write: a register field any register (or group) of its kind
    (the one ``fixed`` names, when it names the field), a group its parts."""
    written: set[str] = set()
    for st in step.statements:
        if isinstance(st, (Assign, FlagsOnly)):
            written.update(st.flags)
        if isinstance(st, Assign) and isinstance(st.target, Name):
            name = st.target.name
            fld = ins.fields.get(name) if ins is not None else None
            if fld is None or not fld.kind.is_register:
                chosen = (name,)
            else:
                chosen = (fld.kind.registers[fixed[name]],) if name in fixed else fld.kind.registers
            for one in chosen:
                written.update(machine.groups[one].parts if one in machine.groups else (one,))
    return written


step_places = per_machine(StepPlaces)
