"""Reading a command's arguments: numbers, counts, addresses, places and targets.

Every command reads its words through these functions, so a number is
spelt the same way everywhere (the notation of ``emu.description``) and a
bad word gets the same kind of one-line message naming what was expected.
"""

from __future__ import annotations

import difflib
import re

from emu.description.notation import NUMBER_FORMS, parse_number
from emu.formatting import address_text, hex_value

from ._conditions import Watch
from ._program import Places
from ._table import DebugError

__all__ = ["address", "count", "no_arguments", "number", "target", "value_for", "watched_hex", "where"]

_FILE_LINE = re.compile(r"(.+):(\d+)")
_MEMORY = re.compile(r"\[(.+)\]")
_LABEL_OFFSET = re.compile(r"([A-Za-z_]\w*)\s*([+-])\s*(.+)")
_NAME = re.compile(r"[A-Za-z_]\w*")


def number(text: str, what: str = "value") -> int:
    try:
        return parse_number(text)
    except ValueError:
        raise DebugError(f"{what} '{text}' is not a number (write it as {NUMBER_FORMS})") from None


def count(args: list[str], default: int, what: str = "count") -> int:
    """The one optional positive count a command takes."""
    if not args:
        return default
    if len(args) > 1:
        raise DebugError(f"one {what} expected, not {len(args)} words")
    value = number(args[0], what)
    if value < 1:
        raise DebugError(f"{what} must be at least 1, not {value}")
    return value


def no_arguments(args: list[str], name: str) -> None:
    if args:
        raise DebugError(f"'{name}' takes no arguments")


def address(places: Places, text: str) -> int:
    """A number, a label, or label+k / label-k."""
    symbols = places.view.symbols
    memory_words = places.machine.memory_words
    match = _LABEL_OFFSET.fullmatch(text)
    if match and match[1] in symbols:
        offset = number(match[3], "offset")
        value = symbols[match[1]] + (offset if match[2] == "+" else -offset)
    elif text in symbols:
        value = symbols[text]
    elif _NAME.fullmatch(text):
        close = difflib.get_close_matches(text, list(symbols), n=1)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        raise DebugError(f"no label '{text}' in the program{hint}")
    else:
        value = number(text, "address")
    if not 0 <= value < memory_words:
        raise DebugError(f"address {value} is outside memory (0…{memory_words - 1})")
    return value


def where(places: Places, text: str) -> tuple[int, str]:
    """A breakpoint place: FILE:LINE, a label or an address; also how to name it."""
    match = _FILE_LINE.fullmatch(text)
    if match and not match[1].startswith("'"):
        found = places.view.address_of_line(match[1], int(match[2]))
        if found is None:
            files = ", ".join(places.view.files()) or "none (no debug information)"
            raise DebugError(f"no code at or after {text} (source files: {files})")
        found_address, file, line = found
        return found_address, f"{file}:{line}"
    found_address = address(places, text)
    return found_address, places.name(found_address)


def target(places: Places, text: str) -> Watch:
    """A register, group or flag name, or [address]."""
    match = _MEMORY.fullmatch(text)
    if match:
        word = address(places, match[1].strip())
        return Watch(0, address=word, label=f"[{places.hex(word)}]")
    m = places.machine
    names = m.visible_names
    if text.lower() in names:
        return Watch(0, name=text.lower(), label=text.lower())
    raise DebugError(f"'{text}' is not a register or flag of {m.name} "
                     f"({', '.join(names)}), nor a memory word [ADDRESS]")


def watched_bits(machine, watched: Watch) -> int:
    """The width of a register, group, flag or memory word named by ``target``."""
    if watched.name is None:
        return machine.data_bits
    return 1 if watched.name in machine.flags else machine.register_width(watched.name)


def watched_hex(machine, watched: Watch, value: int) -> str:
    """A value of ``watched`` in hex as wide as it (``0x0F`` in an 8-bit register)."""
    return hex_value(value, watched_bits(machine, watched))


def value_for(machine, watched: Watch, text: str) -> int:
    """A value that fits the register, flag or memory word ``watched`` (negative ones wrap)."""
    bits = watched_bits(machine, watched)
    value = number(text)
    low = 0 if bits == 1 else -(1 << (bits - 1))
    if not low <= value < 1 << bits:
        shown = text.strip()
        where = watched.name or f"[{address_text(watched.address, machine)}]"
        if bits == 1:
            raise DebugError(f"{shown} does not fit {where}, 1 bit (0 or 1)")
        raise DebugError(f"{shown} does not fit {where}, {bits} bits ({low}…{(1 << bits) - 1}, "
                         f"or {hex_value(0, bits)}…{hex_value((1 << bits) - 1, bits)})")
    return value & ((1 << bits) - 1)
