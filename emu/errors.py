"""The one error family of relaybench.

Every problem a user can cause (a machine file, a program, a panel or debug
file, a snapshot, a debugger command) is a ``RelaybenchError``: a message and
where it comes from. One rendering serves them all, the compiler habit that
editors understand: ``FILE:LINE:COL: error: message`` with the source line and
a caret under the column, ``FILE:LINE: error:`` when only the line is known,
``FILE: error:`` when only the file is.
"""

from __future__ import annotations

__all__ = ["MachineError", "RelaybenchError", "render_location"]


def render_location(message: str, file: str | None = None, line: int | None = None,
                    column: int | None = None, source_line: str | None = None) -> str:
    """``FILE:LINE:COL: error: message`` and, with a column, the line and a caret."""
    place = ":".join(str(part) for part in (file, line, column if line is not None else None)
                     if part is not None)
    head = f"{place}: error: {message}" if place else f"error: {message}"
    if line is None or column is None or source_line is None:
        return head
    text = source_line.rstrip("\r\n")
    lead = "".join(ch if ch == "\t" else " " for ch in text[: max(column - 1, 0)])
    return f"{head}\n    {text}\n    {lead}^"


class RelaybenchError(Exception):
    """A user-facing error with its location.

    ``file``, ``line`` and ``column`` say where (lines and columns count from
    1; either may be None); ``key`` is the key path inside a TOML or JSON
    file, e.g. ``("clock", "phase", 1, "ms")`` for the second phase's ``ms``.
    """

    def __init__(self, message: str, *, file: str | None = None, line: int | None = None,
                 column: int | None = None, key: tuple = (), source_line: str | None = None):
        self.message = message
        self.file = file
        self.line = line
        self.column = column
        self.key = tuple(key)
        self.source_line = source_line
        super().__init__(message)

    def text(self) -> str:
        """The message without the location: what went wrong and what was expected."""
        return self.message

    def render(self) -> str:
        return render_location(self.text(), self.file, self.line, self.column, self.source_line)

    def __str__(self) -> str:
        return self.render()


class MachineError(RelaybenchError):
    """A machine description that cannot be loaded, or a misuse of the engine.

    ``where`` names the place in the description as a reader says it (a
    section such as ``[machine]`` or ``instruction 'add rd, rs' step 2``) and
    leads the message; ``path`` is the file, ``line`` the TOML line of the
    offending key when the loader could find it.
    """

    def __init__(self, message: str, *, path: str | None = None, where: str | None = None,
                 line: int | None = None, key: tuple = (), column: int | None = None,
                 source_line: str | None = None):
        self.where = where
        super().__init__(message, file=path, line=line, column=column, key=key, source_line=source_line)

    @property
    def path(self) -> str | None:
        return self.file

    def text(self) -> str:
        return f"{self.where}: {self.message}" if self.where else self.message
