"""An instruction's ``syntax`` string → its mnemonic and operand shapes (``syntax_form.lark``).

The loader reads every form with this parser, so a form the assembler's
operand grammar could never read (``ld rd:reg, [x+]``) is refused at load,
naming the instruction, instead of failing on every program; the assembler
(asm/_forms.py) matches program operands against the shapes it returns.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import lark

from .notation import error_column, packaged_parser

__all__ = ["FormOperand", "SyntaxFormError", "parse_syntax_form"]


@dataclass(frozen=True)
class FormOperand:
    """``before`` + field (or literal ``name``) + ``after``, literal text in lower case."""
    before: str
    field: str | None
    kind: str | None
    name: str | None
    after: str
    column: int


class SyntaxFormError(ValueError):
    """A syntax string the operand grammar cannot read; the message has the column and a caret."""


@cache
def _parser() -> lark.Lark:
    return packaged_parser("emu.description.notation", "syntax_form.lark", start="form", maybe_placeholders=True)


_EXPECTED = {"NAME": "a name", "OPEN": "'[', '#' or '@'", "CLOSE": "']'", "LPAREN": "'('", "RPAREN": "')'",
             "COMMA": "','", "COLON": "':'", "$END": "the end"}


def _fail(text: str, column: int, why: str):
    caret = " " * (column - 1) + "^"
    raise SyntaxFormError(f"cannot read the syntax at column {column} ({why})\n    {text}\n    {caret}")


def parse_syntax_form(text: str) -> tuple[str, tuple[FormOperand, ...]]:
    """The mnemonic (lower case) and the operands of one ``syntax`` string."""
    try:
        tree = _parser().parse(text)
    except lark.UnexpectedInput as exc:
        column = error_column(exc, text)
        expected = sorted({_EXPECTED.get(t, t) for t in (getattr(exc, "expected", None) or getattr(exc, "allowed", None) or ())})
        why = f"expected {', '.join(expected)}" if expected else "not an operand the assembler can read"
        _fail(text, column, why + "; an operand is field:kind or a name, inside [ ] or after # or @")
    mnemonic, *operands = tree.children
    shapes = []
    for operand in operands:
        if operand is None:
            continue
        opening, *parts = operand.children
        closing = parts.pop()
        opens = [p for p in parts if isinstance(p, lark.Token) and p.type == "LPAREN"]
        shuts = [p for p in parts if isinstance(p, lark.Token) and p.type == "RPAREN"]
        core = next(p for p in parts if isinstance(p, lark.Tree))
        column = core.children[0].column
        if len(opens) != len(shuts):
            _fail(text, column, f"{len(opens)} '(' but {len(shuts)} ')' around this operand")
        before = (opening or "") + "(" * len(opens)
        after = ")" * len(shuts) + (closing or "")
        if core.data == "field":
            shapes.append(FormOperand(before, str(core.children[0]), str(core.children[1]), None, after, column))
        else:
            shapes.append(FormOperand(before, None, None, str(core.children[0]).lower(), after, column))
    return str(mnemonic).lower(), tuple(shapes)
