"""``relaybench check``: may halts, stepping and the clock be trusted, on a machine or a program?

``relaybench check --machine FILE`` checks the machine as described (the
clock and control-unit properties P1–P7, the assembler round trip and a
design report); ``relaybench check PROGRAM`` checks that operator stops
and steps, a halt planted in front of any statement, or an irregular clock
leave the program's result alone. The work is in ``emu.checks``; this
module reads the command line. Exit 0 when everything passed, 1 when
something did not or the input cannot be loaded, 2 for a bad command line,
130 when interrupted.
"""

from __future__ import annotations

import argparse
import sys

from ..checks import DEFAULT_EXAMPLES, DEFAULT_MACHINE_EXAMPLES, check_machine_command, check_program_command
from ._options import (add_machine_option, check_range, cycle_count, keep_parser, machine_for_program, machine_from,
                       memory_range, number, seed, usage_error)
from ._progress import Progress, terminal_attached

MAX_EXAMPLES = 100_000


def add_arguments(parser) -> None:
    parser.add_argument("program", metavar="PROGRAM", nargs="?",
                        help="assembly source (an image skips halt placement); leave out to check --machine itself")
    add_machine_option(parser, per_program=True)
    parser.add_argument("--examples", metavar="N", type=_examples, default=None,
                        help=f"random examples: per property of a machine (default {DEFAULT_MACHINE_EXAMPLES}), "
                             f"operator scripts and irregular clocks for a program (default {DEFAULT_EXAMPLES})")
    parser.add_argument("--seed", metavar="N", type=seed, default=None,
                        help="seed of the random choices, to repeat a check exactly "
                             "(default: a new one, printed, for a machine; 0 for a program)")
    program_only = parser.add_argument_group("checking a program")
    program_only.add_argument("--sample", metavar="N", type=_examples, default=None,
                              help="plant halts in front of N statements drawn at random (default: every statement)")
    program_only.add_argument("--dump", metavar="START:LEN", type=memory_range, action="append", default=[],
                              help="memory compared besides what the checks name (repeatable)")
    program_only.add_argument("--max-cycles", metavar="N", type=cycle_count, default=None,
                              help="cycle limit of each run (default: the panel file's, else 50,000,000)")
    parser.add_argument("--json", action="store_true", help="print one JSON object instead of the table")
    keep_parser(parser)


def _examples(text: str) -> int:
    value = number(text)
    if not 1 <= value <= MAX_EXAMPLES:
        raise argparse.ArgumentTypeError(f"must be 1…{MAX_EXAMPLES:,}, not {value}")
    return value


def main(args) -> int:
    with Progress(enabled=terminal_attached() and not args.json) as progress:
        if args.program is None:
            if args.machine is None:
                usage_error(args, "what to check? give a PROGRAM, or --machine FILE to check a machine description")
            given = [option for option, value in (("--sample", args.sample), ("--dump", args.dump),
                                                  ("--max-cycles", args.max_cycles)) if value]
            if given:
                usage_error(args, f"{given[0]} goes with a PROGRAM; checking a machine draws its own programs")
            return check_machine_command(args, machine_from(args), sys.stdout, progress)
        machine = machine_for_program(args, args.program)
        for dump in args.dump:
            check_range(args, "--dump", dump, machine)
        if args.seed is None:
            args.seed = 0
        if args.examples is None:
            args.examples = DEFAULT_EXAMPLES
        return check_program_command(args, machine, sys.stdout, progress)
