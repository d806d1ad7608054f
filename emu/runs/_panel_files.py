"""Panel files: the toggles and input a program expects, kept beside it.

A program that reads the panel switches or the input stream gets them from
an optional *panel file* beside it, ``prog.asm`` → ``prog.panel.toml``::

    switches = 0x2A          # the panel toggles (default 0)
    input = "12,7\\n"        # the input stream as text, or
    input_file = "prog.in"   # its bytes from a file (relative to the panel file)
    max_cycles = 20_000_000  # a tighter (or looser) limit for this program
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

from ..description import Machine
from ._loading import ProgramError

__all__ = ["PANEL_SUFFIX", "PanelSettings", "panel_path_for", "read_panel_file"]

PANEL_SUFFIX = ".panel.toml"


@dataclass(frozen=True)
class PanelSettings:
    switches: int = 0
    input_bytes: bytes = b""
    max_cycles: int | None = None


def panel_path_for(program_path: str) -> Path:
    path = Path(program_path)
    return path.with_name(path.stem + PANEL_SUFFIX)


def read_panel_file(path: Path, machine: Machine) -> PanelSettings:
    """Read and check a panel file; problems raise ProgramError naming the key."""
    def fail(message):
        raise ProgramError(f"{path}: error: {message}")
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        fail(f"cannot read the panel file ({exc})")
    except tomllib.TOMLDecodeError as exc:
        fail(f"not valid TOML: {exc}")
    except RecursionError:
        fail("not a panel file (nested too deeply)")
    known = ("switches", "input", "input_file", "max_cycles")
    for key in data:
        if key not in known:
            fail(f"unknown key '{key}' (expected one of: {', '.join(known)})")
    switches = data.get("switches", 0)
    if not isinstance(switches, int) or isinstance(switches, bool) or not 0 <= switches <= machine.data_mask:
        fail(f"'switches' must be an integer 0…{machine.data_mask} (the {machine.data_bits} toggles "
             f"of {machine.name}), not {switches!r}")
    if "input" in data and "input_file" in data:
        fail("give 'input' or 'input_file', not both")
    stream = b""
    if "input" in data:
        if not isinstance(data["input"], str):
            fail(f"'input' must be a string, not {data['input']!r}")
        stream = data["input"].encode("utf-8")
    if "input_file" in data:
        if not isinstance(data["input_file"], str):
            fail(f"'input_file' must be a file name, not {data['input_file']!r}")
        try:
            stream = (path.parent / data["input_file"]).read_bytes()
        except OSError as exc:
            fail(f"'input_file': cannot read '{data['input_file']}' ({exc.strerror})")
    limit = data.get("max_cycles")
    if limit is not None and (not isinstance(limit, int) or isinstance(limit, bool) or limit < 1):
        fail(f"'max_cycles' must be a positive integer, not {limit!r}")
    return PanelSettings(switches, stream, limit)
