"""The text of ``json.dumps(value, indent=1)``, written a column at a time.

Given an indent, the json module encodes in Python, a few calls for every
value: 0.2 s for the debug file of a 100,000-line program, most of it the
56,000 entries of ``lines``. The bulk of such a file is flat: ``labels`` and
``constants`` map names to numbers, ``lines`` is a list of objects with one
set of keys and plain values. Such a container is written here column by
column: a column of integers through ``int.__repr__`` (as json writes them),
any other column of plain values by encoding each distinct value once, and
every row filled into one template. Everything else (a bool or a float, a
nested container, a key that is not a string) is left to ``json.dumps``, so
the text is the same, character for character, whatever the value.
"""

from __future__ import annotations

import json
from operator import itemgetter

__all__ = ["indented_json"]

_PLAIN = {int, str, type(None)}
"""Types whose values compare equal only within the type, so one encoding per distinct value is safe."""


def indented_json(value) -> str:
    """``json.dumps(value, indent=1)``."""
    return _text(value, 0)


def _text(value, depth: int) -> str:
    if isinstance(value, dict) and value and set(map(type, value)) == {str}:
        names = _encoded(list(value))
        if set(map(type, value.values())) <= _PLAIN:
            items = map("{}: {}".format, names, _encoded(list(value.values())))
        else:
            items = (f"{name}: {_text(item, depth + 1)}" for name, item in zip(names, value.values()))
        return _container("{", items, "}", depth)
    if isinstance(value, list) and value:
        if set(map(type, value)) <= _PLAIN:
            return _container("[", _encoded(value), "]", depth)
        rows = _rows_of_one_shape(value, depth + 1)
        return _container("[", rows if rows is not None else (_text(item, depth + 1) for item in value), "]", depth)
    return json.dumps(value, indent=1).replace("\n", "\n" + " " * depth)


def _container(opening: str, items, closing: str, depth: int) -> str:
    inner = "\n" + " " * (depth + 1)
    return opening + inner + ("," + inner).join(items) + "\n" + " " * depth + closing


def _encoded(column: list) -> list[str]:
    """Each value of a column of plain values as json writes it."""
    if set(map(type, column)) == {int}:
        return list(map(int.__repr__, column))
    codes = {value: json.dumps(value) for value in set(column)}
    return list(map(codes.__getitem__, column))


def _rows_of_one_shape(rows: list, depth: int):
    """Objects that share their keys, in one order, and hold plain values, each filled into one template;
    None for any other list."""
    if set(map(type, rows)) != {dict} or len(set(map(tuple, rows))) != 1:
        return None
    keys = list(rows[0])
    if not keys or not all(type(key) is str for key in keys):
        return None
    columns = [list(map(itemgetter(key), rows)) for key in keys]
    if not all(set(map(type, column)) <= _PLAIN for column in columns):
        return None
    inner = "\n" + " " * (depth + 1)
    template = ("{" + inner + ("," + inner).join(json.dumps(key).replace("%", "%%") + ": %s" for key in keys)
                + "\n" + " " * depth + "}")
    return map(template.__mod__, zip(*map(_encoded, columns)))
