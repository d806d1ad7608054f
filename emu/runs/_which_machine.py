"""Which machine a program runs on, so a folder of programs needs no ``--machine``.

The first of these that names a machine wins:

1. ``--machine`` on the command line;
2. the program's own word: ``.machine "NAME-OR-PATH"`` as the first
   statement of its source (a path is relative to the program file), or,
   for an image, the machine its debug file was written for (a shipped
   name, or the machine file's path, which the debug file keeps);
3. ``machine = "NAME-OR-PATH"`` in the program's panel file (a path is
   relative to the panel file);
4. ref8.

A name is a shipped machine when one has that name, else a machine file.
A name that is neither is the program's (or panel file's) error, shown at
its place; a machine file that does not load is that file's error.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import asm

from ..description import Machine, load_machine, shipped_machines
from ._loading import ProgramError
from ._panel_files import panel_machine, panel_path_for

__all__ = ["DEFAULT_MACHINE", "MachineChoice", "MachineChooser"]

DEFAULT_MACHINE = "ref8"


@dataclass(frozen=True)
class MachineChoice:
    """A machine and what chose it: ``"command line"``, ``"program"``, ``"panel file"`` or ``"default"``."""
    machine: Machine
    chosen_by: str


class MachineChooser:
    """Settles each program's machine; a machine file is loaded once however many programs use it."""

    def __init__(self, command_line: str | None = None):
        self.command_line = command_line
        self._loaded: dict[str, Machine] = {}

    def choose(self, program_path: str | os.PathLike) -> MachineChoice:
        if self.command_line is not None:
            return MachineChoice(self._load(self.command_line), "command line")
        program_path = Path(program_path)
        named = self._program_names(program_path)
        if named is not None:
            return MachineChoice(named, "program")
        panel_path = panel_path_for(str(program_path))
        panel = panel_machine(panel_path) if panel_path.exists() else None
        if panel is not None:
            path = self._resolve(panel.name, panel_path.parent)
            if path is None:
                message = _unknown(panel.name, "the panel file")
                raise ProgramError(message, diagnostics=[asm.Diagnostic(str(panel_path), panel.line, None,
                                                                        f"'machine': {message}")])
            return MachineChoice(self._load(path), "panel file")
        return MachineChoice(self._load(DEFAULT_MACHINE), "default")

    def machine_for(self, program_path) -> Machine:
        return self.choose(program_path).machine

    def _program_names(self, program_path: Path) -> Machine | None:
        try:
            kind = asm.sniff(program_path) if program_path.is_file() else None
        except (OSError, asm.AsmError):
            kind = None
        if kind is None:
            return None
        if kind == "source":
            directive = asm.machine_directive(program_path)
            if directive is None:
                return None
            path = self._resolve(directive.name, program_path.parent)
            if path is None:
                raise ProgramError(_unknown(directive.name, "the program file"), diagnostics=[asm.Diagnostic(
                    directive.file, directive.line, directive.column,
                    _unknown(directive.name, "the program file"), directive.source_line)])
            return self._load(path)
        return self._debug_file_names(program_path)

    def _debug_file_names(self, image: Path) -> Machine | None:
        """An image is for the machine its debug file names: a shipped machine, or a machine file.

        A debug file that does not read, or names a machine that cannot be
        found, is this image's error: any other machine would misread it.
        """
        debug_path = asm.debug_path_for(image)
        if not debug_path.exists():
            return None
        try:
            named = asm.read_debug_machine(debug_path)
        except asm.AsmError as exc:
            raise ProgramError(exc.message, diagnostics=exc.diagnostics) from None
        if named.file is not None:
            if Path(named.file).is_file():
                return self._load(named.file)
            why = f" from {os.path.abspath(named.file)}, which is not there"
        elif named.name in shipped_machines():
            return self._load(named.name)
        else:
            why = ", which is not a shipped machine, and the debug file names no machine file"
        raise ProgramError(f"the image was assembled for machine '{named.name}'{why}: "
                           f"name its machine file with --machine FILE", file=str(debug_path))

    @staticmethod
    def _resolve(name: str, folder: Path) -> str | None:
        """A shipped name as it is, a path relative to ``folder``, or None when neither exists."""
        if name in shipped_machines():
            return name
        path = folder / name
        return str(path) if path.is_file() else None

    def _load(self, name_or_path: str) -> Machine:
        key = name_or_path if name_or_path in shipped_machines() else os.path.realpath(name_or_path)
        if key not in self._loaded:
            self._loaded[key] = load_machine(name_or_path)
        return self._loaded[key]


def _unknown(name: str, relative_to: str) -> str:
    return (f"no machine '{name}': not a shipped machine ({', '.join(sorted(shipped_machines()))}) "
            f"nor a machine file (a path is relative to {relative_to})")
