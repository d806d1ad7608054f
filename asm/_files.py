"""Writing output files so that a reader never sees half of one."""

from __future__ import annotations

import os
import tempfile

from ._errors import file_error

__all__ = ["write_atomic"]


def write_atomic(path, data: bytes) -> None:
    """Write to a temporary file in the same folder, then rename it over ``path``.

    A crash or a full disk leaves the old file in place, never a torn one;
    a failure is an AsmError naming the file, not a traceback.
    """
    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    temp = None
    try:
        handle, temp = tempfile.mkstemp(dir=folder, prefix="." + os.path.basename(path) + ".", suffix=".tmp")
        with os.fdopen(handle, "wb") as out:
            out.write(data)
        os.chmod(temp, os.stat(path).st_mode & 0o777 if os.path.exists(path) else 0o644)
        os.replace(temp, path)
    except OSError as exc:
        if temp is not None and os.path.exists(temp):
            os.unlink(temp)
        raise file_error(path, f"cannot write ({exc.strerror or exc})") from None
