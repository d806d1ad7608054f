"""ALU operations as definitions: a result expression, its width, and the flags it produces.

A machine file may define operations in ``[alu.NAME]`` tables; the built-in
operations below are written in exactly the same form and read by the same
function (``read_alu_op``), so there is one table and one language
(``notation/alu.lark``). The compiler (emu.engine) turns a definition into
Python; the design-rule checker asks it for arity, width and flags.

Meaning of the built-in flags ("Flags" in emu/machines/README.md):
zero — the kept result is 0; negative — its top bit; carry — the bit that
leaves the top of the word: carry out of a sum, *borrow* after a
subtraction (sub, sbc, dec: 1 when the unsigned difference is below zero),
the bit shifted out by shl/shr/rol/ror, 0 after and/or/xor/not;
overflow — the result is wrong as a two's-complement number (0 after the
logic operations; shifts do not produce it).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cache
from typing import Callable

from ..errors import MachineError
from .notation import (WORD_SELECTORS, AluExpr, Binary, BitRange, alu_parts, evaluate, free_names, index_names,
                       parse_alu_expression)

__all__ = ["ALU_OPS", "AluOp", "BUILTIN_DEFINITIONS", "FLAG_ROLE_NAMES", "RESERVED_OPERATION_NAMES", "WORD_SELECTORS",
           "builtin_alu_ops", "read_alu_op", "resolve_flag"]

RESERVED_OPERATION_NAMES = WORD_SELECTORS | {"sext", "zext", "mem", "in", "out", "halt", "sets", "idle",
                                             "end", "goto"}
"""Words of the micro-step notation that no ``[alu.NAME]`` may take."""
FLAG_ROLE_NAMES = ("zero", "negative", "carry", "overflow")
OPERAND_LETTERS = "abcd"
_ROLE_OF_RESULT = ("result", "w")
_HIGHEST_INDEX = 64
"""Registers hold 32 bits at most; a larger index or shift is a mistake (and would cost memory)."""

_ZERO_NEGATIVE = {"zero": "result[w-1:0] == 0", "negative": "result[w-1]"}
_SUM = {**_ZERO_NEGATIVE, "carry": "result[w]", "overflow": "((a ^ result) & (b ^ result))[w-1]"}
_DIFFERENCE = {**_ZERO_NEGATIVE, "carry": "result[w]", "overflow": "((a ^ b) & (a ^ result))[w-1]"}
_LOGIC = {**_ZERO_NEGATIVE, "carry": "0", "overflow": "0"}


def _op(operands: int, result: str, flags: dict) -> dict:
    return {"operands": operands, "result": result, "flags": flags}


BUILTIN_DEFINITIONS: dict[str, dict] = {
    "add": _op(2, "a + b", _SUM),
    "adc": _op(2, "a + b + carry", _SUM),
    "sub": _op(2, "a - b", _DIFFERENCE),
    "sbc": _op(2, "a - b - carry", _DIFFERENCE),
    "and": _op(2, "a & b", _LOGIC),
    "or": _op(2, "a | b", _LOGIC),
    "xor": _op(2, "a ^ b", _LOGIC),
    "not": _op(1, "~a", _LOGIC),
    "inc": _op(1, "a + 1", {**_ZERO_NEGATIVE, "carry": "result[w]", "overflow": "(~a & result)[w-1]"}),
    "dec": _op(1, "a - 1", {**_ZERO_NEGATIVE, "carry": "result[w]", "overflow": "(a & ~result)[w-1]"}),
    "shl": _op(1, "a << 1", {**_ZERO_NEGATIVE, "carry": "a[w-1]"}),
    "shr": _op(1, "a >> 1", {**_ZERO_NEGATIVE, "carry": "a[0]"}),
    "rol": _op(1, "(a << 1) | carry", {**_ZERO_NEGATIVE, "carry": "a[w-1]"}),
    "ror": _op(1, "(a >> 1) | (carry << (w - 1))", {**_ZERO_NEGATIVE, "carry": "a[0]"}),
}
"""The built-in operations, in the form of an ``[alu.NAME]`` table of a machine file."""


@dataclass(frozen=True)
class AluOp:
    """One ALU operation: ``result`` over the operands, kept to ``width``; each flag's expression.

    ``width`` is ``"widest"`` (as wide as the widest operand, the notation's
    rule and the built-ins' width), an operand letter (as wide as that
    operand) or a number of bits. Flag keys are roles (``carry``) or flag names
    (``lk``); ``reads`` are the flags the expressions read, by role or name.
    """
    name: str
    arity: int
    result: AluExpr
    width: str | int
    flags: dict[str, AluExpr]
    texts: dict[str, str] = field(compare=False)
    """The written text of ``result`` and of each flag (``flags.carry``), for ``isa``."""

    @property
    def operands(self) -> str:
        return OPERAND_LETTERS[:self.arity]

    @property
    def reads(self) -> tuple[str, ...]:
        names = free_names(self.result).union(*(free_names(e) for e in self.flags.values()))
        return tuple(sorted(names - set(self.operands) - set(_ROLE_OF_RESULT)))

    def result_width(self, operand_widths) -> int:
        if isinstance(self.width, int):
            return self.width
        if self.width == "widest":
            return max(operand_widths)
        return operand_widths[self.operands.index(self.width)]

    def produces(self, flag) -> str | None:
        """The key of ``self.flags`` that sets ``flag`` (its name first, then its role), or None."""
        for key in (flag.name, flag.role):
            if key in self.flags:
                return key
        return None

    def width_problem(self, w: int) -> str | None:
        """Why the operation cannot work ``w`` bits wide (a slice index or shift below zero), or None."""
        env = {"w": w}
        for expr in (self.result, *self.flags.values()):
            for high, low in _index_pairs(expr):
                h, l = evaluate(high, env), evaluate(low, env)
                if l < 0 or h < l:
                    return f"{self.name} cannot work {w} bit{'s' if w != 1 else ''} wide (a bit index is {l if l < 0 else h})"
                if h > _HIGHEST_INDEX:
                    return (f"{self.name} uses bit {h} at width {w}; bit indices and shifts stop at "
                            f"{_HIGHEST_INDEX} (registers hold at most 32 bits)")
        return None


def _index_pairs(node):
    match node:
        case BitRange(x, h, l):
            yield h, l
            yield from _index_pairs(x)
        case Binary("<<" | ">>", x, y):
            yield y, y
            yield from _index_pairs(x)
        case _:
            for part in alu_parts(node):
                yield from _index_pairs(part)


def resolve_flag(ref: str, flags: dict) -> tuple[object | None, str | None]:
    """The machine flag a definition means by ``ref`` (a flag name or a role), or why there is none."""
    if ref in flags:
        return flags[ref], None
    holders = [f for f in flags.values() if f.role == ref]
    if len(holders) == 1:
        return holders[0], None
    if not holders:
        if ref in FLAG_ROLE_NAMES:
            return None, f"reads the {ref} flag, and the machine has none"
        return None, f"reads '{ref}', which is no operand, flag or role (flags: {', '.join(flags) or 'none'})"
    return None, (f"reads the {ref} flag, and the machine has {len(holders)} "
                  f"({', '.join(f.name for f in holders)}): it cannot tell which (name the flag)")


Fail = Callable[[tuple, str], None]
"""``fail(key_path_inside_the_table, message)`` raises the reader's located error."""


def read_alu_op(name: str, raw: dict, fail: Fail, flags: dict | None = None) -> AluOp:
    """Check and build one definition; with ``flags`` (a machine's), also check the flags it names.

    Built-in definitions are read without flags: which flags a machine has
    is checked where a step uses the operation.
    """
    if not isinstance(raw, dict):
        fail((), "an ALU operation must be a table, e.g. { operands = 2, result = \"a + b\", width = \"a\" }")
    for key in raw:
        if key not in ("operands", "result", "width", "flags"):
            fail((key,), f"unknown key '{key}' (expected one of: operands, result, width, flags)")
    arity = raw.get("operands")
    if isinstance(arity, bool) or not isinstance(arity, int) or not 1 <= arity <= len(OPERAND_LETTERS):
        fail(("operands",), f"'operands' must be 1…{len(OPERAND_LETTERS)} (how many values the operation takes), "
                            f"not {arity!r}")
    letters = OPERAND_LETTERS[:arity]
    width = raw.get("width", "widest")
    if not (isinstance(width, str) and (width in letters or width == "widest")
            or isinstance(width, int) and not isinstance(width, bool) and 1 <= width <= 32):
        fail(("width",), f"'width' must be \"widest\" (the default), an operand ({', '.join(letters)}) "
                         f"or a number of bits 1…32, "
                         f"not {width!r}")
    texts = {}

    def expression(key: tuple, text, allowed: set[str]) -> AluExpr:
        if not isinstance(text, str):
            fail(key, f"'{'.'.join(key)}' must be an expression (a string), not {text!r}")
        try:
            tree = parse_alu_expression(text)
        except MachineError as exc:
            fail(key, f"'{'.'.join(key)}': {exc.message}")
        operands_in_index = index_names(tree) - {"w"}
        if operands_in_index:
            fail(key, f"'{'.'.join(key)}': a bit index or shift amount may use numbers and w only, "
                      f"not {', '.join(sorted(operands_in_index))}")
        for ref in sorted(free_names(tree) - allowed):
            if ref in ("result",):
                fail(key, f"'{'.'.join(key)}': 'result' can be read by the flags only")
            if flags is None:
                if ref not in FLAG_ROLE_NAMES:
                    fail(key, f"'{'.'.join(key)}' reads '{ref}', which is no operand ({', '.join(letters)}) "
                              f"or flag role")
            else:
                _flag, problem = resolve_flag(ref, flags)
                if problem:
                    fail(key, f"'{'.'.join(key)}' {problem}")
        texts[".".join(key)] = text
        return tree

    if "result" not in raw:
        fail((), "missing key 'result' (an expression over the operands, e.g. \"a + b\")")
    result = expression(("result",), raw["result"], set(letters) | {"w"})
    produced = raw.get("flags", {})
    if not isinstance(produced, dict):
        fail(("flags",), "'flags' must be a table of flag (role or name) = expression, "
                         "e.g. { carry = \"result[8]\", zero = \"result == 0\" }")
    made = {}
    for key, text in produced.items():
        if flags is not None and key not in flags and not any(f.role == key for f in flags.values()):
            known = ", ".join(flags) or "none"
            fail(("flags", key), f"produces '{key}', but the machine has no flag of that name or role (flags: {known})")
        if flags is None and key not in FLAG_ROLE_NAMES:
            fail(("flags", key), f"'{key}' is not a flag role")
        made[key] = expression(("flags", key), text, set(letters) | {"w", "result"})
    return AluOp(name, arity, result, width, made, texts)


def _builtin_failure(name: str):
    def fail(key, message):
        raise AssertionError(f"built-in ALU operation {name} {'.'.join(key)}: {message}")
    return fail


@cache
def _builtins() -> tuple[tuple[str, AluOp], ...]:
    return tuple((name, read_alu_op(name, raw, _builtin_failure(name)))
                 for name, raw in BUILTIN_DEFINITIONS.items())


def builtin_alu_ops() -> dict[str, AluOp]:
    """A fresh dict of the built-in operations (a machine adds its own definitions to it)."""
    return dict(_builtins())


class _BuiltinOperations(Mapping):
    """The built-in operations, read from their definitions when first looked at.

    Not at import: importing relaybench then parses nothing, and a run whose
    machine comes from the cache folder never needs them.
    """

    def __getitem__(self, name: str) -> AluOp:
        return _builtin_table()[name]

    def __iter__(self):
        return iter(_builtin_table())

    def __len__(self) -> int:
        return len(_builtin_table())


@cache
def _builtin_table() -> dict[str, AluOp]:
    return dict(_builtins())


ALU_OPS: Mapping[str, AluOp] = _BuiltinOperations()
"""The built-in operations; a machine's own table is ``Machine.alu_ops``."""
