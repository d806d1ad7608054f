"""How many bits a micro-step value has: one rule, shared by the design-rule checker and the compiler."""

from __future__ import annotations

from ._ir import Call, Choose, Const, Input, Join, Mem, Name, Offset, unknown_node

__all__ = ["WORD_SELECTORS", "name_width", "value_width"]

WORD_SELECTORS = {"hi", "lo"}
"""``hi(e)``/``lo(e)``: the upper and lower data word of a wide value (bus wiring, no ALU)."""


def name_width(name: str, registers: dict, pairs: dict, fields: dict) -> int:
    """Bits of a register, pair or operand field (a register field: its widest register)."""
    if name in fields:
        kind = fields[name].kind
        if kind.is_register:
            return max(registers[r].width for r in kind.registers)
        return kind.bits
    if name in pairs:
        return pairs[name].width
    return registers[name].width


def value_width(node, registers: dict, pairs: dict, fields: dict, data_bits: int, alu_ops: dict | None = None) -> int:
    """Bits of an IR expression's value, before any masking to its destination.

    An ALU operation is as wide as its definition says (``alu_ops``, the
    machine's table; without it, the first operand's width).
    """
    def width(n) -> int:
        match n:
            case Name(name):
                return name_width(name, registers, pairs, fields)
            case Const(value):
                return max(value.bit_length(), 1)
            case Mem() | Input():
                return data_bits
            case Join(high, low):
                return width(high) + width(low)
            case Offset(base, _):
                return width(base)
            case Choose(_, _, a, b):
                return max(width(a), width(b))
            case Call(op, args):
                if op in WORD_SELECTORS:
                    return data_bits
                if alu_ops is not None and op in alu_ops:
                    return alu_ops[op].result_width([width(a) for a in args])
                return width(args[0])
            case _:
                unknown_node(n)
    return width(node)
