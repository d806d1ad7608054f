"""Writing files so that a failure never leaves half of one behind."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["write_atomic"]


def write_atomic(path: str | Path, data: bytes | str) -> None:
    """Write to a temporary file beside ``path``, then rename it into place.

    A crash or a full disk leaves the old file (or none), never a torn one.
    The new file keeps the old one's permissions, or gets the usual 0644.
    """
    path = Path(path)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    folder = path.resolve().parent
    handle, temp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(payload)
        os.chmod(temp, path.stat().st_mode & 0o777 if path.exists() else 0o644)
        os.replace(temp, path)
    except BaseException:
        try:
            os.unlink(temp)
        except FileNotFoundError:
            pass
        raise
