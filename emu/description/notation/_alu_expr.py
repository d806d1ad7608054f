"""ALU definition expressions (``alu.lark``) → a small tree, its names, and its value.

An ``[alu.NAME]`` table of a machine file, and each built-in operation,
says its result and flags in this language; the loader checks the names a
tree uses, the compiler turns it into Python (emu.engine), and ``evaluate``
gives its value for the tests that hold the definitions to their sources.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import lark

from ...errors import MachineError
from ._grammars import packaged_parser
from ._numbers import literal_value
from ._parse_errors import error_column

__all__ = ["AluExpr", "Binary", "BitRange", "Num", "Unary", "Var", "alu_parts", "evaluate", "free_names",
           "index_names", "parse_alu_expression"]


@dataclass(frozen=True)
class Num:
    value: int


@dataclass(frozen=True)
class Var:
    name: str


@dataclass(frozen=True)
class Unary:
    op: str
    """``~`` or ``-``."""
    operand: "AluExpr"


@dataclass(frozen=True)
class Binary:
    op: str
    """A Python operator with the same meaning on integers: + - & | ^ << >> == !=."""
    left: "AluExpr"
    right: "AluExpr"


@dataclass(frozen=True)
class BitRange:
    """``x[high:low]``; ``x[i]`` is ``BitRange(x, i, i)``. ``high``/``low`` use numbers and ``w`` only."""
    value: "AluExpr"
    high: "AluExpr"
    low: "AluExpr"


AluExpr = Num | Var | Unary | Binary | BitRange


def _binary(op):
    return lambda self, items: Binary(op, items[0], items[1])


class _ToTree(lark.Transformer):
    eq, ne, or_, xor, and_ = _binary("=="), _binary("!="), _binary("|"), _binary("^"), _binary("&")
    shl, shr, add, sub = _binary("<<"), _binary(">>"), _binary("+"), _binary("-")

    def invert(self, items):
        return Unary("~", items[0])

    def negate(self, items):
        return Unary("-", items[0])

    def bit(self, items):
        return BitRange(items[0], items[1], items[1])

    def slice(self, items):
        return BitRange(*items)

    def name(self, items):
        return Var(str(items[0]))

    def number(self, items):
        return Num(literal_value(str(items[0])))


@cache
def _parser() -> lark.Lark:
    return packaged_parser("emu.description.notation", "alu.lark")


@cache
def parse_alu_expression(text: str) -> AluExpr:
    """Parse one expression; MachineError with the column and a caret under the spot."""
    try:
        tree = _parser().parse(text)
    except lark.UnexpectedInput as exc:
        column = error_column(exc, text)
        caret = " " * (column - 1) + "^"
        raise MachineError(f"cannot read the expression at column {column}\n    {text}\n    {caret}") from None
    try:
        return _ToTree().transform(tree)
    except lark.exceptions.VisitError as exc:
        raise MachineError(f"cannot read the expression: {exc.orig_exc}\n    {text}") from None


def alu_parts(node: AluExpr) -> tuple:
    """The sub-expressions of a node (a slice's value, then its indices)."""
    match node:
        case Unary(_, x):
            return (x,)
        case Binary(_, x, y):
            return (x, y)
        case BitRange(x, h, l):
            return (x, h, l)
    return ()


def free_names(node: AluExpr) -> set[str]:
    """Every name the expression reads, indices included."""
    if isinstance(node, Var):
        return {node.name}
    return set().union(*(free_names(p) for p in alu_parts(node)))


def index_names(node: AluExpr) -> set[str]:
    """The names used where only constants and ``w`` may stand: slice indices and shift amounts."""
    found: set[str] = set()
    match node:
        case BitRange(x, h, l):
            found |= free_names(h) | free_names(l) | index_names(x)
        case Binary("<<" | ">>", x, y):
            found |= free_names(y) | index_names(x)
        case _:
            for part in alu_parts(node):
                found |= index_names(part)
    return found


_PYTHON = {"+": int.__add__, "-": int.__sub__, "&": int.__and__, "|": int.__or__, "^": int.__xor__,
           "<<": int.__lshift__, ">>": int.__rshift__,
           "==": lambda x, y: int(x == y), "!=": lambda x, y: int(x != y)}


def evaluate(node: AluExpr, env: dict[str, int]) -> int:
    """The expression's value as an unbounded integer (a comparison gives 0 or 1)."""
    match node:
        case Num(value):
            return value
        case Var(name):
            return env[name]
        case Unary("~", x):
            return ~evaluate(x, env)
        case Unary(_, x):
            return -evaluate(x, env)
        case Binary(op, x, y):
            return _PYTHON[op](evaluate(x, env), evaluate(y, env))
        case BitRange(x, h, l):
            high, low = evaluate(h, env), evaluate(l, env)
            return evaluate(x, env) >> low & ((1 << (high - low + 1)) - 1)
    raise TypeError(f"not an ALU expression: {node!r}")
