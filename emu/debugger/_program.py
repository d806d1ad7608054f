"""What the debugger knows about the loaded program: names, lines and text.

The runner loads a program of any kind (source, Intel HEX, raw binary) the
way every command does. The debugger needs a little more than a run does:
labels apart from constants (only labels name addresses in a disassembly),
which words are code and which are data, and the source text to show
beside each instruction. That comes from the assembler's Program, or from
the debug file beside an image.
"""

from __future__ import annotations

import bisect
import os
from dataclasses import dataclass, field

from emu import Machine
from emu.runs import LoadedProgram, load_program

from ._panel import address_hex

__all__ = ["Places", "ProgramView", "load_view", "empty_view"]


@dataclass
class ProgramView:
    path: str | None
    loaded: LoadedProgram | None
    labels: dict[str, int]
    symbols: dict[str, int]
    lines: list
    """asm LineEntry objects: address, length, file, line, kind (code or data)."""
    pauses: frozenset[int]
    source_map: dict[int, tuple[str, int]]
    sources: dict[str, list[str]] = field(default_factory=dict)
    planting: object = None
    """The ``asm.Planting`` this image was assembled with when halts are planted in it."""

    def __post_init__(self):
        self._by_address: dict[int, list[str]] = {}
        for name, value in sorted(self.labels.items(), key=lambda kv: (kv[1], kv[0])):
            self._by_address.setdefault(value, []).append(name)
        self.code_starts = sorted(e.address for e in self.lines if e.kind == "code")

    def labels_at(self, address: int) -> list[str]:
        return self._by_address.get(address, [])

    def place(self, address: int) -> tuple[str, int] | None:
        return self.source_map.get(address)

    def place_text(self, address: int) -> str:
        place = self.place(address)
        return f"{place[0]}:{place[1]}" if place else ""

    def source_text(self, file: str, line: int) -> str | None:
        """The text of a source line, read from disk for an image's debug file."""
        if file not in self.sources:
            try:
                with open(file, encoding="utf-8", errors="replace") as stream:
                    self.sources[file] = stream.read().splitlines()
            except OSError:
                self.sources[file] = []
        text = self.sources[file]
        return text[line - 1] if 0 < line <= len(text) else None

    def symbol_for(self, address: int) -> str:
        """``label`` or ``label+k`` for the nearest label at or below ``address``."""
        values = sorted(self._by_address)
        i = bisect.bisect_right(values, address) - 1
        if i < 0:
            return ""
        base = values[i]
        name = self._by_address[base][0]
        return name if base == address else f"{name}+{address - base}"

    def files(self) -> list[str]:
        return sorted({file for file, _line in self.source_map.values()})

    def address_of_line(self, file: str, line: int) -> tuple[int, str, int] | None:
        """The first code address at ``file:line`` or the next line that has code.

        ``file`` may be the path as assembled or its last part(s).
        """
        chosen = [f for f in self.files() if f == file or _same_tail(f, file)]
        if not chosen:
            return None
        best = None
        for entry in self.lines:
            if entry.kind != "code" or entry.file not in chosen or entry.line < line:
                continue
            key = (entry.line, entry.address)
            if best is None or key < best[0]:
                best = (key, entry)
        if best is None:
            return None
        entry = best[1]
        return entry.address, entry.file, entry.line

    def instruction_starts_before(self, address: int, count: int) -> list[int]:
        i = bisect.bisect_left(self.code_starts, address)
        return self.code_starts[max(i - count, 0):i]


@dataclass(frozen=True)
class Places:
    """How the debugger names an address to a person: its hex digits, then the
    nearest label (``label+k``) and the source line where the program says so.

    Commands, arguments and stop reasons all name places through it, so an
    address reads the same in a breakpoint, a halt and a watchpoint message.
    """
    machine: Machine
    view: ProgramView

    def hex(self, address: int) -> str:
        return address_hex(self.machine, address)

    def name(self, address: int) -> str:
        parts = [self.hex(address)]
        if symbol := self.view.symbol_for(address):
            parts.append(symbol)
        if place := self.view.place_text(address):
            parts.append(place)
        return " ".join(parts)

    def halt_kind(self, address: int) -> str:
        """``"pause"``, ``"halt"`` or ``"planted halt"``: how the instruction at ``address`` got there."""
        if self.view.planting is not None and address in self.view.planting.halt_places:
            return "planted halt"
        return "pause" if address in self.view.pauses else "halt"


def _same_tail(path: str, tail: str) -> bool:
    return os.path.normpath(path).endswith(os.sep + os.path.normpath(tail)) or \
        os.path.basename(path) == tail


def load_view(path, machine) -> ProgramView:
    """Load a program as ``relaybench run`` would; raises the runner's ProgramError."""
    loaded = load_program(path, machine)
    return ProgramView(loaded.path, loaded, dict(loaded.labels), dict(loaded.symbols), list(loaded.lines),
                       frozenset(loaded.pauses), dict(loaded.source_map), dict(loaded.sources))


def empty_view() -> ProgramView:
    return ProgramView(None, None, {}, {}, [], frozenset(), {})
