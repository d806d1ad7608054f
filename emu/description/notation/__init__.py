"""The notation of a machine description: micro-steps and numbers.

``_ir`` is the small intermediate form every back end reads, with the one
traversal over it (``children``/``with_children``, ``walk``, and
``unknown_node`` that ends every match); ``microstep.lark`` and
``_parser`` turn the text of one micro-step into it; ``_widths`` is the
rule that says how many bits a value has; ``numbers.lark`` and ``_numbers``
are the number and escape notation shared by machine files, the assembler,
command options and the debugger; ``alu.lark`` and ``_alu_expr`` are the
expression language of ALU definitions (``[alu.NAME]`` and the built-ins).
"""

from ._alu_expr import (AluExpr, Binary, Num, Slice, Unary, Var, alu_parts, evaluate, free_names, index_names,
                        parse_alu_expression)
from ._ir import (Assign, Call, Choose, Const, Expr, Expression, FlagsOnly, Halt, Input, Join, Mem, Name, Node,
                  Offset, Output, Statement, StatementNode, unknown_node, walk)
from ._numbers import (ESCAPES, GRAMMAR_IMPORTS, NUMBER_FORMS, char_value, decode_escapes, literal_value,
                       parse_number)
from ._parser import parse_step
from ._widths import WORD_SELECTORS, name_width, value_width

__all__ = [
    "AluExpr", "Binary", "Num", "Slice", "Unary", "Var", "alu_parts", "evaluate", "free_names", "index_names",
    "parse_alu_expression",
    "Assign", "Call", "Choose", "Const", "Expr", "Expression", "FlagsOnly", "Halt", "Input", "Join", "Mem",
    "Name", "Node", "Offset", "Output", "Statement", "StatementNode", "parse_step", "unknown_node", "walk",
    "ESCAPES", "GRAMMAR_IMPORTS", "NUMBER_FORMS", "char_value", "decode_escapes", "literal_value",
    "parse_number",
    "WORD_SELECTORS", "name_width", "value_width",
]
