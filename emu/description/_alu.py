"""The ALU as a table of Python templates, one row per operation.

Each row says how the raw (unmasked) result is formed and how carry and
overflow follow from it; zero and negative always come from the masked
result. The compiler substitutes operand expressions into these templates,
so adding an operation is one row here and one word in a machine file.

Template names: ``{a}``/``{b}`` operands, ``{r}`` the raw result, ``{cin}``
the carry flag before the step, ``{w}`` the width, ``{top}`` width − 1.
Flags: ``c`` by the carry-out/borrow convention of the machine reference
("Flags" in emu/machines/ref8.md: borrow = 1),
``v`` two's-complement overflow.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["AluOp", "ALU_OPS", "WORD_SELECTORS"]


@dataclass(frozen=True)
class AluOp:
    arity: int
    raw: str
    carry: str | None
    overflow: str | None
    uses_carry_in: bool = False

    def produces(self, role: str) -> bool:
        if role in ("zero", "negative"):
            return True
        if role == "carry":
            return self.carry is not None
        if role == "overflow":
            return self.overflow is not None
        return False


_ADD_CARRY = "{r} >> {w} & 1"
_ADD_OVERFLOW = "(({a} ^ {r}) & ({b} ^ {r})) >> {top} & 1"
_SUB_OVERFLOW = "(({a} ^ {b}) & ({a} ^ {r})) >> {top} & 1"

ALU_OPS: dict[str, AluOp] = {
    "add": AluOp(2, "{a} + {b}", _ADD_CARRY, _ADD_OVERFLOW),
    "adc": AluOp(2, "{a} + {b} + {cin}", _ADD_CARRY, _ADD_OVERFLOW, uses_carry_in=True),
    "sub": AluOp(2, "{a} - {b}", _ADD_CARRY, _SUB_OVERFLOW),
    "sbc": AluOp(2, "{a} - {b} - {cin}", _ADD_CARRY, _SUB_OVERFLOW, uses_carry_in=True),
    "and": AluOp(2, "{a} & {b}", "0", "0"),
    "or": AluOp(2, "{a} | {b}", "0", "0"),
    "xor": AluOp(2, "{a} ^ {b}", "0", "0"),
    "not": AluOp(1, "~{a}", "0", "0"),
    "inc": AluOp(1, "{a} + 1", _ADD_CARRY, "(~{a} & {r}) >> {top} & 1"),
    "dec": AluOp(1, "{a} - 1", _ADD_CARRY, "({a} & ~{r}) >> {top} & 1"),
    "shl": AluOp(1, "{a} << 1", "{a} >> {top} & 1", None),
    "shr": AluOp(1, "{a} >> 1", "{a} & 1", None),
    "rol": AluOp(1, "({a} << 1) | {cin}", "{a} >> {top} & 1", None, uses_carry_in=True),
    "ror": AluOp(1, "({a} >> 1) | ({cin} << {top})", "{a} & 1", None, uses_carry_in=True),
}

WORD_SELECTORS = {"hi", "lo"}
"""``hi(e)``/``lo(e)``: the upper and lower data word of a wide value (bus wiring, no ALU)."""
