"""The compiled code of a machine, kept in the user's cache folder between runs.

Generating and compiling a machine's source takes longer than a short run
emulates, and gives the same code every time for the same machine and the
same compiler. The key is the machine's ``repr`` (every field of the loaded
description, micro-step IR included, so a machine changed after loading is
another machine), the source of ``emu.description`` and ``emu.engine`` (a
changed compiler or loader never reads what an older one wrote), the
relaybench version and the Python implementation (``emu.cache``). The entry
is the ``marshal``-ed source, code object and longest fused cycle count.

With ``RELAYBENCH_DUMP_CODE`` set the cache is passed over: the code must
then name the dumped file, which only a fresh compile does.
"""

from __future__ import annotations

import marshal
import os
from typing import Callable

from ..cache import cached, entry_key, sources_fingerprint
from ..description import Machine

__all__ = ["cached_code"]

_GENERATOR_PACKAGES = ("emu.description", "emu.engine")
_NO_FAITHFUL_REPR = " at 0x"
"""In a repr, the mark of an object shown by its address: such a machine cannot be keyed."""


def cached_code(machine: Machine, generate: Callable[[], tuple], kind: str = "machine code") -> tuple:
    """``generate()``'s result for this machine (for its whole code: source, code, max_cycles), from
    the cache when it holds it; ``kind`` tells apart the pieces of code generated per machine."""
    description = repr(machine)
    if os.environ.get("RELAYBENCH_DUMP_CODE") or _NO_FAITHFUL_REPR in description:
        return generate()
    key = entry_key(kind, sources_fingerprint(*_GENERATOR_PACKAGES), description)
    return cached("code", key, generate, marshal.dumps, marshal.loads)
