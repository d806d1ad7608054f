"""``relaybench debug``: the interactive debugger (see emu.debugger)."""

from __future__ import annotations

import sys

from emu.runs import ProgramError, panel_path_for

from ._options import (add_machine_option, add_panel_options, keep_parser, machine_for_program, panel_settings,
                       print_program_error)


def add_arguments(parser) -> None:
    parser.add_argument("program", metavar="PROGRAM", help="assembly source, Intel HEX or raw binary")
    add_machine_option(parser, per_program=True)
    add_panel_options(parser)
    keep_parser(parser)


def main(args) -> int:
    from emu.debugger import Session, load_view, run_repl, run_script

    try:
        machine = machine_for_program(args, args.program)
        view = load_view(args.program, machine)
        switches, data = panel_settings(args, args.program, machine)
    except ProgramError as exc:
        return print_program_error(exc)
    session = Session(machine, view)
    session.emu.switches = switches
    session.emu.input_bytes = data
    if panel_path_for(args.program).exists():
        print(f"toggles and input stream from {panel_path_for(args.program)} (options override it)")
    if not interactive():
        return run_script(session, sys.stdin)
    return run_repl(session)


def interactive() -> bool:
    """A person at a terminal gets the prompt; a pipe or a file of commands gets a transcript."""
    return sys.stdin.isatty()
