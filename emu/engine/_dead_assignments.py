"""Dead assignments out of generated block code.

The block translator writes every flag an instruction sets and a temporary
for every operand; most die at once, overwritten by the next instruction.
This pass walks a function body backwards and drops assignments to locals
that nothing reads afterwards. The translator's lines are simple (one
statement a line, ``if``/``else`` nesting by indentation, no calls but the
port and invalidation hooks), so they are read as text, which is much
quicker than parsing them.
"""

from __future__ import annotations

import re

__all__ = ["without_dead_assignments"]

_ASSIGNMENT = re.compile(r"\s*([A-Za-z_]\w*) (=|&=) (.*)")
_IDENTIFIER = re.compile(r"\b[A-Za-z_]\w*")


def without_dead_assignments(lines: list[str], indent: str, looping: bool = False) -> list[str]:
    """Drop assignments to locals that nothing reads afterwards.

    Walking backwards with the set of names read later: an assignment to a
    name outside that set, whose value calls nothing, changes nothing. A
    statement is a line at ``indent`` with the deeper lines after it; an
    ``if`` (and its ``else``) is walked branch by branch, ``return`` reads
    only what it returns, and the translator's lines are simple enough to
    read as text. With ``looping`` the lines are a loop's body: ``continue``
    reads what the top of the body reads, found by walking until that set
    no longer grows.
    """
    statements = _statements(_constants_substituted(lines), indent)
    at_top: set[str] = set()
    while True:
        kept, live = _live_statements(statements, indent, at_top if looping else set(), set())
        if not looping or live <= at_top:
            return kept
        at_top |= live


def _statements(lines: list[str], indent: str) -> list[list[str]]:
    statements: list[list[str]] = []
    for line in lines:
        if line.startswith(indent) and not line[len(indent)].isspace() and line != indent + "else:" \
                or not statements:
            statements.append([line])
        else:
            statements[-1].append(line)
    return statements


def _live_statements(statements, indent: str, at_top: set[str], live_out: set[str]):
    """(the lines kept, the names read before the first statement)."""
    live = set(live_out)
    kept: list[list[str]] = []
    for statement in reversed(statements):
        head = statement[0].strip()
        if head.startswith("#"):
            kept.append(statement)
            continue
        if head.startswith("if ") and len(statement) > 1:
            kept.append(_live_branches(statement, indent, at_top, live))
            live = kept[-1].live
            continue
        text = "\n".join(statement)
        match = _ASSIGNMENT.fullmatch(text) if len(statement) == 1 else None
        pure = "(" not in text or "_(" not in text and "invalidate(" not in text
        reads = set(_IDENTIFIER.findall(text))
        if match:
            target, operator, value = match.groups()
            if pure and target not in live:
                continue
            reads = set(_IDENTIFIER.findall(value))
            if operator == "=":
                live.discard(target)
            else:
                reads.add(target)
        elif head.startswith("return"):
            live = set()
        elif head == "continue":
            live, reads = set(), set(at_top)
        live |= reads
        kept.append(statement)
    kept.reverse()
    return [line for statement in kept for line in statement], live


class _Lines(list):
    """Lines of one statement, with the names it needs to have been set before it."""
    live: set


def _live_branches(statement, indent: str, at_top: set[str], live_out: set[str]) -> _Lines:
    inner = indent + "    "
    branches, current = [], []
    for line in statement[1:]:
        if line == indent + "else:":
            branches.append(current)
            current = []
        else:
            current.append(line)
    branches.append(current)
    result = _Lines([statement[0]])
    live = set(_IDENTIFIER.findall(statement[0])) | (live_out if len(branches) == 1 else set())
    for number, branch in enumerate(branches):
        kept, branch_live = _live_statements(_statements(branch, inner), inner, at_top, live_out)
        if number:
            result.append(indent + "else:")
        result.extend(kept)
        if all(line.strip().startswith("#") for line in kept):
            result.append(inner + "pass")
        live |= branch_live
    result.live = live
    return result


_TEMPORARY_CONSTANT = re.compile(r"\s*([a-z]_\d+) = (\d+)")


def _constants_substituted(lines: list[str]) -> list[str]:
    """Fresh temporaries that only ever hold a literal (``b_3 = 237``) replaced by it."""
    constants = {}
    for line in lines:
        match = _TEMPORARY_CONSTANT.fullmatch(line)
        if match:
            constants[match.group(1)] = match.group(2)
    for line in lines:
        for name in _IDENTIFIER.findall(line):
            if name in constants and not _TEMPORARY_CONSTANT.fullmatch(line) and f"{name} " in line \
                    and re.search(rf"\b{name} (&|\|)?=", line):
                constants.pop(name)     # written again somewhere: not a constant
    if not constants:
        return lines
    pattern = re.compile(r"\b(" + "|".join(constants) + r")\b")
    return [pattern.sub(lambda m: constants[m.group(1)], line) for line in lines
            if not (_TEMPORARY_CONSTANT.fullmatch(line) and _TEMPORARY_CONSTANT.fullmatch(line).group(1) in constants)]
