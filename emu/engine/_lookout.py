"""Where a run's stopping condition can become true, so the fast path asks it only there.

A debugger condition (an instruction count, a call depth, watched values)
used to be asked after every instruction, which kept the run off block
translation and cost a Python call per instruction. A condition that can
say what it depends on hands the engine a ``Lookout``; the engine turns it
into a table over first words (``stop_words``) that the generated loops
look up, and into a cycle budget, and asks the condition only at those
boundaries. Asking more often than needed is always allowed: a condition
must give the same answer wherever it is asked, which is what lets the
stepping path keep asking after every instruction.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..description import Instruction, Machine
from ..description.notation import Assign, FlagsOnly, Mem, Name

__all__ = ["AFTER", "BEFORE", "WRITES", "Lookout", "change_test", "stop_words", "stores_memory", "watched_slots"]


@dataclass(frozen=True)
class Lookout:
    """The boundaries at which a condition must be asked.

    ``instructions``: indices (as ``Machine.decode_table`` gives them) of
    instructions around which it is asked, at the boundary before and the
    one after each. ``registers``: register, group or flag names; it is
    asked after an instruction that may write one once one of them holds a
    value other than when the lookout was given. ``memory``: addresses;
    it is asked after each instruction that stores to one. ``within``: it is
    asked again after at most this many instructions (None: no such bound).

    A lookout with ``within`` is asked for anew after each ask; one without
    it holds until the run ends, so a condition whose lookout changes as it
    is asked (a first answer due at once) gives a ``within`` until then.
    """
    instructions: frozenset[int] = frozenset()
    registers: frozenset[str] = frozenset()
    memory: frozenset[int] = frozenset()
    within: int | None = None

    def __or__(self, other: "Lookout") -> "Lookout":
        withins = [w for w in (self.within, other.within) if w is not None]
        return Lookout(self.instructions | other.instructions, self.registers | other.registers,
                       self.memory | other.memory, min(withins) if withins else None)


AFTER, BEFORE, WRITES = 1, 2, 4
"""Bits of a stop word: ask at the boundary after the instruction; at the one before it;
after it when a watched register no longer holds its value (``change_test``)."""


def stop_words(machine: Machine, lookout: Lookout) -> bytes:
    """Per first word: ``AFTER | BEFORE`` for the lookout's instructions, ``WRITES`` where
    the instruction may write a watched register or flag, else 0.

    Memory is not in it: the block runner watches stores to ``memory``
    word by word; the plain fused path (``stores_memory``) stops after
    every instruction that may store.
    """
    names = _expanded(machine, lookout.registers)
    table = bytearray(len(machine.decode_table))
    fetch = _names_written(machine, machine.fetch, None, None)
    everywhere = bool(names & fetch)
    for word, index in enumerate(machine.decode_table):
        if index in lookout.instructions:
            table[word] = AFTER | BEFORE
        if everywhere:
            table[word] |= WRITES
        elif names and index >= 0:
            group = machine.decode_groups.get(index)
            members = group.members if group is not None else (index,)
            if any(names & _names_written(machine, machine.instructions[i].steps, machine.instructions[i], word)
                   for i in members):
                table[word] |= WRITES
    return bytes(table)


_change_tests: dict[tuple, object] = {}


def watched_slots(machine: Machine, lookout: Lookout) -> tuple[int, ...]:
    """The state slots of the lookout's registers and flags (a group's parts), in order."""
    return tuple(sorted({machine.registers[n].slot if n in machine.registers else machine.flags[n].slot
                         for n in _expanded(machine, lookout.registers)}))


def change_test(machine: Machine, state: list, slots: tuple[int, ...]):
    """A function true once a watched slot (``watched_slots``) holds a value other than it does now.

    Its code is made once per machine and set of slots; the values are bound at each call.
    """
    key = (id(machine), slots)
    factory = _change_tests.get(key)
    if factory is None:
        test = " or ".join(f"s[{slot}] != v{k}" for k, slot in enumerate(slots)) or "False"
        values = "".join(f", v{k}" for k in range(len(slots)))
        namespace: dict = {}
        exec(f"def factory(s{values}):\n    return lambda: {test}\n", namespace)
        factory = _change_tests[key] = namespace["factory"]
    return factory(state, *(state[slot] for slot in slots))


def stores_memory(machine: Machine) -> bytes:
    """Per first word: 1 where the instruction (or a member of its decode group) may store."""
    table = bytearray(len(machine.decode_table))
    for word, index in enumerate(machine.decode_table):
        if index >= 0:
            group = machine.decode_groups.get(index)
            members = group.members if group is not None else (index,)
            table[word] = any(isinstance(st, Assign) and isinstance(st.target, Mem)
                              for i in members for step in machine.instructions[i].steps
                              for st in step.statements)
    return bytes(table)


def _expanded(machine: Machine, names) -> set[str]:
    """Registers and flags, a group standing for its parts."""
    found: set[str] = set()
    for name in names:
        group = machine.groups.get(name)
        found.update(group.parts if group is not None else (name,))
    return found


def _names_written(machine: Machine, steps, ins: Instruction | None, word: int | None) -> set[str]:
    """Registers and flags the steps may write, register fields read from ``word`` where they lie
    in it (a field in a later word may name any register of its kind)."""
    written: set[str] = set()
    values = ins.decode([word] + [0] * (ins.word_count - 1)) if ins is not None else {}
    for step in steps:
        for st in step.statements:
            if isinstance(st, (Assign, FlagsOnly)):
                written.update(st.flags)
            if not isinstance(st, Assign) or not isinstance(st.target, Name):
                continue
            name = st.target.name
            fld = ins.fields.get(name) if ins is not None else None
            if fld is not None and fld.kind.is_register:
                registers = fld.kind.registers
                if all(p.word == 0 for p in fld.pieces) and values[name] < len(registers):
                    written.add(registers[values[name]])
                else:
                    written.update(registers)
            elif name in machine.groups:
                written.update(machine.groups[name].parts)
            else:
                written.add(name)
    return _expanded(machine, written)
