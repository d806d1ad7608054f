"""Loading a program of any kind: assembly source, Intel HEX or a raw image.

``run``, ``test``, ``debug`` and the benchmarks must mean the same thing by
"this program", so which file kinds are accepted and where an image's debug
file is looked for is decided here, once.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field

import asm

from ..description import Machine
from ..errors import RelaybenchError

__all__ = ["LoadedProgram", "ProgramError", "SOURCE_SUFFIXES", "load_program", "loaded_from_program"]

SOURCE_SUFFIXES = (".asm", ".inc")
"""File names that always mean assembly source (``relaybench test`` runs the ``.asm`` ones)."""


class ProgramError(RelaybenchError):
    """A program file that cannot be run, with every located problem found.

    ``diagnostics`` are the assembler's own when the program did not
    assemble (each with its file, line and column), else the one problem of
    the file; ``str()`` renders them all.
    """

    def __init__(self, message: str, *, file: str | None = None, diagnostics=()):
        self.diagnostics = tuple(diagnostics) or (asm.Diagnostic(file, None, None, message),)
        first = self.diagnostics[0]
        super().__init__(first.message, file=first.file, line=first.line, column=first.column,
                         source_line=first.source_line)

    def render(self) -> str:
        return "\n".join(d.render() for d in self.diagnostics)


@dataclass(frozen=True)
class LoadedProgram:
    """The words of a program and what is known about them.

    An image read without its debug file knows no pauses, checks or lines,
    so every halt in it ends a run ("Headless runs" in emu/machines/ref8.md).
    """
    path: str
    kind: str
    """``"source"``, ``"hex"`` or ``"binary"``."""
    segments: list[tuple[int, list[int]]]
    pauses: frozenset[int] = frozenset()
    expects: tuple[asm.Expect, ...] = ()
    source_map: dict[int, tuple[str, int]] = field(default_factory=dict)
    symbols: dict[str, int] = field(default_factory=dict)
    debug_path: str | None = None
    """The debug file that was read for an image, if one was found."""
    labels: dict[str, int] = field(default_factory=dict)
    lines: tuple = ()
    """``asm.LineEntry`` per statement: what the debugger's code view shows."""
    sources: dict[str, str] = field(default_factory=dict)
    """Source text by file name (assembled programs only)."""

    @property
    def word_count(self) -> int:
        return sum(len(words) for _start, words in self.segments)


def load_program(path: str | os.PathLike, machine: Machine) -> LoadedProgram:
    """Assembly source, Intel HEX or a raw binary, told apart by their content."""
    path = str(path)
    if os.path.isdir(path):
        raise ProgramError("is a folder, not a program file", file=path)
    if not os.path.exists(path):
        raise ProgramError("no such file", file=path)
    if not os.access(path, os.R_OK):
        raise ProgramError("cannot read the file (permission denied)", file=path)
    try:
        kind = asm.sniff(path)
        if kind == "source":
            loaded = _from_source(path, machine)
        else:
            loaded = _from_image(path, kind, machine)
    except asm.AsmError as exc:
        plainly_not = _not_a_program(path, exc)
        if plainly_not:
            raise ProgramError(plainly_not, file=path) from None
        raise ProgramError(exc.message, diagnostics=exc.diagnostics) from None
    if loaded.word_count == 0:
        raise ProgramError("the program is empty (no instruction or data to load)", file=path)
    return loaded


def _not_a_program(path: str, error: asm.AsmError) -> str | None:
    """One line instead of a flood when a text file is plainly no program at all.

    Text is taken as source; when not a single statement of it assembles
    (every line with content has a problem), it is some other kind of file —
    unless its name says it is assembly source, where the located errors help.
    """
    if os.path.splitext(path)[1].lower() in SOURCE_SUFFIXES:
        return None
    try:
        lines = open(path, encoding="utf-8").read().splitlines()
    except (OSError, UnicodeDecodeError):
        return None
    statements = {n for n, line in enumerate(lines, 1) if line.split(";")[0].strip()}
    located = {d.line for d in error.diagnostics if d.file == path}
    if len(statements) < 2 or not statements <= located:
        return None
    return (f"this is neither assembly source, Intel HEX nor a raw binary image "
            f"(none of its {len(statements)} lines assembles)")


def _from_source(path: str, machine: Machine) -> LoadedProgram:
    return loaded_from_program(path, asm.assemble_file(path, machine))


def loaded_from_program(path: str, program: asm.Program) -> LoadedProgram:
    """An assembled program as the runner and the debugger take it (kind ``"source"``):
    a source file read, or a program assembled again with halts planted in it."""
    return LoadedProgram(path, "source", program.segments, frozenset(program.pauses),
                         tuple(program.expects), dict(program.source_map), dict(program.symbols),
                         labels=dict(program.labels), lines=tuple(program.lines),
                         sources=dict(program.sources))


def _from_image(path: str, kind: str, machine: Machine) -> LoadedProgram:
    segments = asm.read_image(path, machine)
    debug_path = asm.debug_path_for(path)
    if not debug_path.exists():
        return LoadedProgram(path, kind, segments)
    info = asm.read_debug(debug_path, machine)
    if info.image_crc32 is not None and info.image_crc32 != asm.image_fingerprint(segments):
        raise ProgramError(f"this debug file was written for another image than {path} "
                           f"(assemble again, or remove the debug file)", file=str(debug_path))
    return LoadedProgram(path, kind, segments, frozenset(info.pauses), tuple(info.expects),
                         dict(info.source_map), dict(info.symbols), str(debug_path),
                         labels=dict(info.labels), lines=tuple(info.lines))
