"""Which instructions call and return: the machine file's marks, else read from the micro-steps.

Stepping over a call and running to the end of a routine need to know what
a call is, and the machine description must stay the only place that says
so. A file that marks its calls and returns (``call = "stack"`` or
``call = "link"``, ``returns = true`` in an ``[[instruction]]``) is taken
at its word, which is the only way a link-register machine can say it.

For a file with no marks at all the shape is inferred, which works for a
stack machine: a *call* is an instruction that writes the program counter
and writes memory at an address taken from a register it also moves (the
stack pointer); a *return* writes the program counter from memory read at
an address taken from that register. No mnemonic is looked at.
"""

from __future__ import annotations

from dataclasses import dataclass

from emu import Machine
from emu.description.notation import Assign, Mem, Name, Offset, walk

__all__ = ["CallShape", "call_shape", "inferred_call_shape"]


@dataclass(frozen=True)
class CallShape:
    """The call and return instructions of a machine, by instruction index."""
    calls: frozenset[int]
    returns: frozenset[int]

    def kind(self, machine: Machine, first_word: int) -> str | None:
        """``"call"``, ``"return"`` or None for the instruction starting with ``first_word``."""
        index = machine.decode_table[first_word]
        if index in self.calls:
            return "call"
        if index in self.returns:
            return "return"
        return None


def _registers_in(expr, machine: Machine) -> set[str]:
    """Registers and groups an expression reads (walk yields the expression itself too)."""
    return {node.name for node in walk(expr)
            if isinstance(node, Name) and (node.name in machine.registers or node.name in machine.groups)}


def _assignments(instruction):
    for step in instruction.steps:
        for statement in step.statements:
            if isinstance(statement, Assign):
                yield statement


def _stack_writes(instruction, machine: Machine) -> set[str]:
    """Registers that address a memory write and step themselves up or down."""
    pc = machine.program_counter
    addressing, stepped = set(), set()
    for st in _assignments(instruction):
        if isinstance(st.target, Mem):
            addressing |= _registers_in(st.target.address, machine) - {pc}
        elif _is_step_of(st.value, st.target.name):
            stepped.add(st.target.name)
    return addressing & stepped


def _is_step_of(value, name: str) -> bool:
    return isinstance(value, Offset) and value.base == Name(name)


def _jumps(instruction, machine: Machine) -> bool:
    """Writes the program counter with something other than its own next value."""
    pc = machine.program_counter
    return any(isinstance(st.target, Name) and st.target.name == pc and not _is_step_of(st.value, pc)
               for st in _assignments(instruction))


def _pc_from_stack(instruction, machine: Machine, stack: str) -> bool:
    pc = machine.program_counter
    for st in _assignments(instruction):
        if isinstance(st.target, Name) and st.target.name == pc:
            for node in walk(st.value):
                if isinstance(node, Mem) and stack in _registers_in(node.address, machine):
                    return True
    return False


def call_shape(machine: Machine) -> CallShape:
    """The marked calls and returns, or (for a file that marks none) the inferred ones."""
    if any(ins.call is not None or ins.returns for ins in machine.instructions):
        return _marked_shape(machine)
    return inferred_call_shape(machine)


def _marked_shape(machine: Machine) -> CallShape:
    calls = frozenset(ins.index for ins in machine.instructions if ins.call is not None)
    returns = frozenset(ins.index for ins in machine.instructions if ins.returns)
    return CallShape(calls, returns)


def inferred_call_shape(machine: Machine) -> CallShape:
    """The calls and returns guessed from the micro-steps (a file that marks none)."""
    calls, stacks = set(), set()
    for ins in machine.instructions:
        registers = _stack_writes(ins, machine)
        if registers and _jumps(ins, machine):
            calls.add(ins.index)
            stacks |= registers
    stack = sorted(stacks)[0] if stacks else None
    returns = set()
    if stack is not None:
        returns = {ins.index for ins in machine.instructions if _pc_from_stack(ins, machine, stack)}
    return CallShape(frozenset(calls), frozenset(returns))
