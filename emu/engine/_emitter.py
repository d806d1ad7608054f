"""A small collector of Python source lines, for the micro-step compiler."""

from __future__ import annotations

from collections import Counter
from contextlib import contextmanager

__all__ = ["Emitter"]


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
