"""The one error type of the assembler and the image readers.

A program is hand-written and often wrong in several places at once, so the
assembler collects every problem as a ``Diagnostic`` and raises a single
``AsmError`` holding all of them. Rendering follows the compiler habit that
editors understand: ``FILE:LINE:COL: error: message``, the line, a caret.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["AsmError", "Diagnostic"]


@dataclass(frozen=True)
class Diagnostic:
    """One problem. ``line`` and ``column`` count from 1; both are None for a
    problem with a whole file (it cannot be read, it is too large)."""
    file: str
    line: int | None
    column: int | None
    message: str
    source_line: str | None = None

    def render(self) -> str:
        if self.line is None:
            return f"{self.file}: error: {self.message}"
        head = f"{self.file}:{self.line}:{self.column}: error: {self.message}"
        if self.source_line is None:
            return head
        text = self.source_line.rstrip("\r\n")
        lead = "".join(ch if ch == "\t" else " " for ch in text[: max(self.column - 1, 0)])
        return f"{head}\n    {text}\n    {lead}^"


class AsmError(Exception):
    """Raised with every diagnostic found; ``str()`` renders them all."""

    def __init__(self, diagnostics: list[Diagnostic]):
        self.diagnostics = list(diagnostics)
        super().__init__(str(self))

    def __str__(self) -> str:
        return "\n".join(d.render() for d in self.diagnostics)


def file_error(path: str, message: str) -> AsmError:
    """An error about a whole file, with no line to point at."""
    return AsmError([Diagnostic(str(path), None, None, message)])
