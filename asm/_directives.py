"""The assembler's directives (``.org``, ``.byte``, ``.include``, ``.expect`` ...), run in pass one.

A mixin of ``_Assembly``: each handler reads one directive's arguments, reports
what is wrong with them and lays down words or state for pass two.
"""

from __future__ import annotations

import os

from ._errors import AsmError
from ._expr import EvalError, Expr, Name
from ._pass_records import _Item, _PendingExpect, _Place
from ._source_text import decode_source
from ._syntax import Comparison, Directive, Operand, Text

__all__ = ["MAX_INCLUDE_DEPTH", "_Directives"]

MAX_INCLUDE_DEPTH = 64
"""Far more than any program needs; it keeps a chain of includes inside Python's call stack."""


class _Directives:
    """Directive handlers of ``_Assembly`` (which supplies ``error``, ``emit`` and the pass-one state)."""

    def expressions(self, body: Directive, file: str, count: int | None, usage: str) -> list[Expr] | None:
        args = body.arguments
        ok = (count is None or len(args) == count) and args and all(
            isinstance(a, Operand) and not a.opening and not a.closing for a in args)
        if not ok:
            self.error(file, body.line, body.column, f"{body.name} takes {usage}")
            return None
        return [a.expr for a in args]

    def early_value(self, expr: Expr, file: str) -> int | None:
        """A value needed in pass one (.org, .zero): only what is defined above counts."""
        self.early, self.here = True, self.address
        try:
            return expr.evaluate(self)
        except EvalError as exc:
            self.report(exc, file)
            return None
        finally:
            self.early = False

    def do_org(self, body: Directive, file: str):
        exprs = self.expressions(body, file, 1, "one address, e.g. .org 0x100")
        if exprs is None:
            return
        value = self.early_value(exprs[0], file)
        if value is None:
            return
        if not 0 <= value < self.machine.memory_words:
            self.error(file, exprs[0].line, exprs[0].column,
                       f"{value} is not an address of {self.machine.name} (0…{self.machine.memory_words - 1})")
            return
        self.address = value
        self.current_run = None
        self.pending_origin = _Place(file, body.line, body.column)

    def do_zero(self, body: Directive, file: str):
        exprs = self.expressions(body, file, 1, "one word count, e.g. .zero 16")
        if exprs is None:
            return None
        count = self.early_value(exprs[0], file)
        if count is None:
            return None
        if count < 0:
            self.error(file, exprs[0].line, exprs[0].column, f"a word count cannot be negative ({count})")
            return None
        return self.emit(_Item(self.address, count, _Place(file, body.line, body.column), data=[]), "data")

    def do_byte(self, body: Directive, file: str):
        parts, length = [], 0
        for arg in body.arguments:
            if isinstance(arg, Text):
                if arg.problem:
                    self.error(file, arg.line, arg.column, arg.problem)
                parts.append(arg)
                length += len(arg.value) * self.char_words_each
            elif isinstance(arg, Operand) and not arg.opening and not arg.closing:
                parts.append((arg.expr, 1))
                length += 1
            else:
                self.error(file, arg.line, arg.column, ".byte takes expressions and \"strings\"")
        if not body.arguments:
            self.error(file, body.line, body.column, ".byte takes expressions and \"strings\"")
        return self.emit(_Item(self.address, length, _Place(file, body.line, body.column), data=parts), "data")

    def do_word(self, body: Directive, file: str):
        exprs = self.expressions(body, file, None, "expressions, e.g. .word 0x1234, start")
        if exprs is None:
            return None
        count = self.word_words
        return self.emit(_Item(self.address, count * len(exprs), _Place(file, body.line, body.column),
                               data=[(e, count) for e in exprs]), "data")

    def do_equ(self, body: Directive, file: str):
        args = body.arguments
        if (len(args) != 2 or not all(isinstance(a, Operand) and not a.opening and not a.closing for a in args)
                or not isinstance(args[0].expr, Name)):
            self.error(file, body.line, body.column, ".equ takes a name and a value, e.g. .equ COUNT, 10")
            return
        name = args[0].expr
        self.define_constant(name.name, args[1].expr, _Place(file, name.line, name.column))

    def do_machine(self, body: Directive, file: str):
        """The machine was chosen before assembly (``machine_directive``); here only its place is checked."""
        args = body.arguments
        if len(args) != 1 or not isinstance(args[0], Text) or not args[0].value.strip():
            self.error(file, body.line, body.column, '.machine takes one "machine name or path"')
        elif len(self.include_stack) > 1 or self.statements_seen:
            self.error(file, body.line, body.column,
                       ".machine must be the first statement of the program file (the machine decides "
                       "how every other line assembles)")

    def do_include(self, body: Directive, file: str):
        args = body.arguments
        if len(args) != 1 or not isinstance(args[0], Text):
            self.error(file, body.line, body.column, '.include takes one "file name"')
            return
        arg = args[0]
        folder = "" if file.startswith("<") else os.path.dirname(file)
        path = os.path.normpath(os.path.join(folder, arg.value))
        if len(self.include_stack) >= MAX_INCLUDE_DEPTH:
            self.error(file, arg.line, arg.column, f"includes nested more than {MAX_INCLUDE_DEPTH} deep")
            return
        chain = [os.path.realpath(f) for f in self.include_stack]
        if os.path.realpath(path) in chain:
            loop = " → ".join([*self.include_stack[chain.index(os.path.realpath(path)):], path])
            self.error(file, arg.line, arg.column, f"include loop: {loop}")
            return
        try:
            data = open(path, "rb").read()
        except OSError as exc:
            self.error(file, arg.line, arg.column,
                       f"cannot read include file '{arg.value}' ({exc.strerror or exc})")
            return
        try:
            text = decode_source(data, path)
        except AsmError as exc:
            self.diagnostics.extend(exc.diagnostics)
            return
        if path in self.sources:
            path = os.path.join(folder, arg.value)
        self.assemble_file_text(text, path)

    def do_expect(self, body: Directive, file: str):
        if not body.arguments or not all(isinstance(a, Comparison) for a in body.arguments):
            self.error(file, body.line, body.column, ".expect takes checks like r0 == 5, out == \"ok\"")
            return
        if self.last_halt is None:
            self.error(file, body.line, body.column,
                       ".expect has no halt or pause above it to attach to")
            return
        for check in body.arguments:
            self.expects.append(_PendingExpect(self.last_halt, self.address,
                                               _Place(file, check.line, check.column), check))

