"""Typed getters for hand-written tables (TOML and JSON), with one message style.

Every file relaybench reads (machine files with their ``[timing]`` and
``[wear]`` sections, panel files, debug files, snapshots) is a tree of
tables a person may have edited. Each reader wraps its table in a
``Table`` and asks for what it expects; a wrong value is refused as
``'key' must be …, not …`` and a missing one as ``missing key 'key' (…)``,
through the reader's own ``fail`` so the error names its file and place.
"""

from __future__ import annotations

import math
import sys
from typing import Callable, NoReturn

__all__ = ["REQUIRED", "Table", "is_integer", "is_number", "kind_of"]


class _Required:
    def __repr__(self) -> str:
        return "REQUIRED"


REQUIRED = _Required()
_LARGEST_FLOAT = sys.float_info.max
"""A number beyond it (a TOML integer may be any size) cannot be computed with as a float."""
"""The default of a getter whose key must be present."""
_NONE = object()

Fail = Callable[[str, tuple, str], NoReturn]
"""``fail(where, key_path, message)`` raises the reader's error."""


def is_integer(value) -> bool:
    """An integer that is not a bool (TOML and JSON booleans are ints to Python)."""
    return isinstance(value, int) and not isinstance(value, bool)


def is_number(value) -> bool:
    """An integer or a float, not a bool."""
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def kind_of(value) -> str:
    """The value's type as a person reading the file would call it."""
    return {bool: "a boolean", int: "an integer", float: "a number", str: "a string",
            list: "a list", dict: "a table", type(None): "null"}.get(type(value), type(value).__name__)


def _span(low, high) -> str:
    if low is not None and high is not None:
        return f"{low}…{high}"
    return f"at least {low}" if low is not None else f"at most {high}"


def _bound(value) -> str:
    return "zero" if value == 0 else f"{value:g}"


class Table:
    """One table of a file being read: ``where`` names it in messages, ``key`` is its key path."""

    def __init__(self, data: dict, where: str, fail: Fail, key: tuple = ()):
        self.data = data
        self.where = where
        self.key = tuple(key)
        self._fail = fail

    def fail(self, message: str, key=None) -> NoReturn:
        """Raise the reader's error about this table, or about one of its keys."""
        self._fail(self.where, self.key if key is None else self.key + (key,), message)

    def fail_at(self, where: str, key: tuple, message: str) -> NoReturn:
        """Raise the reader's error about another place of the same file (``key`` from the top)."""
        self._fail(where, key, message)

    def __contains__(self, key) -> bool:
        return key in self.data

    def items(self):
        return self.data.items()

    def get(self, key, default=None):
        return self.data.get(key, default)

    def _value(self, key, default, what: str):
        """(value, given); a JSON null stands for an absent optional key."""
        if key in self.data and not (self.data[key] is None and default is not REQUIRED):
            return self.data[key], True
        if default is REQUIRED:
            self.fail(f"missing key '{key}' ({what})", key)
        return default, False

    def known_keys(self, allowed) -> None:
        for key in self.data:
            if key not in allowed:
                self.fail(f"unknown key '{key}' (expected one of: {', '.join(allowed)})", key)

    def integer(self, key, *, low=None, high=None, default=REQUIRED, expected: str | None = None,
                what: str = "an integer"):
        value, given = self._value(key, default, what)
        if not given:
            return value
        in_range = is_integer(value) and (low is None or value >= low) and (high is None or value <= high)
        if in_range:
            return value
        if expected is not None:
            self.fail(f"'{key}' must be {expected}, not {value!r}", key)
        if not is_integer(value):
            self.fail(f"'{key}' must be an integer, not {kind_of(value)}", key)
        self.fail(f"'{key}' must be {_span(low, high)}, not {value}", key)

    def number(self, key, *, low=None, above=None, high=None, default=REQUIRED,
               expected: str | None = None, what: str = "a number"):
        """A finite int or float: at least ``low``, more than ``above``, at most ``high``."""
        value, given = self._value(key, default, what)
        if not given:
            return value
        problem = None
        if not is_number(value):
            problem = f"a number, not {kind_of(value)}"
        elif is_integer(value) and abs(value) > _LARGEST_FLOAT:
            problem = f"a number a float can hold, not an integer of {len(str(abs(value)))} digits"
        elif not math.isfinite(value):
            problem = f"a finite number, not {value}"
        elif above is not None and not value > above:
            problem = f"above {_bound(above)}, not {value}"
        elif low is not None and value < low:
            problem = f"{_bound(low)} or more, not {value}"
        elif high is not None and value > high:
            problem = f"at most {_bound(high)}, not {value}"
        if problem is None:
            return value
        if expected is not None:
            self.fail(f"'{key}' must be {expected}, not {value!r}", key)
        self.fail(f"'{key}' must be {problem}", key)

    def string(self, key, *, default=REQUIRED, expected: str = "a string"):
        value, given = self._value(key, default, expected)
        if given and not isinstance(value, str):
            shown = kind_of(value) if expected == "a string" else repr(value)
            self.fail(f"'{key}' must be {expected}, not {shown}", key)
        return value

    def boolean(self, key, *, default=REQUIRED):
        value, given = self._value(key, default, "true or false")
        if given and not isinstance(value, bool):
            self.fail(f"'{key}' must be true or false, not {value!r}", key)
        return value

    def choice(self, key, choices, *, default=REQUIRED, what: str | None = None):
        value, given = self._value(key, default, what or " or ".join(choices))
        if given and value not in choices:
            self.fail(f"'{key}' must be one of {', '.join(choices)}, not {value!r}", key)
        return value

    def list_of(self, key, accept: Callable[[object], bool], *, expected: str, default=REQUIRED,
                nonempty: bool = False) -> list | None:
        """A list whose every item ``accept`` takes; ``expected`` says what such a list is."""
        value, given = self._value(key, default, expected)
        if not given:
            return value
        if not isinstance(value, list):
            self.fail(f"'{key}' must be {expected}, not {kind_of(value)}", key)
        if nonempty and not value:
            self.fail(f"'{key}' must be {expected}, not an empty list", key)
        bad = next((item for item in value if not accept(item)), _NONE)
        if bad is not _NONE:
            self.fail(f"'{key}' must be {expected}, not a list holding {bad!r}", key)
        return value

    def table(self, key, where: str | None = None, *, required: bool = True) -> "Table":
        """The sub-table at ``key`` (an empty one when it is optional and absent)."""
        value, given = self._value(key, REQUIRED if required else {}, "a table")
        if given and not isinstance(value, dict):
            self.fail(f"'{key}' must be a table, not {kind_of(value)}", key)
        return Table(value, where or self.where, self._fail, self.key + (key,))

    def tables(self, key, where: Callable[[int], str], *, expected: str) -> list["Table"]:
        """An array of tables, each named by ``where(number)`` (numbers count from 1)."""
        value = self.data.get(key)
        if not isinstance(value, list) or not all(isinstance(item, dict) for item in value):
            self.fail(expected, key)
        return [Table(item, where(i), self._fail, self.key + (key, i - 1)) for i, item in enumerate(value, 1)]
