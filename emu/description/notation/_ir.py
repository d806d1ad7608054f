"""The intermediate form (IR) of a micro-step, and the one traversal over it.

The IR is the single thing every back end reads: the stepping compiler, the
fused compiler, the design-rule checker, the `isa` table, the disassembler
and the debugger. It is deliberately tiny — register transfers, one memory
port, one ALU, flags, conditions, I/O, the halt line and idle — so a later back end (whole
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
    "Name", "Const", "Mem", "Join", "Offset", "Slice", "Extend", "Not", "Logic", "Condition", "Choose",
    "Input", "Call", "Assign", "FlagsOnly", "Output", "Halt", "Idle", "Expr", "Statement", "LOGIC_OPERATORS",
    "End", "Goto", "WaitUntil", "Sequencing",
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
    """A register, a register group, an operand field or a flag, by name."""
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
    """Parts side by side, ``{a, b, c}`` (most significant first): an address built on the bus."""
    parts: tuple["Expr", ...]

    def children(self):
        return self.parts

    def with_children(self, *parts):
        return Join(parts)


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
class Slice(Expression):
    """``x[high:low]`` (``x[i]`` is ``x[i:i]``): some wires of a value, no gate."""
    base: "Expr"
    high: int
    low: int

    def children(self):
        return (self.base,)

    def with_children(self, base):
        return Slice(base, self.high, self.low)


@dataclass(frozen=True)
class Extend(Expression):
    """``sext(x, N)`` / ``zext(x, N)``: x widened to N bits, copying its top bit or with zeros."""
    value: "Expr"
    width: int
    signed: bool

    def children(self):
        return (self.value,)

    def with_children(self, value):
        return Extend(value, self.width, self.signed)


LOGIC_OPERATORS = {"&": "and", "^": "xor", "|": "or"}
"""The two-input gates of a condition, by the symbol a micro-step writes them with."""


@dataclass(frozen=True)
class Not(Expression):
    """``!x`` on a 1-bit value."""
    operand: "Expr"

    def children(self):
        return (self.operand,)

    def with_children(self, operand):
        return Not(operand)


@dataclass(frozen=True)
class Logic(Expression):
    """``a & b``, ``a ^ b``, ``a | b`` on 1-bit values (``op`` is the symbol)."""
    op: str
    left: "Expr"
    right: "Expr"

    def children(self):
        return (self.left, self.right)

    def with_children(self, left, right):
        return Logic(self.op, left, right)


@dataclass(frozen=True)
class Condition(Expression):
    """The boolean expression a choice (or a sequencing statement) tests; ``test`` is 1 bit."""
    test: "Expr"

    def children(self):
        return (self.test,)

    def with_children(self, test):
        return Condition(test)


@dataclass(frozen=True)
class Choose(Expression):
    """``COND ? a : b``, the gate a conditional jump puts on the pc input."""
    condition: Condition
    if_true: "Expr"
    if_false: "Expr"

    def children(self):
        return (self.condition, self.if_true, self.if_false)

    def with_children(self, condition, if_true, if_false):
        return Choose(condition, if_true, if_false)


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


Expr = Name | Const | Mem | Join | Offset | Slice | Extend | Not | Logic | Condition | Choose | Input | Call


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


@dataclass(frozen=True)
class Idle(StatementNode):
    """``idle`` (or an empty step): a cycle that transfers nothing and drives no line."""


# ----- sequencing: what the control unit does after the step ------------------
# Their conditions are read by the sequencer, not the datapath, so they are not
# children: ``walk`` does not reach them, and the checker and compiler read
# them through their ``condition`` hooks.

@dataclass(frozen=True)
class End(StatementNode):
    """``end`` / ``end if COND``: the instruction is finished after this step."""
    condition: Condition | None = None


@dataclass(frozen=True)
class Goto(StatementNode):
    """``goto N`` / ``goto N if COND``: the next step is the instruction's step N (``isa`` numbering)."""
    step: int
    condition: Condition | None = None


@dataclass(frozen=True)
class WaitUntil(StatementNode):
    """``wait until COND``: the step repeats until COND holds (a stall); sugar for a goto to itself."""
    condition: Condition


Sequencing = End | Goto | WaitUntil

Statement = Assign | FlagsOnly | Output | Halt | Idle | End | Goto | WaitUntil


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
