"""``relaybench debug``: the interactive debugger (see emu.debugger)."""

from __future__ import annotations

import sys

from emu import load_machine
from emu._runner import ProgramError

SUMMARY = "debug a program at the machine's panel in the terminal"


def add_arguments(parser) -> None:
    parser.add_argument("program", metavar="PROGRAM", help="assembly source, Intel HEX or raw binary")
    parser.add_argument("--machine", metavar="FILE", default="ref8",
                        help="machine description (default: ref8)")


def main(args) -> int:
    from emu.debugger import Session, load_view
    from emu.debugger._repl import run_repl

    machine = load_machine(args.machine)
    try:
        view = load_view(args.program, machine)
    except ProgramError as exc:
        print(exc, file=sys.stderr)
        return 1
    return run_repl(Session(machine, view))
