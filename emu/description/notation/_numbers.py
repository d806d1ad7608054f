"""The number and character notation of the assembly language, in one place
("Assembly language in brief" in emu/machines/ref8.md).

The assembler, the micro-step notation of machine files, command-line
options and debugger commands all read numbers this way, so a value copied
from a listing means the same thing everywhere: ``42``, ``0x2A``,
``0b101010`` and ``'A'`` (with the escapes ``\\n \\t \\r \\0 \\\\ \\' \\"``).
"""

from __future__ import annotations

import re

__all__ = ["ESCAPES", "NUMBER_FORMS", "decode_escapes", "literal_value", "parse_number"]

NUMBER_FORMS = "42, 0x2A, 0b101010 or 'A'"
ESCAPES = {"n": "\n", "t": "\t", "r": "\r", "0": "\0", "\\": "\\", "'": "'", '"': '"'}
_INTEGER = re.compile(r"[+-]?(0[xX][0-9A-Fa-f]+|0[bB][01]+|[0-9]+)")


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


def parse_number(text: str) -> int:
    """An integer typed by a person; ValueError naming the forms it accepts."""
    stripped = text.strip()
    if _INTEGER.fullmatch(stripped):
        sign = -1 if stripped.startswith("-") else 1
        try:
            return sign * literal_value(stripped.lstrip("+-"))
        except ValueError:
            pass
    elif len(stripped) >= 3 and stripped[0] == stripped[-1] == "'":
        value, problem = decode_escapes(stripped[1:-1])
        if problem is None and len(value) == 1:
            return ord(value)
    raise ValueError(f"'{text}' is not a number (write it as {NUMBER_FORMS})")
