"""The ``relaybench`` command: one sub-command per module in ``emu.commands``.

Each command module has ``SUMMARY`` (one line for the overview),
``add_arguments(parser)`` and ``main(args) -> int``; this file only builds
the argument parser from that table and maps failures to exit statuses:
1 for a bad program or machine file (any ``RelaybenchError``, printed located), 2 for a bad command line (argparse).
"""

from __future__ import annotations

import argparse
import importlib
import importlib.metadata
import sys

from .errors import RelaybenchError

COMMANDS = ("run", "test", "asm", "dis", "isa", "debug", "clock", "check")


def _load_commands():
    """Every command of the table, imported; one that cannot be imported stops the program.

    A broken install must not look like a smaller tool: a command that went
    missing is an ImportError naming it, never a shorter ``--help``.
    """
    return {name: importlib.import_module(f"emu.commands.{name}") for name in COMMANDS}


def _version() -> str:
    try:
        return importlib.metadata.version("relaybench")
    except importlib.metadata.PackageNotFoundError:
        return "(not installed)"


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="relaybench",
        description="Assemble, run, test and debug programs for relay computers.",
    )
    parser.add_argument("--version", action="version", version=f"relaybench {_version()}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name, module in _load_commands().items():
        command = sub.add_parser(name, help=module.SUMMARY, description=module.SUMMARY)
        module.add_arguments(command)
        command.set_defaults(handler=module.main)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
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
