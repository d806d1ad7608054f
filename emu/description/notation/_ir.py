"""The intermediate form (IR) of a micro-step, and the one traversal over it.

The IR is the single thing every back end reads: the stepping compiler, the
fused compiler, the design-rule checker, the `isa` table, the disassembler
and the debugger. It is deliberately tiny — register transfers, one memory
port, one ALU, flags, I/O and the halt line — so a later back end (whole
straight-line blocks, numpy lock-step machines) can be written from it
without going back to the text.

Every node says which nodes it is made of (``children()``) and can be
rebuilt from new ones (``with_children(...)``); ``walk`` and every rewrite
are written once on top of that, so adding a kind of node means adding it
here and teaching the matches that must know it — each of them ends in
``unknown_node``, so a forgotten one fails loudly instead of doing nothing.

Names in the IR are still names (``rd``, ``pc``, ``x``); binding them to
state slots or encoding fields is the description loader's job, because the
same name means different things in different instructions.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NoReturn

__all__ = [
    "Node", "Expression", "StatementNode",
    "Name", "Const", "Mem", "Join", "Offset", "Choose", "Input", "Call",
    "Assign", "FlagsOnly", "Output", "Halt", "Expr", "Statement",
    "FlagCondition", "End", "Goto", "WaitUntil", "Sequencing",
    "walk", "unknown_node",
]


class Node:
    """What every IR node can do: list its sub-nodes and be rebuilt from new ones."""

    __slots__ = ()

    def children(self) -> tuple["Node", ...]:
        return ()

    def with_children(self, *children: "Node") -> "Node":
        if children:
            raise TypeError(f"{type(self).__name__} has no sub-nodes")
        return self


class Expression(Node):
    """A node that yields a value."""

    __slots__ = ()


class StatementNode(Node):
    """A node that does something in a micro-step (writes, drives a line)."""

    __slots__ = ()


def unknown_node(node) -> NoReturn:
    """The last case of every match over IR nodes: a kind nobody taught this code."""
    raise TypeError(f"{type(node).__name__} is not a kind of micro-step node this code knows")


# ----- expressions ---------------------------------------------------------

@dataclass(frozen=True)
class Name(Expression):
    """A register, a register pair, an operand field or a flag, by name."""
    name: str


@dataclass(frozen=True)
class Const(Expression):
    value: int


@dataclass(frozen=True)
class Mem(Expression):
    """A read of memory: the step's one memory access."""
    address: "Expr"

    def children(self):
        return (self.address,)

    def with_children(self, address):
        return Mem(address)


@dataclass(frozen=True)
class Join(Expression):
    """Two words side by side, ``{high, low}``: an address built on the bus."""
    high: "Expr"
    low: "Expr"

    def children(self):
        return (self.high, self.low)

    def with_children(self, high, low):
        return Join(high, low)


@dataclass(frozen=True)
class Offset(Expression):
    """``e + k`` / ``e - k`` on the incrementer, not the ALU (flags untouched)."""
    base: "Expr"
    delta: int

    def children(self):
        return (self.base,)

    def with_children(self, base):
        return Offset(base, self.delta)


@dataclass(frozen=True)
class Choose(Expression):
    """``flag ? a : b``, the gate a conditional jump puts on the pc input."""
    flag: str
    negate: bool
    if_true: "Expr"
    if_false: "Expr"

    def children(self):
        return (self.if_true, self.if_false)

    def with_children(self, if_true, if_false):
        return Choose(self.flag, self.negate, if_true, if_false)


@dataclass(frozen=True)
class Input(Expression):
    port: "Expr"

    def children(self):
        return (self.port,)

    def with_children(self, port):
        return Input(port)


@dataclass(frozen=True)
class Call(Expression):
    """An ALU operation (``add``, ``shl`` …) or a word selector (``hi``, ``lo``)."""
    op: str
    args: tuple["Expr", ...]

    def children(self):
        return self.args

    def with_children(self, *args):
        return Call(self.op, args)


Expr = Name | Const | Mem | Join | Offset | Choose | Input | Call


# ----- statements ----------------------------------------------------------

@dataclass(frozen=True)
class Assign(StatementNode):
    """``target <- value [sets flags]``; target is a Name or a Mem."""
    target: Name | Mem
    value: Expr
    flags: tuple[str, ...] = ()

    def children(self):
        return (self.target, self.value)

    def with_children(self, target, value):
        return Assign(target, value, self.flags)


@dataclass(frozen=True)
class FlagsOnly(StatementNode):
    """An ALU operation whose result is dropped, kept for its flags (``cmp``)."""
    call: Call
    flags: tuple[str, ...]

    def children(self):
        return (self.call,)

    def with_children(self, call):
        return FlagsOnly(call, self.flags)


@dataclass(frozen=True)
class Output(StatementNode):
    port: Expr
    value: Expr

    def children(self):
        return (self.port, self.value)

    def with_children(self, port, value):
        return Output(port, value)


@dataclass(frozen=True)
class Halt(StatementNode):
    """Drives the halt line; the control unit sets its latch on the falling edge."""


# ----- sequencing: what the control unit does after the step ------------------

@dataclass(frozen=True)
class FlagCondition(Node):
    """The condition of a sequencing statement: one flag, or its negation.

    Deliberately not a sub-node (``walk`` does not reach it): it is read by
    the sequencer, not by the datapath, and the one place that builds it is
    the grammar rule ``sequencing_condition``.
    """
    flag: str
    negate: bool


@dataclass(frozen=True)
class End(StatementNode):
    """``end`` / ``end if COND``: the instruction is finished after this step."""
    condition: FlagCondition | None = None


@dataclass(frozen=True)
class Goto(StatementNode):
    """``goto N`` / ``goto N if COND``: the next step is the instruction's step N (``isa`` numbering)."""
    step: int
    condition: FlagCondition | None = None


@dataclass(frozen=True)
class WaitUntil(StatementNode):
    """``wait until COND``: the step repeats until COND holds (a stall); sugar for a goto to itself."""
    condition: FlagCondition


Sequencing = End | Goto | WaitUntil

Statement = Assign | FlagsOnly | Output | Halt | End | Goto | WaitUntil


def walk(node: Node):
    """Yield every expression a statement reads, or an expression is made of, outermost first.

    The target of an assignment is written, not read: a register target is
    left out, and of a memory target only its address (which is read).
    """
    if isinstance(node, Assign):
        target, value = node.children()
        yield from walk(target.address) if isinstance(target, Mem) else ()
        yield from walk(value)
        return
    if isinstance(node, Expression):
        yield node
    elif not isinstance(node, StatementNode):
        unknown_node(node)
    for child in node.children():
        yield from walk(child)
