"""What the assembler reads from a machine: instruction forms, reserved names.

An instruction line is matched against every form of its mnemonic purely by
shape (never by symbol values), so its size is known in the first pass and
forward references work. Forms with more literal operands are tried first:
``ld r1, [x]`` is the ``[x]`` form even though ``[addr]`` could read it too.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

from emu.description import Instruction, Machine, OperandKind
from emu.errors import RelaybenchError

from ._expr import Expr, Name, Number
from ._syntax import InstructionLine, Operand

__all__ = ["MachineSyntax", "Chosen", "FormError", "PAUSE"]

PAUSE = "pause"


class FormError(RelaybenchError):
    """An operand that fits no form of the instruction, at its line and column;
    the assembler turns it into a ``Diagnostic`` of the file being read."""

    def __init__(self, message: str, line: int, column: int):
        super().__init__(message, line=line, column=column)


@dataclass(slots=True)
class Chosen:
    """An instruction form picked for a line, with its register indices and value expressions."""
    instruction: Instruction
    registers: dict[str, int]
    values: dict[str, Expr]


class MachineSyntax:
    """The machine's assembly vocabulary, looked up once per assembly."""

    def __init__(self, machine: Machine):
        self.machine = machine
        self.forms: dict[str, list[Instruction]] = {}
        for ins in machine.instructions:
            self.forms.setdefault(ins.mnemonic, []).append(ins)
        for forms in self.forms.values():
            forms.sort(key=lambda ins: -sum(op.field is None for op in ins.operands))
        self.pause_instruction = next(i for i in self.forms[machine.pause] if not i.operands)
        visible = [r.name for r in machine.visible_registers] + [g.name for g in machine.visible_groups]
        self.reserved = {name.lower(): name for name in visible}
        self.checkable = {**self.reserved, **{f.lower(): f for f in machine.flags}}
        self.register_kinds = [k for k in machine.operand_kinds.values() if k.is_register]
        self.register_numbers = {k.name: {r.lower(): i for i, r in enumerate(k.registers)}
                                 for k in self.register_kinds}
        """Operand kind → register name (lower case) → the number the field holds for it."""
        self.shortest_cycles = {ins.index: ins.cycles(machine).shortest for ins in machine.instructions}
        """Instruction index → its clock cycles along the shortest path, for the listing."""
        self.register_patterns = [(p, k) for k in self.register_kinds if (p := _numbered(k))]

    def suggest_mnemonic(self, word: str) -> str:
        close = difflib.get_close_matches(word.lower(), [*self.forms, PAUSE], n=1)
        return f" (did you mean '{close[0]}'?)" if close else ""

    def not_a_register(self, text: str, kind: OperandKind) -> str:
        if text.lower() in self.reserved:
            return f"{text} cannot stand here: this operand takes {kind.describe()}"
        what = "register group" if kind.selects_groups else "register"
        return f"{text} is not a {what} of {self.machine.name} ({kind.describe()})"

    def looks_like_register(self, name: str) -> str | None:
        """For a name like ``r9`` on a machine with r0…r7: the message to give."""
        for pattern, kind in self.register_patterns:
            if pattern.fullmatch(name):
                return self.not_a_register(name, kind)
        return None

    def match(self, line: InstructionLine) -> Chosen:
        mnemonic = line.mnemonic.lower()
        forms = self.forms.get(mnemonic)
        if forms is None:
            raise FormError(f"unknown instruction '{line.mnemonic}'{self.suggest_mnemonic(line.mnemonic)}",
                            line.line, line.column)
        register_problem = None
        for ins in forms:
            if len(ins.operands) != len(line.operands):
                continue
            outcome = self._try(ins, line.operands)
            if isinstance(outcome, Chosen):
                return outcome
            if outcome is not None and register_problem is None:
                register_problem = outcome
        if register_problem:
            expr, kind = register_problem
            raise FormError(self.not_a_register(expr.text(), kind), expr.line, expr.column)
        ways = " | ".join(ins.display for ins in sorted(forms, key=lambda ins: ins.index))
        raise FormError(f"{mnemonic} takes: {ways}", line.line, line.column)

    def _try(self, ins: Instruction, operands: list[Operand]) -> Chosen | tuple[Expr, OperandKind] | None:
        """The binding of operands to this form; the first operand and its kind when only a
        register name is wrong (the message is worded only if no other form fits); None when
        the shape does not fit."""
        registers, values, problem = {}, {}, None
        for pattern, operand in zip(ins.operands, operands):
            if pattern.field is None:
                if operand.literal_text() != pattern.before:
                    return None
                continue
            expr = operand.reading(pattern.before, pattern.after)
            if expr is None:
                return None
            kind = ins.fields[pattern.field].kind
            if kind.is_register:
                index = self.register_numbers[kind.name].get(expr.name.lower()) if isinstance(expr, Name) else None
                if index is None:
                    problem = problem or (expr, kind)
                registers[pattern.field] = index
            elif isinstance(expr, Name) and expr.name.lower() in self.reserved:
                return None
            elif isinstance(expr, Name) and (named := kind.value_named(expr.name)) is not None:
                values[pattern.field] = Number(named, expr.line, expr.column)   # the kind's name wins over a label
            else:
                values[pattern.field] = expr
        return problem or Chosen(ins, registers, values)


def _numbered(kind: OperandKind):
    """``r0…r7`` → a pattern for any ``r<digits>``; None if the names are not numbered."""
    found = [re.fullmatch(r"([A-Za-z_]+)\d+", r) for r in kind.registers]
    prefixes = {m[1] for m in found if m}
    if not all(found) or len(prefixes) != 1 or len(kind.registers) < 2:
        return None
    return re.compile(rf"{re.escape(prefixes.pop())}\d+", re.IGNORECASE)
