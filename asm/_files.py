"""Output files of the assembler: the engine's atomic write, failures as AsmError."""

from __future__ import annotations

import os

from emu.files import write_atomic as _write_atomic

from ._errors import file_error

__all__ = ["write_atomic"]


def write_atomic(path, data: bytes) -> None:
    """Write ``path`` atomically; a failure is an AsmError naming the file, not a traceback."""
    try:
        _write_atomic(path, data)
    except OSError as exc:
        raise file_error(os.fspath(path), f"cannot write ({exc.strerror or exc})") from None
