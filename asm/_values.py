"""The values of names in the assembler: labels, constants defined in terms of others, range checks.

A mixin of ``_Assembly``; ``lookup`` is what an expression calls to resolve a name.
"""

from __future__ import annotations

import difflib

from ._expr import EvalError, Expr, Name
from ._pass_records import _Broken, _Constant, _TooDeep

__all__ = ["_Values"]


class _Values:
    """Name resolution and range-checked evaluation of ``_Assembly``."""

    def lookup(self, node: Name) -> int:
        name = node.name
        if name in self.labels:
            return self.labels[name]
        constant = self.constants.get(name)
        if constant is not None:
            return self.constant_value(name, constant, node)
        if name.lower() in self.syntax.reserved:
            raise EvalError(f"the register {name} cannot be used in an expression", node)
        register_hint = self.syntax.looks_like_register(name)
        if register_hint:
            raise EvalError(register_hint, node)
        if self.early:
            raise EvalError(f"'{name}' must be defined above this line: its value is needed here "
                            f"to lay out the program", node)
        close = difflib.get_close_matches(name, [*self.labels, *self.constants], n=1)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        raise EvalError(f"undefined label '{name}'{hint}", node)

    def constant_value(self, name: str, constant: _Constant, node: Name) -> int:
        if constant.state == "done":
            return constant.value
        if constant.state == "broken":
            raise _Broken(node)
        if constant.state == "busy":
            raise EvalError(f"'{name}' is defined in terms of itself", node)
        constant.state = "busy"
        saved, self.here = self.here, constant.here
        try:
            try:
                constant.value = constant.expr.evaluate(self)
            except RecursionError:
                raise _TooDeep(f"'{name}' is defined through a chain of constants too long to follow "
                                f"(each defined by the next); define them in order", node) from None
        except EvalError as exc:
            constant.state = "broken" if isinstance(exc, _TooDeep) else "new"
            exc.file = exc.file or constant.place.file
            raise
        finally:
            self.here = saved
        constant.state = "done"
        return constant.value

    def resolve_constants(self):
        chain_reported = False
        for name, constant in self.constants.items():
            if constant.state == "new":
                try:
                    self.constant_value(name, constant, Name(name, constant.place.line, constant.place.column))
                except EvalError as exc:
                    if not (isinstance(exc, _TooDeep) and chain_reported):   # one long chain, one message
                        self.report(exc, constant.place.file)
                    chain_reported = chain_reported or isinstance(exc, _TooDeep)
                    constant.state = "broken"

    def value(self, expr: Expr, here: int, file: str, low: int, high: int, what: str) -> int | None:
        self.here = here
        try:
            value = expr.evaluate(self)
        except EvalError as exc:
            self.report(exc, file)
            return None
        if not low <= value <= high:
            self.error(file, expr.line, expr.column, f"{value} does not fit {what} ({low}…{high})")
            return None
        return value

    def operand_value(self, expr: Expr, here: int, file: str, kind) -> int | None:
        """A number operand; a bare name that is neither one of the kind's value names (those
        were replaced when the form was matched) nor a label or constant is a misspelt value name."""
        if kind.value_names and isinstance(expr, Name) and expr.name not in self.labels \
                and expr.name not in self.constants:
            spelt = {name.lower(): name for name, _value in kind.value_names}
            close = difflib.get_close_matches(expr.name.lower(), spelt, n=1)
            hint = f" (did you mean '{spelt[close[0]]}'?)" if close else ""
            self.error(file, expr.line, expr.column,
                       f"'{expr.name}' is not a value of {kind.name} ({kind.describe()}){hint}")
            return None
        return self.value(expr, here, file, kind.low, kind.high, kind.name)

    def distance(self, expr: Expr, here: int, word_count: int, file: str, kind) -> int | None:
        """A pc-relative operand: the target's distance from the address the kind counts from."""
        target = self.value(expr, here, file, -(1 << 64), 1 << 64, kind.name)
        if target is None:
            return None
        base = kind.distance_base(here, word_count)
        distance = target - base
        wrapped = distance % self.machine.memory_words
        for around in (wrapped, wrapped - self.machine.memory_words):
            if not kind.low <= distance <= kind.high and kind.low <= around <= kind.high and 0 <= target:
                distance = around       # pc wraps at the end of memory, as the disassembler counts
        if not kind.low <= distance <= kind.high:
            counted = "the next instruction" if kind.relative == "next" else "this instruction"
            self.error(file, expr.line, expr.column,
                       f"the target {self.address_text(target)} is {distance} words from {counted} "
                       f"({self.address_text(base)}); {kind.name} reaches {kind.low}…{kind.high}")
            return None
        return distance
