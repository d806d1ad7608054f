"""``relaybench asm``: assemble a source file into an image and its companions.

By default ``prog.asm`` gives ``prog.hex`` (Intel HEX) and ``prog.dbg.json``
beside it, the debug file that lets ``run``, ``test`` and ``debug`` tell a
pause from a halt in the image. The files are written together: if any one
cannot be written, none is, and no old file is touched.
Exit 0 when assembled, 1 for errors in the program or the machine file.
"""

from __future__ import annotations

import sys
from pathlib import Path

import asm

from ..files import write_together
from ..formatting import count_text
from ..runs import ProgramError
from ._options import add_machine_option, keep_parser, machine_for_program, usage_error


_IMAGE_SUFFIX = {"hex": ".hex", "bin": ".bin"}
_FORMATS = ("bin", "hex")


def add_arguments(parser) -> None:
    parser.add_argument("source", metavar="SOURCE", help="assembly source file")
    add_machine_option(parser, per_program=True)
    parser.add_argument("-o", "--out", metavar="FILE",
                        help="the image file (default: SOURCE with .hex, or .bin with --format bin)")
    parser.add_argument("--format", choices=_FORMATS,
                        help="image format: hex (Intel HEX) or bin (raw words from address 0); "
                             "default from the --out suffix, else hex")
    parser.add_argument("--listing", metavar="FILE", nargs="?", const="",
                        help="also write a listing (default name SOURCE with .lst; '-' prints it)")
    parser.add_argument("--no-debug", action="store_true", help="do not write the debug file beside the image")
    parser.add_argument("--check", action="store_true", help="only check the program; write nothing")
    keep_parser(parser)


def image_format(args) -> str:
    if args.format:
        return args.format
    if args.out and Path(args.out).suffix.lower() == ".bin":
        return "bin"
    return "hex"


def main(args) -> int:
    source = Path(args.source)
    try:
        machine = machine_for_program(args, source)
    except ProgramError as exc:
        print(str(exc), file=sys.stderr)
        return 1
    if args.out and Path(args.out).resolve() == source.resolve():
        usage_error(args, "argument -o/--out: the image would overwrite the source file")
    try:
        if asm.sniff(source) != "source":
            print(f"{source}: error: this is already an image, not assembly source", file=sys.stderr)
            return 1
        program = asm.assemble_file(source, machine)
        words = sum(len(w) for _s, w in program.segments)
        if not words:
            print(f"{source}: error: the program is empty (no instruction or data to write)", file=sys.stderr)
            return 1
        if args.check:
            print(f"{source}: {_size(words, program)}, no errors")
            return 0
        written = write_outputs(args, source, program)
    except asm.AsmError as exc:
        print(str(exc), file=sys.stderr)
        return 1
    print(f"{source}: {_size(words, program)} -> {', '.join(written)}")
    return 0


def _size(words: int, program) -> str:
    return f"{count_text(words, 'word')} in {count_text(len(program.segments), 'segment')}"


def write_outputs(args, source: Path, program) -> list[str]:
    """Write every requested file, or none: all are staged first and renamed together.

    With ``--no-debug`` an older debug file beside the image is removed, since
    it describes another image and would be read with this one.
    """
    kind = image_format(args)
    image = Path(args.out) if args.out else source.with_suffix(_IMAGE_SUFFIX[kind])
    outputs = {image: asm.image_bytes(program, kind)}
    debug = asm.debug_path_for(image)
    if not args.no_debug:
        outputs[debug] = asm.debug_text(program, debug).encode("utf-8")
    if args.listing is not None and args.listing != "-":
        listing = Path(args.listing) if args.listing else source.with_suffix(".lst")
        outputs[listing] = program.listing_text().encode("utf-8")
    try:
        write_together(outputs)
        if args.no_debug and debug.exists():
            debug.unlink()
            print(f"{debug}: removed: it described an older image", file=sys.stderr)
    except OSError as exc:
        raise asm.AsmError([asm.Diagnostic(str(exc.filename or image), None, None,
                                           f"cannot write ({exc.strerror or exc}); no file was written")]) from None
    if args.listing == "-":
        sys.stdout.write(program.listing_text())
    return [str(path) for path in outputs]
