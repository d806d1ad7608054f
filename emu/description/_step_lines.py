"""A step as the builder may write it: a micro-step string, or a table naming its control lines.

``{ do = "a <- add(a, b) sets z c", lines = ["sel-b", "ld-a", "alu-add",
"ld-pc if z"] }`` says what the step does and which wires of the builder's
control unit it drives; a gated line (``if COND``) is driven only in a
cycle where its condition, read from the state before the step, holds.
Without ``lines`` the step drives the lines its statements imply (``load
a``, ``alu add``, ``read``). Kept apart from the loader because it is one
small format with its own refusals.
"""

from __future__ import annotations

import re

from ..errors import MachineError
from ._design_rules import StepChecker
from ._steps import GatedLine
from ._sections import LINE_NAME
from .notation import Input, parse_line_gate, walk

__all__ = ["STEP_EXPECTED", "STEP_KEYS", "is_step_entry", "read_named_lines", "step_entry"]

STEP_KEYS = ("do", "lines")
_ENTRY = re.compile(r"\s*(\S+)(?:\s+if\s+(.*?))?\s*")
STEP_EXPECTED = 'micro-step strings, or tables { do = "…", lines = ["…"] }'


def is_step_entry(value) -> bool:
    return isinstance(value, (str, dict))


def step_entry(raw, fail) -> tuple[str, list[str] | None]:
    """(the micro-step text, the named lines or None) of one entry of a ``steps`` list.

    ``fail(message)`` raises the loader's error at the entry.
    """
    if isinstance(raw, str):
        return raw, None
    unknown = [key for key in raw if key not in STEP_KEYS]
    if unknown:
        fail(f"unknown key '{unknown[0]}' in a step table (expected one of: {', '.join(STEP_KEYS)})")
    if "do" not in raw:
        fail("a step table needs 'do', the micro-step (e.g. { do = \"a <- t\", lines = [\"ld-a\"] })")
    if not isinstance(raw["do"], str):
        fail(f"'do' must be a micro-step string, not {type(raw['do']).__name__}")
    lines = raw.get("lines")
    if lines is not None and (not isinstance(lines, list) or not all(isinstance(x, str) for x in lines)):
        fail(f"'lines' must be a list of control line names (\"ld-a\", or \"ld-pc if z\"), not {lines!r}")
    return raw["do"], lines


def read_named_lines(entries: list[str], checker: StepChecker, names, fields, available
                     ) -> tuple[tuple[str, ...], tuple[GatedLine, ...]]:
    """The step's lines as the builder named them: (always driven, gated), each checked.

    A gate's condition is checked like a choice's (1-bit operands, known
    names, fields already fetched), by a checker of its own so it does not
    count towards the step's design rule; it may not read an input port,
    since reading one takes a byte from the input stream.
    """
    if checker.idle:
        checker.fail("an idle step drives no control line: leave out 'lines' or give it statements")
    plain: list[str] = []
    gated: list[GatedLine] = []
    seen: set[str] = set()
    for entry in entries:
        match = _ENTRY.fullmatch(entry)
        name = match[1] if match else ""
        if not LINE_NAME.fullmatch(name) or (match[2] is not None and not match[2]):
            checker.fail(f"'lines' holds {entry!r}: a control line is a name of letters, digits, '-' and "
                         f"'_', optionally followed by 'if CONDITION' (\"ld-pc if z\")")
        if name in seen:
            checker.fail(f"'lines' names the line '{name}' twice")
        seen.add(name)
        if match[2] is None:
            plain.append(name)
            continue
        try:
            condition = parse_line_gate(match[2])
        except MachineError as exc:
            checker.fail(f"line '{name}': {exc.message}")
        gate = StepChecker(names, checker.where, fields, available,
                           lambda _at, message, name=name: checker.fail(f"line '{name}' if {match[2]}: {message}"))
        gate.condition(condition)
        if any(isinstance(node, Input) for node in walk(condition)):
            gate.fail("a line's condition may not read an input port (a read takes a byte from the input)")
        gated.append(GatedLine(name, condition, match[2]))
    return tuple(plain), tuple(gated)
