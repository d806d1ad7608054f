"""The ``relaybench`` command: one sub-command per module in ``emu.commands``.

``COMMANDS`` is the table: each command's name and its one-line summary.
The overview (``relaybench --help``) is built from the table alone; only the
module of the command that runs is imported, so a short run does not pay for
numpy, the terminal panel or the waveform writer. Each command module has
``add_arguments(parser)`` and ``main(args) -> int``; this file builds the
argument parser and maps failures to exit statuses: 1 for a bad program or
machine file (any ``RelaybenchError``, printed located), 2 for a bad command
line (argparse).

Adding a command: write ``emu/commands/NAME.py`` with those two functions and
add one row to ``COMMANDS``.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from . import __version__
from .errors import RelaybenchError

COMMANDS = {
    "run": "run a program headless and report the machine at its halt",
    "test": "run programs and check their .expect lines; exit 0 when all pass",
    "sweep": "run a program over many inputs and check every result",
    "asm": "assemble a program into Intel HEX or a raw binary, a listing and a debug file",
    "dis": "disassemble an Intel HEX or raw binary image, with labels from its debug file",
    "isa": "print the instruction table (encoding, micro-steps, cycles, flags) of a machine",
    "debug": "debug a program at the machine's panel in the terminal",
    "clock": "clock timing: nominal rate, and the spread that tolerances of the parts give",
    "check": "check a machine's halt, stop, step and resume, or that halts and stepping leave a program's result "
             "alone",
}
"""Command name → its one-line summary; the module is ``emu.commands.NAME``."""


def command_module(name: str):
    """The module of one command, imported now.

    A module that cannot be imported stops the program with an ImportError
    naming it: a broken install must not look like a smaller tool.
    """
    return importlib.import_module(f"emu.commands.{name}")


def _chosen(argv: list[str]) -> str | None:
    """The command named on the command line: the first word that is not an option
    (the top level has no option that takes a value)."""
    for word in argv:
        if not word.startswith("-"):
            return word if word in COMMANDS else None
    return None


def build_parser(argv: list[str]) -> argparse.ArgumentParser:
    """The argument parser for ``argv``: every command is listed, only the one it names gets its options."""
    chosen = _chosen(argv)
    parser = argparse.ArgumentParser(
        prog="relaybench",
        description="Assemble, run, test and debug programs for relay computers.",
    )
    parser.add_argument("--version", action="version", version=f"relaybench {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name, summary in COMMANDS.items():
        command = sub.add_parser(name, help=summary, description=summary)
        if name == chosen:
            module = command_module(name)
            module.add_arguments(command)
            command.set_defaults(handler=module.main)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    args = build_parser(argv).parse_args(argv)
    try:
        return args.handler(args)
    except RelaybenchError as exc:
        print(exc.render() if exc.file else f"relaybench: {exc.render()}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("relaybench: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    sys.exit(main())
