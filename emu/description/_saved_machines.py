"""Loaded machines, kept in the user's cache folder between runs.

Reading a description checks every key and parses every micro-step: tens of
milliseconds, for a result that is the same every time the same file is
read by the same loader. So the ``Machine`` a file gives is pickled into the
cache (``emu.cache``) under a key made of the file's path and text and the
source of ``emu.description``: a changed file, or a changed loader or model,
never reads an older entry. Only a file that loads is kept; a bad one is
read, and its error reported, every time.
"""

from __future__ import annotations

import pickle
from functools import partial
from typing import Callable

from ..cache import cached, entry_key, sources_fingerprint
from ._model import Machine

__all__ = ["saved_machine"]


def saved_machine(text: str, path: str, load: Callable[[str, str], Machine]) -> Machine:
    """``load(text, path)``, from the cache when it holds that machine."""
    key = entry_key("machine", sources_fingerprint("emu.description"), path, text)
    return cached("machines", key, lambda: load(text, path),
                  partial(pickle.dumps, protocol=pickle.HIGHEST_PROTOCOL), pickle.loads)
