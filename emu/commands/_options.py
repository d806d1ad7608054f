"""Option types and error reporting shared by the sub-commands.

A bad value on the command line is a usage error (exit 2, argparse's usage
line and one message), never a traceback. Values that can only be checked
once the machine is known (a switch value wider than its data word, a dump
past the end of memory) are reported the same way through ``usage_error``.
"""

from __future__ import annotations

import argparse
import sys

from ..description import Machine, load_machine
from ..description.notation import NUMBER_FORMS, decode_escapes, parse_number
from ..formatting import hex_value
from ..runs import DEFAULT_MACHINE, MachineChooser, ProgramError
from ..runs import panel_path_for, read_panel_file

__all__ = [
    "add_machine_option", "add_panel_options", "input_stream", "panel_settings", "keep_parser", "usage_error", "number", "seed", "positive", "cycle_count",
    "memory_range", "check_word", "check_range", "machine_from", "machine_for_program", "print_program_error",
]


def add_machine_option(parser: argparse.ArgumentParser, *, per_program: bool = False,
                       default: str | None = DEFAULT_MACHINE) -> None:
    """``--machine FILE``; ``default`` is what the help names when it is left out (None: no default)."""
    if per_program:
        default = "the program's .machine directive, else its panel file's machine, else ref8"
    shown = f" (default: {default})" if default is not None else ""
    parser.add_argument("--machine", metavar="FILE", default=None,
                        help=f"machine description: a shipped name or a .toml file{shown}")


def add_panel_options(parser: argparse.ArgumentParser) -> None:
    """The panel toggles and the input stream, as run and debug take them."""
    parser.add_argument("--switches", metavar="V", type=number, default=None,
                        help="the panel toggles, e.g. 0b00101010 (default: the program's panel file, else 0)")
    source = parser.add_mutually_exclusive_group()
    source.add_argument("--input", metavar="FILE", help="bytes of the input stream, from a file")
    source.add_argument("--input-text", metavar="S",
                        help="the input stream as text (UTF-8; escapes \\n \\t \\r \\0 \\\\ \\' \\\" as in the assembler)")


def input_stream(args) -> bytes:
    """The bytes of --input FILE or --input-text S (a usage error if unreadable)."""
    if args.input is not None:
        try:
            with open(args.input, "rb") as stream:
                return stream.read()
        except OSError as exc:
            usage_error(args, f"argument --input: cannot read '{args.input}' ({exc.strerror})")
    if args.input_text is not None:
        text, problem = decode_escapes(args.input_text)
        if problem is not None:
            usage_error(args, f"argument --input-text: {problem}")
        return text.encode("utf-8")
    return b""


def panel_settings(args, program_path: str, machine: Machine) -> tuple[int, bytes]:
    """Toggles and input stream: the program's panel file if it has one, then the options.

    ``prog.asm`` → ``prog.panel.toml`` is what ``relaybench test`` runs the
    program with; an option given on the command line wins over it.
    """
    switches, data = 0, b""
    panel_path = panel_path_for(program_path)
    if panel_path.exists():
        panel = read_panel_file(panel_path, machine)
        switches, data = panel.switches, panel.input_bytes
    if args.switches is not None:
        check_word(args, "--switches", args.switches, machine)
        switches = args.switches
    if args.input is not None or args.input_text is not None:
        data = input_stream(args)
    return switches, data


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


def positive(unit: str):
    """An option type: a whole number of ``unit`` above 0, in the number notation."""
    def parse(text: str) -> int:
        value = number(text)
        if value < 1:
            raise argparse.ArgumentTypeError(f"must be a positive number of {unit}, not {value}")
        return value
    return parse


cycle_count = positive("cycles")


def cycle_start(text: str) -> int:
    """A cycle number counted from power-on: 0 or more."""
    value = number(text)
    if value < 0:
        raise argparse.ArgumentTypeError(f"must be a cycle number, 0 or more, not {value}")
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
        shown = hex_value(value, value.bit_length()) if value >= 0 else str(value)
        usage_error(args, f"argument {option}: {shown} does not fit the {machine.data_bits}-bit "
                          f"word of {machine.name} (0…{machine.data_mask}, written as {NUMBER_FORMS})")


def check_range(args, option: str, dump: tuple[str, int, int], machine: Machine) -> None:
    text, start, length = dump
    if start + length > machine.memory_words:
        usage_error(args, f"argument {option}: '{text}' reaches past the end of memory "
                          f"({machine.memory_words} words on {machine.name})")


def machine_from(args) -> Machine:
    """The machine named by ``--machine`` (default ref8); a bad file raises MachineError (exit 1)."""
    return load_machine(args.machine or DEFAULT_MACHINE)


def machine_for_program(args, program_path) -> Machine:
    """``--machine``, else the machine the program or its panel file names, else ref8.

    A name that is no machine raises ProgramError at its place; a machine
    file that does not load raises MachineError (both exit 1).
    """
    return MachineChooser(args.machine).machine_for(program_path)


def print_program_error(exc: ProgramError) -> int:
    print(str(exc), file=sys.stderr)
    return 1
