"""Option types and error reporting shared by the sub-commands.

A bad value on the command line is a usage error (exit 2, argparse's usage
line and one message), never a traceback. Values that can only be checked
once the machine is known (a switch value wider than its data word, a dump
past the end of memory) are reported the same way through ``usage_error``.
"""

from __future__ import annotations

import argparse
import sys

from .._description import Machine, load_machine
from .._numbers import NUMBER_FORMS, parse_number
from .._runner import ProgramError

__all__ = [
    "add_machine_option", "keep_parser", "usage_error", "number", "seed", "cycle_count",
    "memory_range", "check_word", "check_range", "machine_from", "print_program_error",
]


def add_machine_option(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--machine", metavar="FILE", default="ref8",
                        help="machine description: a shipped name or a .toml file (default: ref8)")


def keep_parser(parser: argparse.ArgumentParser) -> None:
    """Remember the sub-command's parser so that late checks can print its usage."""
    parser.set_defaults(parser_=parser)


def usage_error(args: argparse.Namespace, message: str):
    """Exit with status 2 and the sub-command's usage line, as argparse does."""
    args.parser_.error(message)


def number(text: str) -> int:
    try:
        return parse_number(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def seed(text: str) -> int:
    """A seed for random parts: any number of 0 or more, in assembler notation."""
    value = number(text)
    if value < 0:
        raise argparse.ArgumentTypeError(f"must be a seed of 0 or more, not {value}")
    return value


def cycle_count(text: str) -> int:
    value = number(text)
    if value < 1:
        raise argparse.ArgumentTypeError(f"must be a positive number of cycles, not {value}")
    return value


def memory_range(text: str) -> tuple[str, int, int]:
    """``START:LEN`` → (the text as given, start, length)."""
    start_text, colon, length_text = text.partition(":")
    if not colon:
        raise argparse.ArgumentTypeError(f"'{text}' is not START:LEN (for example 0x100:16)")
    start, length = number(start_text), number(length_text)
    if start < 0:
        raise argparse.ArgumentTypeError(f"the start of '{text}' must not be negative")
    if length < 1:
        raise argparse.ArgumentTypeError(f"the length of '{text}' must be at least 1")
    return text, start, length


def check_word(args, option: str, value: int, machine: Machine) -> None:
    if not 0 <= value <= machine.data_mask:
        usage_error(args, f"argument {option}: {value:#x} does not fit the {machine.data_bits}-bit "
                          f"word of {machine.name} (0…{machine.data_mask}, written as {NUMBER_FORMS})")


def check_range(args, option: str, dump: tuple[str, int, int], machine: Machine) -> None:
    text, start, length = dump
    if start + length > machine.memory_words:
        usage_error(args, f"argument {option}: '{text}' reaches past the end of memory "
                          f"({machine.memory_words} words on {machine.name})")


def machine_from(args) -> Machine:
    """The machine named by ``--machine``; a bad file raises MachineError (exit 1)."""
    return load_machine(args.machine)


def print_program_error(exc: ProgramError) -> int:
    print(str(exc), file=sys.stderr)
    return 1
