"""The user's cache folder: work that is slow to redo and safe to keep between runs.

A short run spends most of its time on work that is the same every time:
the parse tables of the grammars and the compiled code of a machine. Each
is kept here as one file per key, so the next process reads it instead.

The cache may be shared by processes that run at once and may be damaged
(a full disk, a crash, a hand edit). Every entry is written to a temporary
file and renamed into place, and carries the hash of its key and of its
content: a file that is truncated, garbled or written for another key is
ignored and written anew, never trusted. The key always includes the
relaybench version and the Python implementation (``cache_tag``), so an
upgrade of either starts from a fresh entry. A cache that cannot be written
(a read-only home) only makes runs slower, never fails them.

Where: ``$RELAYBENCH_CACHE`` if set (``off`` turns the cache off), else
``$XDG_CACHE_HOME/relaybench``, else ``~/.cache/relaybench``. Removing the
folder clears it.
"""

from __future__ import annotations

import hashlib
import os
import sys
from functools import cache
from importlib import resources
from pathlib import Path
from typing import Callable, TypeVar

from . import __version__
from .files import write_atomic

__all__ = ["CACHE_VARIABLE", "cache_folder", "cached", "entry_key", "sources_fingerprint"]

CACHE_VARIABLE = "RELAYBENCH_CACHE"
_OFF = "off"
_MAGIC = b"relaybench cache 1\n"
_DIGEST_BYTES = 32
T = TypeVar("T")


def cache_folder() -> Path | None:
    """The folder entries go in, or None when the cache is turned off."""
    chosen = os.environ.get(CACHE_VARIABLE)
    if chosen:
        return None if chosen.strip().lower() == _OFF else Path(chosen)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "relaybench"


def entry_key(*parts: str | bytes) -> str:
    """A key (hex) for the given parts, the version and the Python implementation.

    Each part is length-prefixed, so ("ab", "c") and ("a", "bc") differ.
    """
    digest = hashlib.sha256()
    for part in (__version__, sys.implementation.cache_tag or "", *parts):
        data = part.encode("utf-8") if isinstance(part, str) else part
        digest.update(len(data).to_bytes(8, "little"))
        digest.update(data)
    return digest.hexdigest()


@cache
def sources_fingerprint(*packages: str) -> str:
    """A hash of every Python and grammar file of these packages (sub-packages included).

    In a key it makes sure that a change to the code that produced an entry
    (a new code generator, say) never reads an entry that code wrote before.
    """
    digest = hashlib.sha256()
    for package in packages:
        for name, data in _source_files(resources.files(package), ""):
            digest.update(name.encode("utf-8") + b"\0" + len(data).to_bytes(8, "little") + data)
    return digest.hexdigest()


def _source_files(folder, prefix: str):
    """(relative name, content) of each ``.py`` and ``.lark`` file below ``folder``, in name order."""
    for entry in sorted(folder.iterdir(), key=lambda e: e.name):
        if entry.is_dir():
            yield from _source_files(entry, f"{prefix}{entry.name}/")
        elif entry.name.endswith((".py", ".lark")):
            yield prefix + entry.name, entry.read_bytes()


def cached(kind: str, key: str, make: Callable[[], T], dump: Callable[[T], bytes],
           load: Callable[[bytes], T]) -> T:
    """``load`` of the entry stored under ``key`` in the folder ``kind``; when there is none
    (or it is damaged), ``make()``, stored as ``dump`` gives it.

    ``load`` sees only bytes that ``dump`` wrote for this very key: a damaged
    file fails its hash and is made anew.
    """
    saved = _read_entry(kind, key)
    if saved is not None:
        return load(saved)
    value = make()
    _write_entry(kind, key, dump(value))
    return value


def _entry_path(folder: Path, kind: str, key: str) -> Path:
    return folder / kind / f"{key}.bin"


def _read_entry(kind: str, key: str) -> bytes | None:
    """The content stored under ``key``, or None when there is none or it is damaged."""
    folder = cache_folder()
    if folder is None:
        return None
    try:
        data = _entry_path(folder, kind, key).read_bytes()
    except OSError:
        return None
    header = len(_MAGIC) + len(key) + 1 + _DIGEST_BYTES
    if not data.startswith(_MAGIC) or len(data) < header:
        return None
    stored_key = data[len(_MAGIC):len(_MAGIC) + len(key)]
    digest, content = data[header - _DIGEST_BYTES:header], data[header:]
    if stored_key != key.encode("ascii") or hashlib.sha256(content).digest() != digest:
        return None
    return content


def _write_entry(kind: str, key: str, content: bytes) -> None:
    """Store ``content`` under ``key``; a folder that cannot be written is passed over in silence."""
    folder = cache_folder()
    if folder is None:
        return
    path = _entry_path(folder, kind, key)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        write_atomic(path, _MAGIC + key.encode("ascii") + b"\n" + hashlib.sha256(content).digest() + content)
    except OSError:
        pass
