"""A small collector of Python source lines, for the micro-step compiler, and the compiling of them."""

from __future__ import annotations

import os
from collections import Counter
from contextlib import contextmanager
from pathlib import Path

from ..files import write_atomic

__all__ = ["Emitter", "compile_generated"]


def compile_generated(source: str, name: str, dump_name: str | None = None):
    """Compile generated code; with ``RELAYBENCH_DUMP_CODE`` set, from a file tracebacks can show.

    ``name`` labels the code (``<relaybench:NAME>``); the dumped file is
    ``DUMP_NAME.py`` (``NAME.py`` when not given) in that folder.
    """
    filename = f"<relaybench:{name}>"
    dump = os.environ.get("RELAYBENCH_DUMP_CODE")
    if dump:
        path = Path(dump) / f"{dump_name or name}.py"
        path.parent.mkdir(parents=True, exist_ok=True)
        write_atomic(path, source)
        filename = str(path)
    return compile(source, filename, "exec")


class Emitter:
    """Lines of Python with an indentation context and fresh local names.

    Fresh names (``v_1``, ``r_2``) keep generated functions readable: a
    builder who opens the dumped source sees one short name per value.
    """

    def __init__(self):
        self.lines: list[str] = []
        self._level = 0
        self._counts: Counter[str] = Counter()

    def line(self, text: str = "") -> None:
        self.lines.append("    " * self._level + text if text else "")

    @contextmanager
    def indent(self):
        self._level += 1
        try:
            yield
        finally:
            self._level -= 1

    def fresh(self, base: str) -> str:
        self._counts[base] += 1
        return f"{base}_{self._counts[base]}"

    def source(self) -> str:
        return "\n".join(self.lines) + "\n"
