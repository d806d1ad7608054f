"""The notation of a machine description: micro-steps and numbers.

``_ir`` is the small intermediate form every back end reads, with the one
traversal over it (``children``/``with_children``, ``walk``, and
``unknown_node`` that ends every match); ``microstep.lark`` and
``_parser`` turn the text of one micro-step into it; ``_widths`` is the
rule that says how many bits a value has; ``numbers.lark`` and ``_numbers``
are the number and escape notation shared by machine files, the assembler,
command options and the debugger; ``alu.lark`` and ``_alu_expr`` are the
expression language of ALU definitions (``[alu.NAME]`` and the built-ins);
``_grammars`` builds every parser from its grammar file, through the user's
cache; ``_whole_text_lexer`` is a faster lexer for lark, for long texts.
"""

from ._alu_expr import (AluExpr, Binary, BitRange, Num, Unary, Var, alu_parts, evaluate, free_names, index_names,
                        parse_alu_expression)
from ._ir import (LOGIC_OPERATORS, Assign, Call, Choose, Condition, Const, End, Expr, Expression, Extend, FlagsOnly,
                  Goto, Halt, Idle, Input, Join, Logic, Mem, Name, Node, Not, Offset, Output, Sequencing, Slice,
                  Statement, StatementNode, WaitUntil,
                  unknown_node, walk)
from ._grammars import packaged_parser
from ._numbers import (ESCAPES, NUMBER_FORMS, char_value, decode_escapes, literal_value,
                       parse_number)
from ._parse_errors import error_column
from ._parser import parse_line_gate, parse_step
from ._whole_text_lexer import WholeTextLexer
from ._widths import WORD_SELECTORS, name_width, top_word_shift, value_width

__all__ = [
    "AluExpr", "Binary", "BitRange", "Num", "Unary", "Var", "alu_parts", "evaluate", "free_names", "index_names",
    "parse_alu_expression", "error_column",
    "Assign", "Call", "Choose", "Condition", "Const", "Expr", "Expression", "Extend", "FlagsOnly", "Halt", "Idle",
    "Input", "Join", "LOGIC_OPERATORS", "Logic", "Mem", "Name", "Node", "Not", "Offset", "Output", "Slice",
    "Statement", "StatementNode", "parse_line_gate", "parse_step", "unknown_node", "walk",
    "End", "Goto", "Sequencing", "WaitUntil",
    "ESCAPES", "NUMBER_FORMS", "char_value", "decode_escapes", "literal_value",
    "parse_number", "packaged_parser", "WholeTextLexer",
    "WORD_SELECTORS", "name_width", "top_word_shift", "value_width",
]
