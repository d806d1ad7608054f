"""Writing files so that a failure never leaves half of one behind."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["write_atomic"]


def write_atomic(path: str | Path, data: bytes | str) -> None:
    """Write to a temporary file beside ``path``, then rename it into place."""
    path = Path(path)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    handle, temp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(payload)
        os.replace(temp, path)
    except BaseException:
        try:
            os.unlink(temp)
        except FileNotFoundError:
            pass
        raise
