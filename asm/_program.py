"""An assembled program: the words, their origins and the listing.

``Program`` is what every later tool receives: the emulator loads
``segments``, the runner reads ``pauses`` and ``expects``, the debugger
``source_map`` and ``labels``. ``debug_info()`` is the same knowledge as the
JSON the debug file holds.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from itertools import repeat

from emu.description import Machine

from ._debuginfo import Expect, LineEntry, debug_dict, source_map_of
from ._files import write_atomic

__all__ = ["Program", "write_listing"]

_WORDS_PER_ROW = 4


@dataclass
class Program:
    machine: Machine
    segments: list[tuple[int, list[int]]]
    """Sorted, non-overlapping runs of consecutive words: (start address, words)."""
    labels: dict[str, int]
    constants: dict[str, int]
    lines: list[LineEntry]
    pauses: list[int]
    expects: list[Expect]
    sources: dict[str, list[str]]
    """File name → its lines, for every file that took part (the main one first)."""
    listing_rows: list[tuple[str, int, LineEntry | None]] = field(repr=False)
    """(file, line number, what that line emitted) for every source line, in assembly order."""

    @property
    def symbols(self) -> dict[str, int]:
        """Labels and constants together (their names never clash)."""
        return {**self.constants, **self.labels}

    @cached_property
    def source_map(self) -> dict[int, tuple[str, int]]:
        """Word address → (file, line) of the statement that put it there."""
        return source_map_of(self.lines)

    def image(self) -> dict[int, int]:
        """Address → word for every word the program sets."""
        return {start + i: word for start, words in self.segments for i, word in enumerate(words)}

    def flat(self) -> list[int]:
        """The words from address 0 to the last one set, gaps as 0 (a raw binary's content)."""
        if not self.segments:
            return []
        start, words = self.segments[-1]
        result = [0] * (start + len(words))
        for start, words in self.segments:
            result[start:start + len(words)] = words
        return result

    def debug_info(self) -> dict:
        return debug_dict(self)

    def listing_text(self) -> str:
        """Address, words, cycles, file:line and source, one row per source line.

        Statements with more words than fit a row continue on rows of their own.
        """
        m = self.machine
        address_width = (m.address_bits + 3) // 4
        word_width = (m.data_bits + 3) // 4
        words_width = _WORDS_PER_ROW * (word_width + 1) - 1
        image = self.image()
        word_text = _word_texts(m.data_bits, word_width)
        main = next(iter(self.sources), "<input>")
        rows = [f"; listing of {main} for {m.name}",
                f"; {'addr':<{address_width}}  {'words':<{words_width}}  cyc  place"]
        no_words = " " * (2 + address_width + 2 + words_width + 7)
        for file, number, entry in self.listing_rows:
            text = self.sources[file][number - 1].rstrip()
            place = f"{file}:{number}"
            if entry is None:
                rows.append(f"{no_words}{place:<14} {text}")
                continue
            words = list(map(image.get, range(entry.address, entry.address + entry.length), repeat(0, entry.length)))
            cycles = "" if entry.cycles is None else str(entry.cycles)
            for i in range(0, max(len(words), 1), _WORDS_PER_ROW):
                chunk = " ".join(map(word_text, words[i:i + _WORDS_PER_ROW]))
                head = f"  {entry.address + i:0{address_width}X}  {chunk:<{words_width}}"
                if i == 0:
                    rows.append(f"{head}  {cycles:>3}  {place:<14} {text}")
                else:
                    rows.append(head.rstrip())
        symbols = self.symbols      # made anew on each use: once here, not once per symbol
        if symbols:
            rows.append("")
            rows.append("; symbols")
            for name in sorted(symbols):
                kind = "label" if name in self.labels else "constant"
                rows.append(f";   {name:<16} {symbols[name]:#0{address_width + 2}x}  {kind}")
        return "\n".join(rows) + "\n"


def _word_texts(bits: int, width: int):
    """A word → its hex digits in the listing: a table look-up when the words are narrow enough."""
    if bits <= 16:
        return [f"{w:0{width}X}" for w in range(1 << bits)].__getitem__
    return lambda w: f"{w:0{width}X}"


def write_listing(program: Program, path) -> None:
    """The listing of ``program``, written atomically."""
    write_atomic(path, program.listing_text().encode("utf-8"))
