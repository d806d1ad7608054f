"""The one error type of the machine layer.

A builder's machine file is hand-written; every problem in it must come back
as one readable line naming the file, the place inside it and what was
expected, never as a Python traceback.
"""

from __future__ import annotations

__all__ = ["MachineError"]


class MachineError(Exception):
    """A machine description that cannot be loaded, or a misuse of the engine.

    ``where`` names the place in the description (a key such as
    ``instruction 'add rd, rs' step 2``); ``path`` the file.
    """

    def __init__(self, message: str, *, path: str | None = None, where: str | None = None):
        self.message = message
        self.path = path
        self.where = where
        super().__init__(str(self))

    def __str__(self) -> str:
        prefix = ""
        if self.path:
            prefix += f"{self.path}: "
        if self.where:
            prefix += f"{self.where}: "
        return f"{prefix}{self.message}"
