"""Writing files so that a failure never leaves half of one behind."""

from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager
from pathlib import Path

__all__ = ["atomic_output", "write_atomic"]


@contextmanager
def atomic_output(path: str | Path, *, text: bool = False, keep_on_error: bool = False):
    """A stream into a temporary file beside ``path``, renamed into place when the block ends.

    If the block fails the temporary file is removed and ``path`` is left as
    it was — unless ``keep_on_error``, for recordings (a waveform up to a
    Ctrl-C is still worth having). The new file keeps the old one's
    permissions, or gets the usual 0644.
    """
    path = Path(path)
    if path.is_dir():
        raise IsADirectoryError(21, "Is a directory", str(path))
    handle, temp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.resolve().parent)
    stream = os.fdopen(handle, "w" if text else "wb", **({"encoding": "utf-8"} if text else {}))
    keep = False
    try:
        yield stream
        keep = True
    except BaseException:
        keep = keep_on_error
        raise
    finally:
        stream.close()
        if keep:
            os.chmod(temp, path.stat().st_mode & 0o777 if path.exists() else 0o644)
            os.replace(temp, path)
        else:
            os.unlink(temp)


def write_atomic(path: str | Path, data: bytes | str) -> None:
    """Write ``data`` to ``path`` atomically (see ``atomic_output``)."""
    payload = data.encode("utf-8") if isinstance(data, str) else data
    with atomic_output(path) as stream:
        stream.write(payload)
