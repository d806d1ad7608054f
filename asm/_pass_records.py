"""What pass one of the assembler leaves for pass two: words to produce, runs, constants, checks."""

from __future__ import annotations

from dataclasses import dataclass

from ._expr import EvalError, Expr
from ._forms import Chosen
from ._syntax import Comparison

__all__ = ["_Broken", "_Constant", "_Item", "_PendingExpect", "_Place", "_Run", "_TooDeep"]


@dataclass(slots=True)
class _Place:
    file: str
    line: int
    column: int


@dataclass(slots=True)
class _Item:
    """Words to produce at ``address``: an instruction, data, or zeros."""
    address: int
    length: int
    place: _Place
    chosen: Chosen | None = None
    data: list | None = None
    """Data parts: (Expr, words per value) or a Text."""


@dataclass(slots=True)
class _Run:
    """Consecutive words laid down without an .org in between."""
    start: int
    end: int
    place: _Place
    order: int


@dataclass(slots=True)
class _Constant:
    expr: Expr
    here: int
    place: _Place
    value: int | None = None
    state: str = "new"


@dataclass(slots=True)
class _PendingExpect:
    address: int
    here: int
    place: _Place
    check: Comparison


class _Broken(EvalError):
    """A value depending on one whose error has been reported already."""

    def __init__(self, node):
        super().__init__(None, node)


class _TooDeep(EvalError):
    """A chain of constants deeper than the call stack: reported once, where it broke."""

