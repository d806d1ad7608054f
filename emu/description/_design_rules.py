"""The design rule of a micro-step, checked against the machine's names.

Kept apart from the loader because it is the rule a builder's control unit
must obey (one memory access, one ALU operation, each register written
once per step), not a question of file syntax.
"""

from __future__ import annotations

from ._alu import WORD_SELECTORS, resolve_flag
from ._model import Field
from .notation import (Assign, Call, Choose, Const, FlagsOnly, Halt, Input, Join, Mem, Name, Offset,
                       Output, name_width, unknown_node, value_width)

__all__ = ["StepChecker"]


class StepChecker:
    """Checks one micro-step against the design rule and the machine's names.

    Rule ("Clock, halts and the panel" in emu/machines/ref8.md): at most one
    memory access and one ALU operation per step, and no register or flag written twice (a pair counts as its halves).
    """

    def __init__(self, names, where: str, fields: dict[str, Field], available: dict[str, Field], fail):
        """``names`` is the loader's ``MachineNames`` (registers, pairs, flags, data_bits);
        ``fail(where, message)`` raises the loader's located error."""
        self.names, self.where, self._fail = names, where, fail
        self.fields, self.available = fields, available
        self.memory = self.alu = self.io = 0
        self.written: dict[str, str] = {}
        self.lines: list[str] = []
        self.halts = False

    def fail(self, message):
        self._fail(self.where, message)

    def line(self, name):
        if name not in self.lines:
            self.lines.append(name)

    def write(self, slot_name, via):
        if slot_name in self.written:
            first = self.written[slot_name]
            why = f" ({via} includes {slot_name})" if via != slot_name else ""
            self.fail(f"writes {slot_name} twice in one micro-step{why}"
                      + (f"; also written as {first}" if first != slot_name else ""))
        self.written[slot_name] = via

    def statement(self, st):
        match st:
            case Assign(target, value, flags):
                self.expr(value)
                width = self.width(value)
                if isinstance(target, Mem):
                    self.memory += 1
                    self.expr(target.address)
                    self.line("write")
                else:
                    self.target(target.name, width)
                self.flag_writes(value, flags)
            case FlagsOnly(call, flags):
                self.expr(call)
                self.flag_writes(call, flags)
            case Output(port, value):
                self.expr(port)
                self.expr(value)
                self.io += 1
                self.line("out")
            case Halt():
                if self.halts:
                    self.fail("drives halt twice")
                self.halts = True
                self.line("halt")
            case _:
                unknown_node(st)

    def target(self, name, value_width):
        names = self.names
        if name in self.fields:
            fld = self.fields[name]
            if not fld.kind.is_register:
                self.fail(f"cannot write to '{name}': it is a value field, not a register")
            self.require_available(name)
            self.write(name, name)
        elif name in names.pairs:
            pair = names.pairs[name]
            self.write(pair.high, name)
            self.write(pair.low, name)
        elif name in names.registers:
            self.write(name, name)
        else:
            self.unknown(name)
        self.line(f"load {name}")
        width = name_width(name, names.registers, names.pairs, self.fields)
        if value_width > width:
            self.fail(f"'{name}' holds {width} bits but the value written to it has {value_width}")

    def flag_writes(self, value, flags):
        if not flags:
            return
        if not isinstance(value, Call) or value.op not in self.names.alu_ops:
            self.fail("'sets' needs an ALU operation (add, sub, …) as the value")
        op = self.names.alu_ops[value.op]
        for name in flags:
            flag = self.names.flags.get(name)
            if flag is None:
                self.fail(f"unknown flag '{name}' (flags: {', '.join(self.names.flags)})")
            if op.produces(flag) is None:
                self.fail(f"{value.op} does not produce the {flag.role} flag '{name}'")
            self.write(name, name)

    def require_available(self, name):
        if name not in self.available:
            words = sorted({p.word + 1 for p in self.fields[name].pieces})
            self.fail(f"field '{name}' (word {', '.join(map(str, words))}) is used before "
                      f"its word has been fetched into a register")

    def unknown(self, name):
        names = self.names
        known = list(names.registers) + list(names.pairs)
        fields = list(self.fields)
        self.fail(f"unknown register or field '{name}' (registers: {', '.join(known)}; "
                  f"fields: {', '.join(fields) or 'none'})")

    def width(self, node) -> int:
        names = self.names
        return value_width(node, names.registers, names.pairs, self.fields, names.data_bits, names.alu_ops)

    def expr(self, node) -> None:
        """Check an expression: names known, fields fetched, the design rule kept; then its parts."""
        names = self.names
        match node:
            case Name(name):
                if name in self.fields:
                    self.require_available(name)
                elif name in names.flags:
                    self.fail(f"flag '{name}' can only be read as a condition (flag ? a : b)")
                elif name not in names.pairs and name not in names.registers:
                    self.unknown(name)
            case Const(value):
                if value >= 1 << 32:
                    self.fail(f"constant {value} out of range")
            case Mem():
                self.memory += 1
                if self.memory > 1:
                    self.fail("two memory accesses in one micro-step (the design rule allows one)")
                self.line("read")
            case Join() | Offset():
                pass
            case Choose(flag, _, _, _):
                if flag not in names.flags:
                    self.fail(f"'{flag}' in a condition is not a flag (flags: {', '.join(names.flags)})")
            case Input():
                self.io += 1
                self.line("in")
            case Call(op, args):
                self.call(op, args)
            case _:
                unknown_node(node)
        for part in node.children():
            self.expr(part)

    def call(self, op, args) -> None:
        """Check an operation's name and arity and count it; expr() checks its arguments."""
        names = self.names
        if op in WORD_SELECTORS:
            if len(args) != 1:
                self.fail(f"{op}() takes one argument")
        elif op not in names.alu_ops:
            self.fail(f"unknown operation '{op}' (ALU: {', '.join(names.alu_ops)}; also hi, lo)")
        else:
            spec = names.alu_ops[op]
            if len(args) != spec.arity:
                self.fail(f"{op}() takes {spec.arity} argument{'s' if spec.arity > 1 else ''}, not {len(args)}")
            for ref in spec.reads:
                _flag, problem = resolve_flag(ref, names.flags)
                if problem:
                    self.fail(f"{op} {problem}")
            problem = spec.width_problem(self.width(Call(op, args)))
            if problem:
                self.fail(problem)
            self.alu += 1
            if self.alu > 1:
                self.fail("two ALU operations in one micro-step (the design rule allows one)")
            self.line(f"alu {op}")

    def finish(self):
        if self.memory > 1:
            self.fail("two memory accesses in one micro-step (the design rule allows one)")
        if self.io > 1:
            self.fail("two port transfers in one micro-step (there is one I/O bus)")
