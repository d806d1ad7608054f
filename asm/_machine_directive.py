"""``.machine "NAME-OR-PATH"``: the machine a program names, read before anything else.

The machine decides how every other line assembles, so it must be known
before the program is assembled: this looks only at the program's first
statement and needs no machine. What the name means (a shipped machine, or
a machine file relative to the program) is for the caller to settle; the
assembler itself only checks that the directive stands first.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

from ._syntax import Directive, Text, parse_source

__all__ = ["MACHINE_DIRECTIVE", "MachineDirective", "machine_directive"]

MACHINE_DIRECTIVE = ".machine"


@dataclass(frozen=True)
class MachineDirective:
    """The name or path a program's ``.machine`` gives, and where the name stands."""
    name: str
    file: str
    line: int
    column: int
    source_line: str


def machine_directive(path) -> MachineDirective | None:
    """The first statement of the source file ``path`` when it is ``.machine "…"``, else None.

    An unreadable file or one whose first statement is something else gives
    None: assembling it reports whatever is wrong, in its place.
    """
    path = os.fspath(path)
    try:
        text = open(path, "rb").read().decode("utf-8")
    except (OSError, UnicodeDecodeError):
        return None
    rows = text.replace("\r\n", "\n").split("\n")
    at = next((n for n, row in enumerate(rows) if row.split(";")[0].strip()), None)
    if at is None:
        return None
    # Only the first line with a statement is parsed (kept at its own line
    # number): the assembler reads the whole file later, once.
    lines, _problems = parse_source("\n" * at + rows[at], path)
    first = next((line for line in lines if line.label is not None or line.body is not None), None)
    if first is None or first.label is not None or not isinstance(first.body, Directive):
        return None
    body = first.body
    if body.name != MACHINE_DIRECTIVE or len(body.arguments) != 1 or not isinstance(body.arguments[0], Text):
        return None
    name = body.arguments[0]
    if name.problem is not None or not name.value.strip():
        return None
    source_line = rows[name.line - 1]
    return MachineDirective(name.value, path, name.line, name.column, source_line)
