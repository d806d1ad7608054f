"""``relaybench check PROGRAM``: may a halt, an operator or an irregular clock change the result?

The work is in ``emu.checks``; this module reads the command line. Exit 0
when every part passed, 1 when one did not or the program cannot be loaded,
2 for a bad command line, 130 when interrupted.
"""

from __future__ import annotations

import argparse
import sys

from ..checks import DEFAULT_EXAMPLES, check_program_command
from ._options import (add_machine_option, check_range, cycle_count, keep_parser, machine_for_program, memory_range,
                       number, seed)
from ._progress import Progress, terminal_attached

SUMMARY = "check that halts, stepping and an irregular clock leave a program's result alone"


def add_arguments(parser) -> None:
    parser.add_argument("program", metavar="PROGRAM", help="assembly source (an image skips halt placement)")
    add_machine_option(parser, per_program=True)
    parser.add_argument("--examples", metavar="N", type=_positive, default=DEFAULT_EXAMPLES,
                        help=f"operator scripts and irregular clocks to try (default {DEFAULT_EXAMPLES})")
    parser.add_argument("--seed", metavar="N", type=seed, default=0,
                        help="seed of the scripts, clocks and sample (default 0): the same seed, the same check")
    parser.add_argument("--sample", metavar="N", type=_positive, default=None,
                        help="plant halts in front of N statements drawn at random (default: every statement)")
    parser.add_argument("--dump", metavar="START:LEN", type=memory_range, action="append", default=[],
                        help="memory compared besides what the checks name (repeatable)")
    parser.add_argument("--max-cycles", metavar="N", type=cycle_count, default=None,
                        help="cycle limit of each run (default: the panel file's, else 50,000,000)")
    parser.add_argument("--json", action="store_true", help="print one JSON object instead of the table")
    keep_parser(parser)


def _positive(text: str) -> int:
    value = number(text)
    if value < 1:
        raise argparse.ArgumentTypeError(f"must be 1 or more, not {value}")
    return value


def main(args) -> int:
    machine = machine_for_program(args, args.program)
    for dump in args.dump:
        check_range(args, "--dump", dump, machine)
    with Progress(enabled=terminal_attached() and not args.json) as progress:
        return check_program_command(args, machine, sys.stdout, progress)
