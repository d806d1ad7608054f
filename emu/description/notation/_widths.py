"""How many bits a micro-step value has: one rule, shared by the design-rule checker and the compiler.

The rule (emu/machines/README.md, "Widths"): a register, group or field has
its declared width (a field selecting groups: theirs), a flag one bit; ``mem[…]`` and ``in(…)`` are a data word;
``{a, b, c}`` is the sum of its parts; ``x[h:l]`` is h−l+1 bits; ``sext``/
``zext`` give the width they name; ``x + k`` is as wide as x; an ALU result
is as wide as its widest operand; a choice as wide as its wider branch;
``hi``/``lo`` are the top and the bottom data word; conditions are one bit.
A constant has no width of its own — it takes the width of where it stands —
so here it counts the bits it needs, and the checker holds it to its place.
"""

from __future__ import annotations

from ._ir import (Call, Choose, Condition, Const, Extend, Input, Join, Logic, Mem, Name, Not, Offset, Slice,
                  unknown_node)

__all__ = ["WORD_SELECTORS", "name_width", "value_width", "top_word_shift"]

WORD_SELECTORS = {"hi", "lo"}
"""``hi(e)``/``lo(e)``: the upper and lower data word of a wide value (bus wiring, no ALU)."""


def name_width(name: str, names, fields: dict) -> int:
    """Bits of a register, group, flag or operand field (a register field: its widest register;
    a group field: its groups' width, which they share).

    ``names`` is anything with ``registers``, ``groups`` and ``flags`` (the
    loader's MachineNames or a Machine).
    """
    if name in fields:
        kind = fields[name].kind
        if kind.selects_groups:
            return names.groups[kind.registers[0]].width
        if kind.is_register:
            return max(names.registers[r].width for r in kind.registers)
        return kind.bits
    if name in names.groups:
        return names.groups[name].width
    if name in names.flags:
        return 1
    return names.registers[name].width


def top_word_shift(width: int, data_bits: int) -> int:
    """Where ``hi()`` of a ``width``-bit value starts: the lowest bit of its top data word."""
    return (width - 1) // data_bits * data_bits


def value_width(node, names, fields: dict) -> int:
    """Bits of an IR expression's value (``names`` as for name_width, with ``data_bits``)."""
    data_bits = names.data_bits

    def width(n) -> int:
        match n:
            case Name(name):
                return name_width(name, names, fields)
            case Const(value):
                return max(value.bit_length(), 1)
            case Mem() | Input():
                return data_bits
            case Join(parts):
                return sum(width(p) for p in parts)
            case Offset(base, _):
                return width(base)
            case Slice(_, high, low):
                return high - low + 1
            case Extend(_, bits, _):
                return bits
            case Not() | Logic() | Condition():
                return 1
            case Choose(_, a, b):
                return max(width(a), width(b))
            case Call("hi", (arg,)):
                whole = width(arg)
                return whole - top_word_shift(whole, data_bits)
            case Call("lo", (arg,)):
                return min(width(arg), data_bits)
            case Call(op, args) if op not in WORD_SELECTORS:
                alu_ops = getattr(names, "alu_ops", None)   # the machine's definitions say their width
                if alu_ops is not None and op in alu_ops:
                    return alu_ops[op].result_width([width(a) for a in args])
                return max(width(a) for a in args)
            case _:
                unknown_node(n)
    return width(node)
