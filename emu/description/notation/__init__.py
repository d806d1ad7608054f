"""The notation of a machine description: micro-steps and numbers.

``_ir`` is the small intermediate form every back end reads, with the one
traversal over it (``children``/``with_children``, ``walk``, and
``unknown_node`` that ends every match); ``microstep.lark`` and
``_parser`` turn the text of one micro-step into it; ``_widths`` is the
rule that says how many bits a value has; ``numbers.lark`` and ``_numbers``
are the number and escape notation shared by machine files, the assembler,
command options and the debugger.
"""

from ._ir import (Assign, Call, Choose, Const, End, Expr, Expression, FlagCondition, FlagsOnly, Goto, Halt, Input,
                  Join, Mem, Name, Node, Offset, Output, Sequencing, Statement, StatementNode, WaitUntil,
                  unknown_node, walk)
from ._numbers import (ESCAPES, GRAMMAR_IMPORTS, NUMBER_FORMS, char_value, decode_escapes, literal_value,
                       parse_number)
from ._parser import parse_step
from ._widths import name_width, value_width

__all__ = [
    "Assign", "Call", "Choose", "Const", "Expr", "Expression", "FlagsOnly", "Halt", "Input", "Join", "Mem",
    "Name", "Node", "Offset", "Output", "Statement", "StatementNode", "parse_step", "unknown_node", "walk",
    "End", "FlagCondition", "Goto", "Sequencing", "WaitUntil",
    "ESCAPES", "GRAMMAR_IMPORTS", "NUMBER_FORMS", "char_value", "decode_escapes", "literal_value",
    "parse_number",
    "name_width", "value_width",
]
