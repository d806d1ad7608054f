"""Expressions of the assembly language and their evaluation.

Nodes carry the line and column of their first token so every evaluation
problem points at the right place. Evaluation asks a context for symbol
values and for ``$``; the context decides what a name means (a label, a
constant, a register that has no business in an expression).
"""

from __future__ import annotations

import operator
from typing import Protocol

from emu.errors import RelaybenchError

__all__ = [
    "EvalError", "Context", "Expr", "Number", "Name", "Here", "Unary", "Binary",
    "Group", "Call", "Invalid", "FUNCTIONS",
]

_LIMIT = 1 << 256
"""No value in a program is anywhere near this; past it, something is runaway."""
_RECURSION_DEPTH = 16
"""Levels of an expression evaluated by recursion before the walk with a stack of its own takes over."""


class EvalError(RelaybenchError):
    """An expression that has no value; ``node`` says where."""

    def __init__(self, message: str | None, node: "Expr", file: str | None = None):
        super().__init__(message, file=file)
        self.node = node
    """``file`` is set when the expression came from another file (a constant's
    definition); a message of None means "already reported"."""


class Context(Protocol):
    here: int
    data_bits: int

    def lookup(self, node: "Name") -> int: ...


class Expr:
    """A node; ``evaluate`` and ``text`` walk the tree with a stack of their own.

    A flat sum of a thousand terms is a left-deep tree a thousand levels
    deep, deeper than Python's call stack, so no walk here recurses without
    a bound (``evaluate`` recurses through the first few levels only): each
    node only says what its children are and how their results combine.
    """
    __slots__ = ("line", "column")

    def children(self) -> tuple["Expr", ...]:
        return ()

    def combine(self, ctx: Context, values: list[int]) -> int:
        """This node's value, given its children's values in order."""
        raise NotImplementedError

    def compose(self, parts: list[str]) -> str:
        """This node written out, given its children written out in order."""
        raise NotImplementedError

    def evaluate(self, ctx: Context) -> int:
        return self._value_within(ctx, _RECURSION_DEPTH)

    def _value_within(self, ctx: Context, depth: int) -> int:
        """The value, by recursion while the tree is shallow (most are: ``COUNT * 4 + 12``), in half
        the time of the walk with a stack; a subtree deeper than ``depth`` gets that walk."""
        kids = self.children()
        if not kids:
            return self.combine(ctx, ())
        if not depth:
            return _post_order(self, lambda node, values: node.combine(ctx, values))
        return self.combine(ctx, [kid._value_within(ctx, depth - 1) for kid in kids])

    def text(self) -> str:
        """The expression written back out, for messages and listings."""
        return _post_order(self, lambda node, parts: node.compose(parts))


def _post_order(root: Expr, visit):
    """``visit(node, results of its children)`` for every node, children first, without recursion."""
    if not root.children():         # most operands are one number or name: no stack for them
        return visit(root, [])
    results: list = []
    stack: list[tuple[Expr, bool]] = [(root, False)]
    while stack:
        node, expanded = stack.pop()
        kids = node.children()
        if expanded or not kids:
            values = results[len(results) - len(kids):]
            del results[len(results) - len(kids):]
            results.append(visit(node, values))
        else:
            stack.append((node, True))
            stack.extend((kid, False) for kid in reversed(kids))
    return results[0]


class Number(Expr):
    __slots__ = ("value",)

    def __init__(self, value: int, line: int, column: int):
        self.value, self.line, self.column = value, line, column

    def combine(self, ctx, values):
        return self.value

    def compose(self, parts):
        return str(self.value)


class Name(Expr):
    __slots__ = ("name",)

    def __init__(self, name: str, line: int, column: int):
        self.name, self.line, self.column = name, line, column

    def combine(self, ctx, values):
        return ctx.lookup(self)

    def compose(self, parts):
        return self.name


class Here(Expr):
    """``$``: the address of the statement being assembled."""
    __slots__ = ()

    def __init__(self, line: int, column: int):
        self.line, self.column = line, column

    def combine(self, ctx, values):
        return ctx.here

    def compose(self, parts):
        return "$"


_UNARY = {"-": operator.neg, "+": operator.pos, "~": operator.invert}


class Unary(Expr):
    __slots__ = ("op", "operand")

    def __init__(self, op: str, operand: Expr, line: int, column: int):
        self.op, self.operand, self.line, self.column = op, operand, line, column

    def children(self):
        return (self.operand,)

    def combine(self, ctx, values):
        return _UNARY[self.op](values[0])

    def compose(self, parts):
        return self.op + parts[0]


def _divide(a: int, b: int) -> int:
    """Integer division truncating toward zero, as hardware dividers and C do."""
    quotient = abs(a) // abs(b)
    return quotient if (a < 0) == (b < 0) else -quotient


def _remainder(a: int, b: int) -> int:
    return a - b * _divide(a, b)


def _shift(direction):
    def shift(a: int, b: int) -> int:
        if not 0 <= b <= 64:
            raise ValueError(f"a shift count must be 0…64, not {b}")
        return direction(a, b)
    return shift


_BINARY = {
    "+": operator.add, "-": operator.sub, "*": operator.mul,
    "/": _divide, "%": _remainder,
    "&": operator.and_, "|": operator.or_, "^": operator.xor,
    "<<": _shift(operator.lshift), ">>": _shift(operator.rshift),
}


class Binary(Expr):
    __slots__ = ("op", "left", "right")

    def __init__(self, op: str, left: Expr, right: Expr):
        self.op, self.left, self.right = op, left, right
        self.line, self.column = left.line, left.column

    def children(self):
        return (self.left, self.right)

    def combine(self, ctx, values):
        a, b = values
        try:
            result = _BINARY[self.op](a, b)
        except ZeroDivisionError:
            raise EvalError(f"division by zero ('{self.op}' by a value of 0)", self.right) from None
        except ValueError as exc:
            raise EvalError(str(exc), self.right) from None
        if not -_LIMIT < result < _LIMIT:
            raise EvalError("value too large", self)
        return result

    def compose(self, parts):
        return f"{parts[0]} {self.op} {parts[1]}"


class Group(Expr):
    """A parenthesised expression, kept so an operand form like ``(addr)`` can match it."""
    __slots__ = ("inner",)

    def __init__(self, inner: Expr, line: int, column: int):
        self.inner, self.line, self.column = inner, line, column

    def children(self):
        return (self.inner,)

    def combine(self, ctx, values):
        return values[0]

    def compose(self, parts):
        return f"({parts[0]})"


def _low_word(value: int, bits: int) -> int:
    return value & ((1 << bits) - 1)


def _high_word(value: int, bits: int) -> int:
    return (value >> bits) & ((1 << bits) - 1)


FUNCTIONS = {"lo": _low_word, "hi": _high_word}
"""Word selectors: ``lo`` is the low data word of a value, ``hi`` the next one."""


class Call(Expr):
    __slots__ = ("function", "argument")

    def __init__(self, function: str, argument: Expr, line: int, column: int):
        self.function, self.argument, self.line, self.column = function, argument, line, column

    def children(self):
        return (self.argument,)

    def combine(self, ctx, values):
        function = FUNCTIONS.get(self.function.lower())
        if function is None:
            known = ", ".join(FUNCTIONS)
            raise EvalError(f"unknown function '{self.function}' (functions: {known})", self)
        return function(values[0], ctx.data_bits)

    def compose(self, parts):
        return f"{self.function}({parts[0]})"


class Invalid(Expr):
    """A literal the parser accepted in shape but not in content (a bad escape)."""
    __slots__ = ("message",)

    def __init__(self, message: str, line: int, column: int):
        self.message, self.line, self.column = message, line, column

    def combine(self, ctx, values):
        raise EvalError(self.message, self)

    def compose(self, parts):
        return "?"
