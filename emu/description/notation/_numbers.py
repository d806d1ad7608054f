"""The number and character notation of the assembly language, in one place
("Assembly language in brief" in emu/machines/ref8.md).

The assembler, the micro-step notation of machine files, command-line
options and debugger commands all read numbers this way, so a value copied
from a listing means the same thing everywhere: ``42``, ``0x2A``,
``0b101010`` and ``'A'`` (with the escapes ``\\n \\t \\r \\0 \\\\ \\' \\"``).
What a number looks like is said once, by the terminals of ``numbers.lark``;
what it is worth, by the functions here.
"""

from __future__ import annotations

from functools import cache

import lark

from ._grammars import packaged_parser

__all__ = ["ESCAPES", "NUMBER_FORMS", "char_value", "decode_escapes", "literal_value",
           "parse_number"]

NUMBER_FORMS = "42, 0x2A, 0b101010 or 'A'"
ESCAPES = {"n": "\n", "t": "\t", "r": "\r", "0": "\0", "\\": "\\", "'": "'", '"': '"'}


def literal_value(text: str) -> int:
    """A number literal's value: decimal (leading zeros allowed), ``0x`` hex or ``0b`` binary.

    ValueError for one of more than 100 characters: no word of any machine
    needs it, and Python would refuse to print its value.
    """
    if len(text) > 100:
        raise ValueError(f"the number {text[:12]}… has too many digits")
    lower = text.lower()
    if lower.startswith(("0x", "0b")):
        return int(lower[2:], 16 if lower[1] == "x" else 2)
    return int(lower, 10)


def decode_escapes(raw: str) -> tuple[str, str | None]:
    """Text between quotes → its value and the first problem, if any."""
    out, i = [], 0
    while i < len(raw):
        ch = raw[i]
        if ch != "\\":
            out.append(ch)
            i += 1
            continue
        if i + 1 == len(raw):
            return "", "a backslash at the end needs a character after it"
        code = raw[i + 1]
        if code not in ESCAPES:
            known = " ".join("\\" + k for k in ESCAPES)
            return "", f"unknown escape '\\{code}' (known: {known})"
        out.append(ESCAPES[code])
        i += 2
    return "".join(out), None


def char_value(token: str) -> int:
    """A CHAR token (``'A'``, ``'\\n'``) → its character code; ValueError for an unknown escape."""
    value, problem = decode_escapes(token[1:-1])
    if problem:
        raise ValueError(problem)
    return ord(value)


@cache
def _signed_number() -> lark.Lark:
    return packaged_parser("emu.description.notation", "numbers.lark", start="signed")


def parse_number(text: str) -> int:
    """An integer typed by a person, optionally signed; ValueError naming the forms it accepts."""
    try:
        tokens = _signed_number().parse(text.strip()).children
        sign = -1 if tokens[0] == "-" else 1
        token = tokens[-1]
        return sign * (char_value(token) if token.type == "CHAR" else literal_value(token))
    except (lark.LarkError, ValueError):
        raise ValueError(f"'{text}' is not a number (write it as {NUMBER_FORMS})") from None
