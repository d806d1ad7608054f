"""``relaybench dis``: an image back to assembly text, decoded with the machine file.

Labels, pauses and data regions come from a debug file: the one beside the
image (``prog.hex`` → ``prog.dbg.json``) unless another is named or
``--no-debug`` is given. The text assembles again to the same words.
Exit 0, or 1 for a bad image, debug file or machine file.
"""

from __future__ import annotations

import sys
from pathlib import Path

import asm

from ..files import write_atomic
from ..runs import ProgramError
from ._options import add_machine_option, keep_parser, machine_for_program



def add_arguments(parser) -> None:
    parser.add_argument("image", metavar="IMAGE", help="Intel HEX or raw binary image")
    add_machine_option(parser, per_program=True)
    names = parser.add_mutually_exclusive_group()
    names.add_argument("--debug", metavar="FILE", help="debug file to take labels from (default: beside IMAGE)")
    names.add_argument("--no-debug", action="store_true", help="ignore any debug file")
    parser.add_argument("-o", "--out", metavar="FILE", help="write the text to FILE instead of printing it")
    keep_parser(parser)


def disassembly(args, machine) -> str:
    image = Path(args.image)
    kind = asm.sniff(image)
    if kind == "source":
        raise asm.AsmError([asm.Diagnostic(str(image), None, None,
                                           "this is assembly source; dis reads images (.hex or .bin)")])
    segments = asm.read_image(image, machine)
    debug_path = args.debug or (None if args.no_debug or not asm.debug_path_for(image).exists()
                                else asm.debug_path_for(image))
    debug = asm.read_debug(debug_path, machine) if debug_path else None
    if debug is not None and debug.image_crc32 not in (None, asm.image_fingerprint(segments)):
        raise asm.AsmError([asm.Diagnostic(str(debug_path), None, None,
                                           f"this debug file was written for another image than {image} "
                                           f"(assemble again, or pass --no-debug)")])
    lines = [f"; {image} ({'Intel HEX' if kind == 'hex' else 'raw binary'}) for {machine.name}"]
    lines.extend(asm.disassemble_image(machine, segments, debug))
    return "\n".join(lines) + "\n"


def main(args) -> int:
    try:
        machine = machine_for_program(args, args.image)
    except ProgramError as exc:
        print(str(exc), file=sys.stderr)
        return 1
    try:
        text = disassembly(args, machine)
        if args.out:
            write_atomic(args.out, text)
        else:
            sys.stdout.write(text)
    except asm.AsmError as exc:
        print(str(exc), file=sys.stderr)
        return 1
    except OSError as exc:
        print(f"{args.out}: error: cannot write ({exc.strerror})", file=sys.stderr)
        return 1
    return 0
