"""Where a key of a TOML document was written: the line of a key path.

``tomllib`` gives values but no positions, and a message about a machine
file is only useful when it names the line to edit. So the line is found in
the text: the table headers (``[clock]``, the n-th ``[[clock.phase]]``), then
the ``key =`` line inside that table (dotted keys such as ``out.1`` too),
then, for a position in an array (an instruction's micro-step), the line of
that element. A key that is not written (a missing key) falls back to its
table's header; a path that matches nothing gives None.
"""

from __future__ import annotations

import re

__all__ = ["key_line", "toml_syntax_error"]

_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\[\]]+?)\s*\]\]?\s*(?:#.*)?$")
_KEY = re.compile(r"""^\s*((?:[A-Za-z0-9_-]+|"[^"]*"|'[^']*')(?:\s*\.\s*(?:[A-Za-z0-9_-]+|"[^"]*"|'[^']*'))*)\s*=""")


def _parts(dotted: str) -> tuple[str, ...]:
    return tuple(p.strip().strip("\"'") for p in re.findall(r"""[A-Za-z0-9_-]+|"[^"]*"|'[^']*'""", dotted))


def _tables(lines: list[str]) -> list[tuple[tuple, int, int]]:
    """(key path, first line index, end index) of every table, the root first."""
    found: list[tuple[tuple, int]] = [((), -1)]
    counts: dict[tuple, int] = {}
    for number, text in enumerate(lines):
        match = _HEADER.match(text)
        if not match:
            continue
        path = _parts(match[2])
        if match[1] == "[[":
            counts[path] = counts.get(path, -1) + 1
            path = path + (counts[path],)  # the n-th [[clock.phase]] is ("clock", "phase", n)
        else:
            path = _indexed(path, counts)
        found.append((path, number))
    ends = [start for _path, start in found[1:]] + [len(lines)]
    return [(path, start, end) for (path, start), end in zip(found, ends)]


def _indexed(path: tuple, counts: dict) -> tuple:
    """``[wear.relays]`` stays as written; a sub-table of the latest array element gets its index."""
    for size in range(len(path) - 1, 0, -1):
        if path[:size] in counts:
            return path[:size] + (counts[path[:size]],) + path[size:]
    return path


def key_line(text: str, key: tuple) -> int | None:
    """The 1-based line where ``key`` (e.g. ``("instruction", 4, "steps", 1)``) is written."""
    lines = text.splitlines()
    best = None
    for path, start, end in _tables(lines):
        if key[:len(path)] == path and (best is None or len(path) > len(best[0])):
            best = (path, start, end)
    if best is None:
        return None
    path, start, end = best
    rest = tuple(str(k) for k in key[len(path):] if not isinstance(k, int))
    indices = [k for k in key[len(path):] if isinstance(k, int)]
    header = start + 1 if start >= 0 else None
    if not rest:
        return header
    chosen, length = None, 0
    for number in range(start + 1, end):
        match = _KEY.match(lines[number])
        if not match:
            continue
        parts = _parts(match[1])
        if parts == rest[:len(parts)] and len(parts) > length:
            chosen, length = number, len(parts)
    if chosen is None:
        return header
    if indices and key[-1] == indices[-1]:
        element = _element_line(lines, chosen, lines[chosen].index("=") + 1, indices[-1])
        if element is not None:
            return element + 1
    return chosen + 1


def _element_line(lines: list[str], number: int, column: int, index: int) -> int | None:
    """The line of element ``index`` of the array value that starts at (number, column)."""
    depth, count = 0, -1
    for row in range(number, len(lines)):
        text = lines[row]
        position = column if row == number else 0
        while position < len(text):
            ch = text[position]
            if ch == "#":
                break
            if ch in "\"'":
                close = _string_end(text, position)
                if depth == 1:
                    count += 1
                    if count == index:
                        return row
                position = close
            elif ch in "[{":
                depth += 1
                if depth == 2:
                    count += 1
                    if count == index:
                        return row
            elif ch in "]}":
                depth -= 1
                if depth == 0:
                    return None
            elif depth == 1 and not ch.isspace() and ch != "," and (position == 0 or text[position - 1] in "[, \t"):
                count += 1
                if count == index:
                    return row
            position += 1
    return None


def _string_end(text: str, start: int) -> int:
    quote = text[start]
    position = start + 1
    while position < len(text):
        if text[position] == "\\" and quote == '"':
            position += 2
            continue
        if text[position] == quote:
            return position
        position += 1
    return position


def toml_syntax_error(exc: Exception, text: str) -> tuple[str, int | None, int | None, str | None]:
    """A ``tomllib`` parse error as (message, line, column, source line).

    The parser puts its position at the end of its message, ``(at line L,
    column C)``; relaybench puts it in front, as every located error.
    """
    message = str(exc)
    found = re.search(r" \(at line (\d+), column (\d+)\)$", message)
    if not found:
        return message, None, None, None
    line, column = int(found[1]), int(found[2])
    lines = text.splitlines()
    source = lines[line - 1] if line <= len(lines) else None
    return message[:found.start()], line, column if source is not None else None, source
