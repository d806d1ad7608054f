"""Writing files so that a failure never leaves half of one behind."""

from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager
from pathlib import Path

__all__ = ["atomic_output", "write_atomic", "write_together"]


def _staging_file(path: Path) -> str:
    """A new temporary file beside ``path`` (same folder, so the rename is atomic)."""
    if path.is_dir():
        raise IsADirectoryError(21, "Is a directory", str(path))
    handle, temp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.resolve().parent)
    os.close(handle)
    return temp


def _put_in_place(temp: str, path: Path) -> None:
    os.chmod(temp, path.stat().st_mode & 0o777 if path.exists() else 0o644)
    os.replace(temp, path)


@contextmanager
def atomic_output(path: str | Path, *, text: bool = False, keep_on_error: bool = False):
    """A stream into a temporary file beside ``path``, renamed into place when the block ends.

    If the block fails the temporary file is removed and ``path`` is left as
    it was — unless ``keep_on_error``, for recordings (a waveform up to a
    Ctrl-C is still worth having). The new file keeps the old one's
    permissions, or gets the usual 0644.
    """
    path = Path(path)
    temp = _staging_file(path)
    stream = open(temp, "w" if text else "wb", **({"encoding": "utf-8"} if text else {}))
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
            _put_in_place(temp, path)
        else:
            os.unlink(temp)


def write_atomic(path: str | Path, data: bytes | str) -> None:
    """Write ``data`` to ``path`` atomically (see ``atomic_output``)."""
    payload = data.encode("utf-8") if isinstance(data, str) else data
    with atomic_output(path) as stream:
        stream.write(payload)


def write_together(outputs: dict[str | Path, bytes]) -> None:
    """Write several files so that either all of them change or none does.

    Every file is first written in full to a temporary beside it; only when
    all are written are they renamed into place. A failure (a folder where a
    file should go, a full disk) removes the temporaries and raises the
    ``OSError`` with ``filename`` set, leaving every old file as it was.
    """
    staged: list[tuple[str, Path]] = []
    try:
        for path, data in outputs.items():
            path = Path(path)
            try:
                temp = _staging_file(path)
                staged.append((temp, path))
                with open(temp, "wb") as stream:
                    stream.write(data)
            except OSError as exc:
                exc.filename = str(path)
                raise
    except BaseException:
        for temp, _path in staged:
            os.unlink(temp)
        raise
    for temp, path in staged:
        _put_in_place(temp, path)
