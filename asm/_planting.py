"""Planted halts: the program assembled again with a pause in front of chosen statements.

On a relay machine the only breakpoint is a halt burnt into the program, and
inserting one moves everything after it by the halt's length. ``plant_halts``
does exactly that, through the assembler itself (so every label, every
``.org`` and every expression comes out as the real machine would have it),
and says what moved. The source lines stay those of the original files: a
planted halt maps to the statement it stands in front of. A label on that
statement (or alone on a line just above it) names the halt, so a jump to
the label stops there too.
"""

from __future__ import annotations

import bisect
from dataclasses import dataclass
from functools import cached_property
from typing import Iterable

from ._assembler import _Assembly
from ._errors import AsmError, Diagnostic, file_error
from ._program import Program

__all__ = ["Moved", "Planting", "plant_halts"]


@dataclass(frozen=True)
class Moved:
    """A name or data statement whose value is not what it was without the halts."""
    name: str
    """The label or constant, or ``FILE:LINE`` of a data statement without a label."""
    kind: str
    """``"code"`` or ``"data"`` (a label or data statement, by what it names), or ``"constant"``."""
    old: int
    new: int

    @property
    def shift(self) -> int:
        return self.new - self.old


@dataclass(frozen=True)
class Planting:
    original: Program
    program: Program
    """The program with the halts in it: load this one."""
    halts: dict[tuple[str, int], tuple[int, ...]]
    """(file, line) of a statement → the address(es) of the halt planted in front of it."""
    moved: tuple[Moved, ...]

    @property
    def halt_places(self) -> dict[int, tuple[str, int]]:
        """Address of a planted halt → (file, line) of the statement it precedes."""
        return {address: place for place, addresses in self.halts.items() for address in addresses}

    def relocate(self, address: int) -> int:
        """Where the word at ``address`` of the original program is now.

        Words no statement set (free memory, the stack) do not move: on the
        machine too, only what is assembled shifts; a label after the last
        statement moves with the statements.
        """
        starts = [old.address for old, _new in self._pairs]
        i = bisect.bisect_right(starts, address) - 1
        if i >= 0:
            old, new = self._pairs[i]
            if address < old.address + old.length:
                return new.address + (address - old.address)
        for name, value in self.original.labels.items():
            if value == address:
                return self.program.labels[name]
        return address

    def original_address(self, address: int) -> int | None:
        """Where the word now at ``address`` was in the original program; None for a planted halt."""
        if address in self.halt_places:
            return None
        for old, new in self._pairs:
            if new.address <= address < new.address + new.length:
                return old.address + (address - new.address)
        for name, value in self.program.labels.items():
            if value == address:
                return self.original.labels[name]
        return address

    @cached_property
    def _pairs(self) -> list:
        """(entry in the original, entry of the same statement now), by original address."""
        pairs = zip(self.original.lines, _without_halts(self.program.lines, set(self.halt_places)))
        return sorted(pairs, key=lambda pair: pair[0].address)


def _without_halts(lines, planted: set[int]) -> list:
    """The statements' entries of a planted program, each halt's own entry taken out.

    No statement starts at a halt's address (the halt takes its words), so
    the rest correspond one to one, in order, to the original's entries.
    """
    return [e for e in lines if e.address not in planted]


def plant_halts(original: Program, before: Iterable[tuple[str, int]]) -> Planting:
    """``original`` assembled again with the machine's pause in front of each (file, line).

    Each place must be an instruction of ``original``. The source is the
    text ``original`` was assembled from; included files are read again,
    and a file that changed since is an error (the image would not be the
    same program).
    """
    places = frozenset(before)
    code = {(e.file, e.line) for e in original.lines if e.kind == "code"}
    wrong = [place for place in sorted(places) if place not in code]
    if wrong:
        raise AsmError([_not_an_instruction(original, file, line) for file, line in wrong])
    main = next(iter(original.sources), "<input>")
    assembly = _Assembly(original.machine, plant_before=places)
    program = assembly.run("\n".join(original.sources.get(main, [])), main)
    for name, text in original.sources.items():
        if program.sources.get(name) != text:
            raise file_error(name, "changed since the program was assembled; load the program again "
                                   "before planting halts")
    halts = {place: tuple(addresses) for place, addresses in assembly.planted.items()}
    return Planting(original, program, halts, _what_moved(original, program, halts))


def _not_an_instruction(program: Program, file: str, line: int) -> Diagnostic:
    lines = program.sources.get(file)
    if lines is None:
        return Diagnostic(file, None, None, "no such file in the program")
    source = lines[line - 1] if 0 < line <= len(lines) else None
    return Diagnostic(file, line, 1, "a halt can be planted only in front of an instruction", source)


def _what_moved(original: Program, program: Program, halts) -> tuple[Moved, ...]:
    planted = {address for addresses in halts.values() for address in addresses}
    data_starts = {e.address for e in original.lines if e.kind == "data" and e.length}
    moved = []
    for name, old in original.labels.items():
        new = program.labels[name]
        if new != old:
            moved.append(Moved(name, "data" if old in data_starts else "code", old, new))
    labelled = set(original.labels.values())
    for old, new in zip(original.lines, _without_halts(program.lines, planted)):
        if old.kind == "data" and old.length and old.address != new.address and old.address not in labelled:
            moved.append(Moved(f"{old.file}:{old.line}", "data", old.address, new.address))
    for name, old in original.constants.items():
        if program.constants[name] != old:
            moved.append(Moved(name, "constant", old, program.constants[name]))
    return tuple(sorted(moved, key=lambda m: (m.old, m.name)))
