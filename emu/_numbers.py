"""Numbers typed by a person outside a program: options and debugger commands.

They use the assembler's notation (spec §4) so that a value copied from a
listing or a source line means the same thing on the command line:
``42``, ``0x2A``, ``0b101010`` and ``'A'`` (with the assembler's escapes).
"""

from __future__ import annotations

import re

__all__ = ["parse_number", "decode_escapes", "NUMBER_FORMS"]

NUMBER_FORMS = "42, 0x2A, 0b101010 or 'A'"

_ESCAPES = {"n": "\n", "t": "\t", "r": "\r", "0": "\0", "\\": "\\", "'": "'", '"': '"'}
_INTEGER = re.compile(r"[+-]?(0[xX][0-9A-Fa-f]+(_[0-9A-Fa-f]+)*|0[bB][01]+(_[01]+)*|[0-9]+(_[0-9]+)*)")
_ESCAPE = re.compile(r"\\(.)", re.DOTALL)


def decode_escapes(text: str) -> str:
    """Replace the assembler's backslash escapes; an unknown one is a ValueError."""
    def replace(match: re.Match) -> str:
        code = match[1]
        if code not in _ESCAPES:
            known = " ".join("\\" + k for k in _ESCAPES)
            raise ValueError(f"unknown escape '\\{code}' (known: {known})")
        return _ESCAPES[code]
    if text.endswith("\\") and not text.endswith("\\\\"):
        raise ValueError("a backslash at the end needs a character after it")
    return _ESCAPE.sub(replace, text)


def parse_number(text: str) -> int:
    """An integer in assembler notation; ValueError with the forms it accepts."""
    stripped = text.strip()
    if _INTEGER.fullmatch(stripped):
        digits = stripped.lstrip("+-")[:2].lower()
        return int(stripped, 0 if digits in ("0x", "0b") else 10)
    if len(stripped) >= 3 and stripped[0] == stripped[-1] == "'":
        try:
            value = decode_escapes(stripped[1:-1])
        except ValueError:
            value = ""
        if len(value) == 1:
            return ord(value)
    raise ValueError(f"'{text}' is not a number (write it as {NUMBER_FORMS})")
