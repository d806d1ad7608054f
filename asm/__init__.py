"""relaybench's assembler, disassembler and image formats.

Everything machine-specific (mnemonics, operand forms, registers, encodings,
word width) comes from an ``emu.Machine``; this package knows none of it.
"""

from ._assembler import MAX_INCLUDE_DEPTH, assemble_file, assemble_text
from ._debuginfo import (DebugInfo, DebugMachine, Expect, LineEntry, debug_path_for, debug_text, image_fingerprint,
                         read_debug, read_debug_machine, write_debug)
from ._disasm import disassemble, disassemble_at, disassemble_image
from ._errors import AsmError, Diagnostic
from ._expr import EvalError
from ._forms import FormError
from ._image import image_bytes, intel_hex_text, parse_intel_hex, read_image, sniff, write_binary, write_intel_hex
from ._machine_directive import MachineDirective, machine_directive
from ._planting import Moved, Planting, plant_halts
from ._program import Program, write_listing

__all__ = [
    "EvalError", "FormError",
    "MAX_INCLUDE_DEPTH", "AsmError", "DebugInfo", "DebugMachine", "Diagnostic", "Expect", "LineEntry", "MachineDirective",
    "Moved", "Planting", "Program", "assemble_file", "assemble_text", "debug_path_for", "debug_text",
    "disassemble", "disassemble_at", "disassemble_image", "image_bytes", "image_fingerprint", "intel_hex_text",
    "machine_directive", "parse_intel_hex", "plant_halts", "read_debug", "read_debug_machine", "read_image", "sniff", "write_binary",
    "write_debug", "write_intel_hex",
    "write_listing",
]
