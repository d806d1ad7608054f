"""Panel files: the toggles and input a program expects, kept beside it.

A program that reads the panel switches or the input stream gets them from
an optional *panel file* beside it, ``prog.asm`` → ``prog.panel.toml``::

    switches = 0x2A          # the panel toggles (default 0)
    input = "12,7\\n"        # the input stream as text, or
    input_file = "prog.in"   # its bytes from a file (relative to the panel file)
    max_cycles = 20_000_000  # a tighter (or looser) limit for this program
    machine = "ref8"         # the machine it runs on: a shipped name or a machine file
                             # (relative to the panel file); see ``emu.runs.MachineChooser``
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

import asm

from ..description import Machine, Table, key_line, toml_syntax_error
from ._loading import ProgramError

__all__ = ["PANEL_SUFFIX", "PanelMachine", "PanelSettings", "panel_machine", "panel_path_for", "read_panel_file"]

PANEL_SUFFIX = ".panel.toml"


@dataclass(frozen=True)
class PanelSettings:
    switches: int = 0
    input_bytes: bytes = b""
    max_cycles: int | None = None


def panel_path_for(program_path: str) -> Path:
    path = Path(program_path)
    return path.with_name(path.stem + PANEL_SUFFIX)


@dataclass(frozen=True)
class PanelMachine:
    """The machine a panel file names, and where it says so."""
    name: str
    panel_path: Path
    line: int | None


def panel_machine(path: Path) -> PanelMachine | None:
    """The ``machine`` key of a panel file (None without one), read before the machine is known."""
    panel, text = _panel_table(path)
    name = panel.string("machine", default=None, expected="a machine name or the path of a machine file")
    if name is None:
        return None
    if not name.strip():
        panel.fail("'machine' must name a machine, not an empty string", "machine")
    return PanelMachine(name, path, key_line(text, ("machine",)))


def read_panel_file(path: Path, machine: Machine) -> PanelSettings:
    """Read and check a panel file; problems raise ProgramError naming the key and its line."""
    panel, _text = _panel_table(path)
    panel.known_keys(("switches", "input", "input_file", "max_cycles", "machine"))
    panel.string("machine", default=None, expected="a machine name or the path of a machine file")
    switches = panel.integer("switches", low=0, high=machine.data_mask, default=0,
                             expected=f"an integer 0…{machine.data_mask} (the {machine.data_bits} toggles "
                                      f"of {machine.name})")
    if "input" in panel and "input_file" in panel:
        panel.fail("give 'input' or 'input_file', not both", "input_file")
    stream = b""
    if "input" in panel:
        stream = panel.string("input", expected="a string").encode("utf-8")
    if "input_file" in panel:
        name = panel.string("input_file", expected="a file name")
        try:
            stream = (path.parent / name).read_bytes()
        except OSError as exc:
            panel.fail(f"'input_file': cannot read '{name}' ({exc.strerror})", "input_file")
    limit = panel.integer("max_cycles", low=1, default=None, expected="a positive integer")
    return PanelSettings(switches, stream, limit)


def _panel_table(path: Path) -> tuple[Table, str]:
    """The panel file as a checked-getter table, and its text (for key lines)."""
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ProgramError(f"cannot read the panel file ({exc})", file=str(path)) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message, line, column, source = toml_syntax_error(exc, text)
        raise ProgramError(message, diagnostics=[asm.Diagnostic(str(path), line, column,
                                                                f"not valid TOML: {message}", source)]) from None
    except RecursionError:
        raise ProgramError("not a panel file (nested too deeply)", file=str(path)) from None

    def fail(_where, key, message):
        line = key_line(text, key)
        raise ProgramError(message, diagnostics=[asm.Diagnostic(str(path), line, None, message)])

    return Table(data, "panel file", fail), text
