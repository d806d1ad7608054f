"""How relaybench writes numbers and durations for a person, in every command.

A builder reads addresses off one command and types them into another, and
compares times printed by ``run``, ``test`` and ``clock``, so all of them
write a value the same way: hex with ``0x`` and as many upper-case digits
as the machine's word or address has (``0x006E`` on a 16-bit bus), counts
with thousands separators, durations in days, hours, minutes and seconds.
JSON output keeps plain numbers; this module is for text only.
"""

from __future__ import annotations

__all__ = ["hex_value", "hex_digits", "address_text", "word_text", "count_text", "duration_text", "rate_text",
           "hours_text", "size_text"]

_UNITS = (("d", 86_400), ("h", 3_600), ("min", 60), ("s", 1))


def hex_value(value: int, bits: int) -> str:
    """``hex_value(0x6E, 16)`` → ``0x006E``: one digit per four bits, upper case."""
    return "0x" + hex_digits(value, bits)


def hex_digits(value: int, bits: int) -> str:
    """``hex_digits(0x6E, 16)`` → ``006E``: the same digits without the prefix, for
    the debugger's dense panel and code views where every column is hex."""
    return f"{value:0{(bits + 3) // 4}X}"


def address_text(value: int, machine) -> str:
    """An address as wide as the machine's address bus."""
    return hex_value(value, machine.address_bits)


def word_text(value: int, machine) -> str:
    """A data word as wide as the machine's words."""
    return hex_value(value, machine.data_bits)


def count_text(count: int, noun: str | None = None) -> str:
    """``31010`` → ``31,010``; with a noun, ``1 cycle`` / ``2 cycles``."""
    text = f"{count:,}"
    if noun is None:
        return text
    return f"{text} {noun}{'' if count == 1 else 's'}"


def duration_text(seconds: float, units: int | None = None) -> str:
    """``8274`` → ``2 h 17 min 54 s``; under a minute keeps one decimal: ``12.4 s``.

    Days are the largest unit (``115 d 17 h 46 min 40 s``, ``1,204 d 3 h 0 min 0 s``):
    one scale for a short run and a relay's life alike, every unit below the
    first shown, so that two spans line up when compared. ``units`` keeps only
    that many units from the first, rounded (``units=2``: ``296 d 24 h`` is
    never written, ``297 d 0 h`` is), where seconds of a long span are noise.
    """
    if seconds < 59.95:
        text = f"{seconds:.1f}".rstrip("0").rstrip(".")
        return f"{text} s"
    sizes = [size for _unit, size in _UNITS]
    first = next(i for i, size in enumerate(sizes) if seconds >= size)
    last = len(sizes) - 1 if units is None else min(first + units - 1, len(sizes) - 1)
    remaining = round(seconds / sizes[last]) * sizes[last]
    parts = []
    for unit, size in _UNITS[:last + 1]:
        count, remaining = divmod(remaining, size)
        if count or parts:
            parts.append(f"{count:,} {unit}")
    return " ".join(parts)


def hours_text(hours: float) -> str:
    """A span given in hours (a relay's rated life), to its two largest units: ``296 d 23 h``."""
    return duration_text(hours * 3_600, units=2)


def rate_text(hz: float) -> str:
    """A clock or simulation rate without noise digits: ``5 Hz``, ``2.5 Hz``, ``1.2 kHz``, ``3.4 MHz``."""
    for prefix, size in (("M", 1e6), ("k", 1e3)):
        if hz >= size:
            return f"{hz / size:.3g} {prefix}Hz"
    return f"{hz:.3g} Hz"


def size_text(count: int | float) -> str:
    """A file size in decimal units, three digits: ``812 B``, ``20.5 kB``, ``252 MB``, ``1.68 GB``."""
    for prefix, size in (("G", 1e9), ("M", 1e6), ("k", 1e3)):
        if count >= size:
            return f"{count / size:.3g} {prefix}B"
    return f"{count:.0f} B"
