"""The notation of a machine description: micro-steps and numbers.

``microstep.lark`` is the grammar of one micro-step; ``_ir`` the small
intermediate form every back end reads (and the one traversal over it);
``_widths`` the rule that says how many bits a value has; ``_numbers`` the
number and escape notation shared by machine files, the assembler, command
options and the debugger.
"""

from ._ir import (Assign, Call, Choose, Const, Expr, FlagsOnly, Halt, Input, Join, Mem, Name, Offset,
                  Output, Statement, parse_step, walk)
from ._numbers import ESCAPES, NUMBER_FORMS, decode_escapes, literal_value, parse_number
from ._widths import name_width, value_width

__all__ = [
    "Assign", "Call", "Choose", "Const", "Expr", "FlagsOnly", "Halt", "Input", "Join", "Mem", "Name",
    "Offset", "Output", "Statement", "parse_step", "walk",
    "ESCAPES", "NUMBER_FORMS", "decode_escapes", "literal_value", "parse_number",
    "name_width", "value_width",
]
