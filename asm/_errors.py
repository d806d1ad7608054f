"""The error of the assembler and the image readers, in relaybench's one family.

A program is hand-written and often wrong in several places at once, so the
assembler collects every problem as a ``Diagnostic`` and raises a single
``AsmError`` holding all of them. Each renders as every relaybench error
does (``emu.errors``): ``FILE:LINE:COL: error: message``, the line, a caret.
"""

from __future__ import annotations

from dataclasses import dataclass

from emu.errors import RelaybenchError, render_location

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
        return render_location(self.message, self.file, self.line, self.column, self.source_line)


class AsmError(RelaybenchError):
    """Raised with every diagnostic found; its location is the first one's, ``str()`` renders them all."""

    def __init__(self, diagnostics: list[Diagnostic]):
        self.diagnostics = list(diagnostics)
        first = self.diagnostics[0] if self.diagnostics else Diagnostic("<program>", None, None, "no diagnostic")
        super().__init__(first.message, file=first.file, line=first.line, column=first.column,
                         source_line=first.source_line)

    def render(self) -> str:
        return "\n".join(d.render() for d in self.diagnostics)


def file_error(path: str, message: str) -> AsmError:
    """An error about a whole file, with no line to point at."""
    return AsmError([Diagnostic(str(path), None, None, message)])
