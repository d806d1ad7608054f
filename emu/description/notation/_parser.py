"""Micro-step text → IR: the lark grammar (``microstep.lark``) and one transformer over it."""

from __future__ import annotations

from functools import cache

import lark

from ...errors import MachineError
from ._ir import (Assign, Call, Choose, Condition, Const, End, Extend, FlagsOnly, Goto, Halt, Idle, Input, Join, Logic,
                  Mem, Name, Not, Offset, Output, Slice, Statement, WaitUntil)
from ._grammars import packaged_parser
from ._numbers import char_value, literal_value

__all__ = ["parse_line_gate", "parse_step"]


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

    def end(self, _items):
        return End()

    def end_if(self, items):
        return End(items[0])

    def goto(self, items):
        return Goto(_number(items[0]))

    def goto_if(self, items):
        return Goto(_number(items[0]), items[1])

    def wait_until(self, items):
        return WaitUntil(items[0])

    def sequencing_condition(self, items):
        """The one place a sequencing statement's condition is built."""
        return Condition(items[0])

    def line_gate(self, items):
        return Condition(items[0])

    def target_name(self, items):
        return Name(str(items[0]))

    def target_mem(self, items):
        return Mem(items[0])

    def flag_list(self, items):
        return tuple(str(t) for t in items)

    def idle(self, _items):
        return Idle()

    def choose(self, items):
        test, if_true, if_false = items
        return Choose(Condition(test), if_true, if_false)

    def logic_or(self, items):
        return Logic("|", items[0], items[1])

    def logic_xor(self, items):
        return Logic("^", items[0], items[1])

    def logic_and(self, items):
        return Logic("&", items[0], items[1])

    def logic_not(self, items):
        return Not(items[0])

    def slice(self, items):
        return Slice(items[0], _number(items[1]), _number(items[2]))

    def bit(self, items):
        index = _number(items[1])
        return Slice(items[0], index, index)

    def sext(self, items):
        return Extend(items[0], _number(items[1]), True)

    def zext(self, items):
        return Extend(items[0], _number(items[1]), False)

    def plus(self, items):
        return Offset(items[0], items[1].value)

    def minus(self, items):
        return Offset(items[0], -items[1].value)

    def name(self, items):
        return Name(str(items[0]))

    def number(self, items):
        return Const(_number(items[0]))

    def char(self, items):
        return Const(char_value(str(items[0])))

    def mem(self, items):
        return Mem(items[0])

    def join(self, items):
        return Join(tuple(items))

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
    if name == "CHAR":
        return "a character literal"
    if name == "$END":
        return "the end of the step"
    try:
        return repr(_parser().get_terminal(name).pattern.value)
    except KeyError:
        return name


@cache
def _parser() -> lark.Lark:
    return packaged_parser("emu.description.notation", "microstep.lark", start=["step", "line_gate"],
                           maybe_placeholders=False)


@cache
def parse_step(text: str) -> tuple[Statement, ...]:
    """Parse one micro-step; raise MachineError saying where it went wrong.

    An empty step is an idle cycle, the same as ``idle``.
    """
    if not text.strip():
        return (Idle(),)
    return _parsed(text, "step", "micro-step")


@cache
def parse_line_gate(text: str) -> Condition:
    """Parse the condition of a gated control line (``z`` in ``ld-pc if z``)."""
    return _parsed(text, "line_gate", "the line's condition")


def _parsed(text: str, start: str, what: str):
    try:
        tree = _parser().parse(text, start=start)
    except lark.UnexpectedInput as exc:
        column = getattr(exc, "column", 0) or 0
        caret = " " * max(column - 1, 0) + "^"
        expected = sorted(getattr(exc, "expected", None) or getattr(exc, "allowed", None) or ())
        wanted = f" (expected {', '.join(_token_word(t) for t in expected)})" if expected else ""
        raise MachineError(
            f"cannot read {what} at column {column}{wanted}\n    {text}\n    {caret}"
        ) from None
    try:
        return _ToIR().transform(tree)
    except lark.exceptions.VisitError as exc:
        raise MachineError(f"cannot read {what}: {exc.orig_exc}\n    {text}") from None
