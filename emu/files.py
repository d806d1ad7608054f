"""Writing files so that a failure never leaves half of one behind; indented JSON, written fast."""

from __future__ import annotations

import json
import os
import tempfile
from contextlib import contextmanager
from operator import itemgetter
from pathlib import Path

__all__ = ["atomic_output", "indented_json", "write_atomic", "write_together"]


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


_PLAIN = {int, str, type(None)}
"""Types whose values compare equal only within the type, so one encoding per distinct value is safe."""


def indented_json(value) -> str:
    """``json.dumps(value, indent=1)``, the same text, written a column at a time.

    Given an indent, the json module encodes in Python, a few calls for every
    value: 0.2 s for the debug file of a 100,000-line program, most of it its
    56,000 line entries. Files like that are mostly flat containers: objects
    mapping names to numbers, lists of objects that share their keys and hold
    plain values. Such a container is written here column by column: a column
    of integers through ``int.__repr__`` (as json writes them), any other
    column of plain values by encoding each distinct value once, and each row
    joined from its column's cells. Everything else (a bool, a float, a key
    that is not a string, a container that is not flat) goes to ``json.dumps``.
    """
    return _json_text(value, 0)


def _json_text(value, depth: int) -> str:
    if isinstance(value, dict) and value and set(map(type, value)) == {str}:
        if set(map(type, value.values())) <= _PLAIN:
            items = map("{}: {}".format, _json_column(list(value)), _json_column(list(value.values())))
        else:
            items = (f"{json.dumps(name)}: {_json_text(item, depth + 1)}" for name, item in value.items())
        return _json_container("{", items, "}", depth)
    if isinstance(value, list) and value:
        if set(map(type, value)) <= _PLAIN:
            return _json_container("[", _json_column(value), "]", depth)
        rows = _json_rows(value, depth + 1)
        if rows is None:
            rows = (_json_text(item, depth + 1) for item in value)
        return _json_container("[", rows, "]", depth)
    return json.dumps(value, indent=1).replace("\n", "\n" + " " * depth)


def _json_container(opening: str, items, closing: str, depth: int) -> str:
    inner = "\n" + " " * (depth + 1)
    return opening + inner + ("," + inner).join(items) + "\n" + " " * depth + closing


def _json_column(column: list) -> list[str]:
    """Each value of a column of plain values as json writes it."""
    if set(map(type, column)) == {int}:
        return list(map(int.__repr__, column))
    codes = {value: json.dumps(value) for value in set(column)}
    return list(map(codes.__getitem__, column))


def _json_rows(rows: list, depth: int) -> list[str] | None:
    """Objects that share their keys, in one order, and hold plain values, each written as json
    would write it at ``depth``; None for any other list."""
    if set(map(type, rows)) != {dict} or len(set(map(tuple, rows))) != 1:
        return None
    keys = list(rows[0])
    if not keys or set(map(type, keys)) != {str}:
        return None
    columns = [list(map(itemgetter(key), rows)) for key in keys]
    if not all(set(map(type, column)) <= _PLAIN for column in columns):
        return None
    cells = [map((json.dumps(key) + ": ").__add__, _json_column(column)) for key, column in zip(keys, columns)]
    inner = "\n" + " " * (depth + 1)
    opening, closing = "{" + inner, "\n" + " " * depth + "}"
    return [opening + row + closing for row in map(("," + inner).join, zip(*cells))]
