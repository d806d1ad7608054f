"""The command table: one entry per debugger command, filled by ``@command``.

Each command is one function ``do_NAME(session, args)`` in the module of its
group, with its usage, summary and help text beside it. The table is the one
source that ``Session.execute`` dispatches from, ``help`` lists and tab
completion reads; ``help`` lists the groups in the order of the session's
``COMMAND_GROUPS``.
"""

from __future__ import annotations

import difflib
import inspect
import re
from dataclasses import dataclass
from typing import Callable

from emu.errors import RelaybenchError

__all__ = ["COMMANDS", "Command", "DebugError", "command", "find_command", "words_of"]


class DebugError(RelaybenchError):
    """A command that cannot be carried out; the message says why, in one line."""


@dataclass(frozen=True)
class Command:
    name: str
    usage: str
    summary: str
    details: str
    function: Callable
    repeats: bool
    """An empty line repeats this command (the step-like ones)."""
    complete: tuple[str, ...]
    """What each argument position completes to (see ``Session.complete``)."""


COMMANDS: dict[str, Command] = {}


def command(usage: str, summary: str, *, repeats: bool = False, complete: tuple[str, ...] = ()):
    """Enter ``do_NAME`` in the table; its docstring is the longer help text."""
    def register(function):
        name = function.__name__.removeprefix("do_")
        COMMANDS[name] = Command(name, usage, summary, inspect.getdoc(function) or "",
                                 function, repeats, complete)
        return function
    return register


_TOKEN = re.compile(r"'(?:\\.|[^'\\])+'|\S+")


def words_of(line: str) -> list[str]:
    """A command line's words; a quoted character such as ``' '`` stays one word."""
    return _TOKEN.findall(line)


def find_command(word: str) -> Command:
    """The command named by ``word`` or by an unambiguous start of its name."""
    word = word.lower()
    if word in COMMANDS:
        return COMMANDS[word]
    starting = [name for name in COMMANDS if name.startswith(word)]
    if len(starting) == 1:
        return COMMANDS[starting[0]]
    if starting:
        raise DebugError(f"'{word}' could be {', '.join(sorted(starting))}")
    close = difflib.get_close_matches(word, list(COMMANDS), n=3, cutoff=0.6)
    hint = f" (did you mean {' or '.join(repr(c) for c in close)}?)" if close else ""
    raise DebugError(f"unknown command '{word}'{hint}; 'help' lists the commands")
