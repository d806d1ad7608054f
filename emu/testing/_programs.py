"""Random valid programs for a machine, drawn from its own instruction table.

Programs are built with the machine's own encoder, not the assembler, so
a property that uses them stands on the description alone. Address-like
fields draw small values, so that jumps, loads and stores mostly land
inside the program rather than in empty memory.
"""

from __future__ import annotations

from hypothesis import strategies as st

from ..description import Machine

__all__ = ["instructions", "programs"]


@st.composite
def instructions(draw, machine: Machine, span: int):
    """One encoded instruction (a list of words); halting ones drawn about one time in ten.

    ``span`` bounds the number fields whose range reaches that far, so an
    address operand points into a program of about that many words.
    """
    halting = [i for i in machine.instructions if i.drives_halt]
    others = [i for i in machine.instructions if not i.drives_halt]
    pool = halting if halting and (not others or draw(st.integers(0, 9)) == 0) else others
    ins = pool[draw(st.integers(0, len(pool) - 1))]     # an index: hypothesis need not look at the objects
    values = {}
    for name, fld in ins.fields.items():
        kind = fld.kind
        if kind.is_register:
            values[name] = draw(st.integers(0, len(kind.registers) - 1))
        elif kind.high >= span:
            low = max(kind.low, 0)
            values[name] = draw(st.integers(low, max(low, span)))
        else:
            values[name] = draw(st.integers(kind.low, kind.high))
    return ins.encode(values)


@st.composite
def programs(draw, machine: Machine, max_instructions: int = 24):
    """A program of 1 to ``max_instructions`` random instructions, as words from address 0.

    It never runs past the machine's memory: a machine with little memory
    gets fewer instructions.
    """
    count = draw(st.integers(1, max_instructions))
    words: list[int] = []
    for _ in range(count):
        more = draw(instructions(machine, span=3 * count))
        if len(words) + len(more) > machine.memory_words:
            break
        words.extend(more)
    return words
