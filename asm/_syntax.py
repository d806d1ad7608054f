"""Source text → statements: the lark grammar and one transformer over it.

The parser is built once (LALR, transformer embedded, so no parse tree is
kept). A file is parsed whole, with the whole-text lexer (the same tokens as
lark's, read faster); only when that fails is it parsed again line by line
with lark's own lexer, whose errors are worded here, so that every line with
a syntax error is reported, not just the first, and the good lines still
reach the later passes.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import cache

import lark

from ._errors import Diagnostic
from emu.description.notation import WholeTextLexer, char_value, decode_escapes, literal_value, packaged_parser

from ._expr import Binary, Call, Expr, Group, Here, Invalid, Name, Number, Unary

__all__ = [
    "Operand", "Text", "Comparison", "Label", "InstructionLine", "Directive",
    "Assignment", "Line", "parse_source",
]



@dataclass(slots=True)
class Operand:
    """An expression with its decoration: ``[addr]`` is opening "[", closing "]"."""
    opening: str
    expr: Expr
    closing: str
    line: int
    column: int

    def readings(self):
        """Every (opening, expression, closing) this operand can be read as:
        the outer parentheses of ``(e)`` may be decoration or grouping."""
        opening, expr, closing = self.opening, self.expr, self.closing
        yield opening, expr, closing
        while isinstance(expr, Group):
            opening, expr, closing = opening + "(", expr.inner, ")" + closing
            yield opening, expr, closing

    def reading(self, opening: str, closing: str) -> Expr | None:
        """The expression inside when this operand is read with that decoration, or None."""
        if opening == self.opening and closing == self.closing:     # the first reading, and most often the one
            return self.expr
        return next((e for o, e, c in self.readings() if o == opening and c == closing), None)

    def literal_text(self) -> str | None:
        """Lower-case text of an operand made of a bare name (``x``, ``[x]``)."""
        for opening, expr, closing in self.readings():
            if isinstance(expr, Name):
                return f"{opening}{expr.name.lower()}{closing}"
        return None


@dataclass(slots=True)
class Text:
    """A string literal; ``problem`` is set when an escape is not known."""
    value: str
    problem: str | None
    line: int
    column: int


@dataclass(slots=True)
class Comparison:
    """``item op value`` in an ``.expect``."""
    item: Operand
    op: str
    value: Operand | Text
    line: int
    column: int


@dataclass(slots=True)
class Label:
    name: str
    line: int
    column: int


@dataclass(slots=True)
class InstructionLine:
    mnemonic: str
    operands: list[Operand]
    line: int
    column: int


@dataclass(slots=True)
class Directive:
    name: str
    """Lower case, with its dot."""
    arguments: list
    line: int
    column: int


@dataclass(slots=True)
class Assignment:
    name: str
    expr: Expr
    line: int
    column: int


@dataclass(slots=True)
class Line:
    number: int
    label: Label | None
    body: InstructionLine | Directive | Assignment | None


_BINDING = {"|": 1, "^": 2, "&": 3, "<<": 4, ">>": 4, "+": 5, "-": 5, "*": 6, "/": 6, "%": 6}
"""How tightly each binary operator binds, as in C; operators that bind alike group from the left."""


def _fold(operands: list, operators: list) -> None:
    """Join the last two operands by the last operator."""
    right = operands.pop()
    operands[-1] = Binary(operators.pop(), operands[-1], right)


class _Build(lark.Transformer):
    """One method per grammar rule; each builds one statement or expression node.

    Each method takes the rule's children as one list, the way lark calls a
    plain method: spreading them as arguments (``v_args(inline=True)``) puts
    three more calls in front of every rule reduced, a tenth of parsing a
    long program.
    """

    def start(self, lines):
        return [line for line in lines if line is not None]

    def line(self, children):
        label, body = children
        if label is None and body is None:
            return None
        return Line((label or body).line, label, body)

    def label(self, children):
        [name] = children
        return Label(str(name), name.line, name.column)

    def instruction(self, children):
        name, *operands = children
        return InstructionLine(str(name), [op for op in operands if op is not None], name.line, name.column)

    def assignment(self, children):
        name, expr = children
        return Assignment(str(name), expr, name.line, name.column)

    def directive(self, children):
        name, *arguments = children
        return Directive(str(name).lower(), [a for a in arguments if a is not None], name.line, name.column)

    def comparison(self, children):
        item, op, value = children
        return Comparison(item, str(op), value, item.line, item.column)

    def operand(self, children):
        opening, expr, closing = children
        first = opening or expr
        return Operand(str(opening or ""), expr, str(closing or ""), first.line, first.column)

    def string(self, children):
        [token] = children
        value, problem = decode_escapes(str(token)[1:-1])
        return Text(value, problem, token.line, token.column)

    def expr(self, chain):
        """``a + b * c``: operands and operators in turn, grouped by ``_BINDING`` (shunting-yard)."""
        operands, operators = [chain[0]], []
        for index in range(1, len(chain), 2):
            op = str(chain[index])
            while operators and _BINDING[operators[-1]] >= _BINDING[op]:
                _fold(operands, operators)
            operators.append(op)
            operands.append(chain[index + 1])
        while operators:
            _fold(operands, operators)
        return operands[0]

    def unary(self, children):
        op, operand = children
        return Unary(str(op), operand, op.line, op.column)

    def number(self, children):
        [token] = children
        try:
            return Number(literal_value(str(token)), token.line, token.column)
        except ValueError as exc:
            return Invalid(str(exc), token.line, token.column)

    def char(self, children):
        [token] = children
        try:
            return Number(char_value(str(token)), token.line, token.column)
        except ValueError as exc:
            return Invalid(str(exc), token.line, token.column)

    def name(self, children):
        [token] = children
        return Name(str(token), token.line, token.column)

    def here(self, children):
        [token] = children
        return Here(token.line, token.column)

    def group(self, children):
        paren, expr = children
        return Group(expr, paren.line, paren.column)

    def call(self, children):
        name, _paren, argument = children
        return Call(str(name), argument, name.line, name.column)


@cache
def _parser() -> lark.Lark:
    """The parser of single lines, and of files that do not parse."""
    return packaged_parser("asm", "grammar/assembly.lark", transformer=_Build(), maybe_placeholders=True)


@cache
def _whole_file_parser() -> lark.Lark:
    return packaged_parser("asm", "grammar/assembly.lark", transformer=_Build(), maybe_placeholders=True,
                           lexer=WholeTextLexer)


_TOKEN_WORDS = {
    "NAME": "a name", "NUMBER": "a number", "CHAR": "a character literal",
    "STRING": "a string", "DIRECTIVE": "a directive", "_NL": "the end of the line",
    "$END": "the end of the line", "COMMA": "','", "COLON": "':'", "EQUAL": "'='",
    "LPAREN": "'('", "RPAR": "')'", "OPEN": "'[', '#' or '@'", "CLOSE": "']'",
    "COMPARE": "'==' or '!='",
}
_EXPRESSION_START = {"NAME", "NUMBER", "CHAR", "DOLLAR", "LPAREN", "MINUS", "TILDE", "PLUS"}
_LEADING_LABEL = re.compile(r"\s*([A-Za-z_]\w*)\s*:")


def _expected_text(expected) -> str:
    names = set(expected)
    words = []
    if names & _EXPRESSION_START:
        words.append("an expression")
        names -= _EXPRESSION_START | {"OPEN"}
    words += sorted({_TOKEN_WORDS[n] for n in names if n in _TOKEN_WORDS})
    return ", ".join(words[:5]) or "something else"


def _syntax_message(exc: lark.UnexpectedInput, line_text: str) -> tuple[int, str]:
    """A lark error → (column, message) in the words of the language."""
    if isinstance(exc, lark.UnexpectedCharacters):
        ch = line_text[exc.column - 1] if 0 < exc.column <= len(line_text) else "?"
        return exc.column, f"unexpected character {ch!r}"
    if isinstance(exc, lark.UnexpectedToken):
        token = exc.token
        if token.type in ("_NL", "$END"):
            return len(line_text) + 1, f"unexpected end of line; expected {_expected_text(exc.expected)}"
        return token.column, f"unexpected {str(token)!r}; expected {_expected_text(exc.expected)}"
    return len(line_text) + 1, "unexpected end of line"


_BLOCK_LINES = 256
"""Lines parsed together when a file does not parse whole: only a block that fails is parsed line by line."""


def parse_source(text: str, filename: str) -> tuple[list[Line], list[Diagnostic]]:
    """Every statement of a file, and a diagnostic for every line that does not parse.

    A part of the file is parsed behind as many line breaks as lines before
    it, so its tokens carry their own line numbers; in blocks, that costs
    the length of the file a block, not a line.
    """
    text = text.replace("\r\n", "\n")
    try:
        return _whole_file_parser().parse(text), []
    except lark.UnexpectedInput:
        pass
    rows = text.split("\n")
    lines, problems = [], []
    for first in range(0, len(rows), _BLOCK_LINES):
        block = rows[first:first + _BLOCK_LINES]
        try:
            lines.extend(_whole_file_parser().parse("\n" * first + "\n".join(block)))
            continue
        except lark.UnexpectedInput:
            pass
        for index, line_text in enumerate(block, first):
            try:
                lines.extend(_parser().parse("\n" * index + line_text))
            except lark.UnexpectedInput as exc:
                column, message = _syntax_message(exc, line_text)
                column = min(max(column, 1), len(line_text) + 1)
                problems.append(Diagnostic(filename, index + 1, column, message, line_text))
                salvaged = _LEADING_LABEL.match(line_text)
                if salvaged:
                    lines.append(Line(index + 1, Label(salvaged[1], index + 1, salvaged.start(1) + 1), None))
    return lines, problems
