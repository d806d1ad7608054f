"""The micro-step notation: parsing into a small intermediate form.

The intermediate form (IR) is the single thing every back end reads: the
stepping compiler, the fused compiler, the validator, the `isa` table and the
debugger's panel. It is deliberately tiny — register transfers, one memory
port, one ALU, flags, I/O and the halt line — so a later back end (whole
straight-line blocks, numpy lock-step machines) can be written from it
without going back to the text.

Names in the IR are still names (``rd``, ``pc``, ``x``); binding them to
state slots or encoding fields is the description loader's job, because the
same name means different things in different instructions.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from importlib import resources

import lark

from ...errors import MachineError
from ._numbers import literal_value

__all__ = [
    "Name", "Const", "Mem", "Join", "Offset", "Choose", "Input", "Call",
    "Assign", "FlagsOnly", "Output", "Halt", "Expr", "Statement",
    "parse_step", "walk",
]


# ----- expressions ---------------------------------------------------------

@dataclass(frozen=True)
class Name:
    """A register, a register pair, an operand field or a flag, by name."""
    name: str


@dataclass(frozen=True)
class Const:
    value: int


@dataclass(frozen=True)
class Mem:
    """A read of memory: the step's one memory access."""
    address: "Expr"


@dataclass(frozen=True)
class Join:
    """Two words side by side, ``{high, low}``: an address built on the bus."""
    high: "Expr"
    low: "Expr"


@dataclass(frozen=True)
class Offset:
    """``e + k`` / ``e - k`` on the incrementer, not the ALU (flags untouched)."""
    base: "Expr"
    delta: int


@dataclass(frozen=True)
class Choose:
    """``flag ? a : b``, the gate a conditional jump puts on the pc input."""
    flag: str
    negate: bool
    if_true: "Expr"
    if_false: "Expr"


@dataclass(frozen=True)
class Input:
    port: "Expr"


@dataclass(frozen=True)
class Call:
    """An ALU operation (``add``, ``shl`` …) or a word selector (``hi``, ``lo``)."""
    op: str
    args: tuple["Expr", ...]


Expr = Name | Const | Mem | Join | Offset | Choose | Input | Call


# ----- statements ----------------------------------------------------------

@dataclass(frozen=True)
class Assign:
    """``target <- value [sets flags]``; target is a Name or a Mem."""
    target: Name | Mem
    value: Expr
    flags: tuple[str, ...] = ()


@dataclass(frozen=True)
class FlagsOnly:
    """An ALU operation whose result is dropped, kept for its flags (``cmp``)."""
    call: Call
    flags: tuple[str, ...]


@dataclass(frozen=True)
class Output:
    port: Expr
    value: Expr


@dataclass(frozen=True)
class Halt:
    """Drives the halt line; the control unit sets its latch on the falling edge."""


Statement = Assign | FlagsOnly | Output | Halt


class _ToIR(lark.Transformer):
    """One method per grammar rule, each turning a parse node into IR."""

    def step(self, statements):
        return tuple(statements)

    def assign(self, items):
        target, value, *rest = items
        return Assign(target, value, rest[0] if rest else ())

    def flags_only(self, items):
        call, flags = items
        return FlagsOnly(call, flags)

    def output(self, items):
        return Output(items[0], items[1])

    def halt(self, _items):
        return Halt()

    def target_name(self, items):
        return Name(str(items[0]))

    def target_mem(self, items):
        return Mem(items[0])

    def flag_list(self, items):
        return tuple(str(t) for t in items)

    def choose(self, items):
        (negate, flag), if_true, if_false = items
        return Choose(flag, negate, if_true, if_false)

    def condition(self, items):
        if len(items) == 2:
            return True, str(items[1])
        return False, str(items[0])

    def plus(self, items):
        return Offset(items[0], _number(items[1]))

    def minus(self, items):
        return Offset(items[0], -_number(items[1]))

    def name(self, items):
        return Name(str(items[0]))

    def number(self, items):
        return Const(_number(items[0]))

    def mem(self, items):
        return Mem(items[0])

    def join(self, items):
        return Join(items[0], items[1])

    def input(self, items):
        return Input(items[0])

    def call(self, items):
        return Call(str(items[0]), tuple(items[1:]))


def _number(token) -> int:
    return literal_value(str(token))


def _token_word(name: str) -> str:
    """A grammar token as a builder reads it in 'expected …': ``'<-'``, ``a name``."""
    if name in ("NAME", "NUMBER"):
        return f"a {name.lower()}"
    if name == "$END":
        return "the end of the step"
    try:
        return repr(_parser().get_terminal(name).pattern.value)
    except KeyError:
        return name


@cache
def _parser() -> lark.Lark:
    text = resources.files("emu.description.notation").joinpath("microstep.lark").read_text()
    return lark.Lark(text, start="step", parser="lalr", maybe_placeholders=False)


@cache
def parse_step(text: str) -> tuple[Statement, ...]:
    """Parse one micro-step; raise MachineError saying where it went wrong."""
    if not text.strip():
        raise MachineError("a micro-step must hold at least one statement")
    try:
        tree = _parser().parse(text)
    except lark.UnexpectedInput as exc:
        column = getattr(exc, "column", 0) or 0
        caret = " " * max(column - 1, 0) + "^"
        expected = sorted(getattr(exc, "expected", None) or getattr(exc, "allowed", None) or ())
        wanted = f" (expected {', '.join(_token_word(t) for t in expected)})" if expected else ""
        raise MachineError(
            f"cannot read micro-step at column {column}{wanted}\n    {text}\n    {caret}"
        ) from None
    try:
        return _ToIR().transform(tree)
    except lark.exceptions.VisitError as exc:
        raise MachineError(f"cannot read micro-step: {exc.orig_exc}\n    {text}") from None


def walk(node):
    """Yield every expression node under an IR statement or expression."""
    match node:
        case Assign(target, value, _):
            if isinstance(target, Mem):
                yield from walk(target.address)
            yield from walk(value)
        case FlagsOnly(call, _):
            yield from walk(call)
        case Output(port, value):
            yield from walk(port)
            yield from walk(value)
        case Halt():
            return
        case Mem(address) | Input(address):
            yield node
            yield from walk(address)
        case Join(high, low):
            yield node
            yield from walk(high)
            yield from walk(low)
        case Offset(base, _):
            yield node
            yield from walk(base)
        case Choose(_, _, a, b):
            yield node
            yield from walk(a)
            yield from walk(b)
        case Call(_, args):
            yield node
            for arg in args:
                yield from walk(arg)
        case _:
            yield node
