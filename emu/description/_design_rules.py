"""The design rule of a micro-step, checked against the machine's names.

Kept apart from the loader because it is the rule a builder's control unit
must obey (one memory access, one ALU operation, each register written
once per step), not a question of file syntax.
"""

from __future__ import annotations

from ._alu import WORD_SELECTORS, resolve_flag
from ._model import Field
from ._port_devices import output_port_bits
from .notation import (Assign, Call, Choose, Condition, Const, End, Extend, FlagsOnly, Goto, Halt, Idle, Input, Join,
                       Logic, Mem, Name, Not, Offset, Output, Slice, WaitUntil, name_width, unknown_node,
                       value_width, walk)

__all__ = ["StepChecker"]


class StepChecker:
    """Checks one micro-step against the design rule and the machine's names.

    Rule ("Clock, halts and the panel" in emu/machines/ref8.md): at most one
    memory access and one ALU operation per step, and no register or flag written twice (a group counts as its parts).
    The width rule (emu/machines/README.md) is checked here too: nothing is masked silently.
    """

    def __init__(self, names, where: str, fields: dict[str, Field], available: dict[str, Field], fail):
        """``names`` is the loader's ``MachineNames`` (registers, groups, flags, data_bits);
        ``fail(where, message)`` raises the loader's located error."""
        self.names, self.where, self._fail = names, where, fail
        self.fields, self.available = fields, available
        self.memory = self.alu = self.io = 0
        self.written: dict[str, str] = {}
        self.lines: list[str] = []
        self.halts = self.idle = False
        self.sequencing = None
        """The step's one sequencing statement (end, goto, wait until), if any."""
        self.condition_lines: list[str] = []
        """The lines the sequencing statement's condition drives (reading a port drives ``in``)."""

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
                    self.fits("memory", self.names.data_bits, width)
                else:
                    self.target(target.name, width)
                self.flag_writes(value, flags)
            case FlagsOnly(call, flags):
                self.expr(call)
                self.flag_writes(call, flags)
            case Output(port, value):
                self.expr(port)
                self.expr(value)
                bits, what = output_port_bits(port.value if isinstance(port, Const) else None,
                                              self.names.ports_out, self.names.data_bits)
                self.fits(what, bits, self.width(value))
                self.io += 1
                self.line("out")
            case Halt():
                if self.halts:
                    self.fail("drives halt twice")
                self.halts = True
                self.line("halt")
            case Idle():
                self.idle = True
            case End(condition) | Goto(_, condition) | WaitUntil(condition):
                if self.sequencing is not None:
                    self.fail("a step has at most one sequencing statement (end, goto, wait until)")
                self.sequencing = st
                if condition is not None:
                    before = len(self.lines)
                    self.condition(condition)
                    self.condition_lines = self.lines[before:]
            case _:
                unknown_node(st)

    def fits(self, what: str, width: int, value_width: int):
        """The width rule's one refusal: a value wider than where it is written."""
        if value_width > width:
            self.fail(f"{what} holds {width} bits but the value written to it has {value_width}")

    def target(self, name, value_width):
        names = self.names
        if name in self.fields:
            fld = self.fields[name]
            if not fld.kind.is_register:
                self.fail(f"cannot write to '{name}': it is a value field, not a register")
            self.require_available(name)
            self.write(name, name)
        elif name in names.groups:
            for part in names.groups[name].parts:
                self.write(part, name)
        elif name in names.registers or name in names.flags:
            self.write(name, name)
        else:
            self.unknown(name)
        self.line(f"load {name}")
        self.fits(f"'{name}'", name_width(name, names, self.fields), value_width)

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
        known = list(names.registers) + list(names.groups)
        fields = list(self.fields)
        self.fail(f"unknown register or field '{name}' (registers: {', '.join(known)}; "
                  f"fields: {', '.join(fields) or 'none'})")

    def width(self, node) -> int:
        return value_width(node, self.names, self.fields)

    def expr(self, node) -> None:
        """Check an expression: its parts first (so every name is known before a width is asked), then
        the node itself: names known, fields fetched, widths kept, the design rule kept."""
        names = self.names
        for part in node.children():
            self.expr(part)
        match node:
            case Name(name):
                if name in self.fields:
                    self.require_available(name)
                elif name not in names.groups and name not in names.registers and name not in names.flags:
                    self.unknown(name)
            case Const(value):
                if value >= 1 << 32:
                    self.fail(f"constant {value} out of range")
            case Mem():
                self.memory += 1
                if self.memory > 1:
                    self.fail("two memory accesses in one micro-step (the design rule allows one)")
                self.line("read")
            case Join(parts):
                for part in parts:
                    self.widthless_constant(part, "a join {…}")
            case Offset(base, delta):
                bits = self.width(base)
                if abs(delta) >> bits:
                    self.fail(f"the constant {abs(delta)} does not fit the {bits} bits of the value it is "
                              f"added to or taken from")
            case Slice(base, high, low):
                self.widthless_constant(base, "a slice [h:l]")
                bits = self.width(base)
                if low > high:
                    self.fail(f"slice [{high}:{low}] runs backwards: write the high bit first")
                if high >= bits:
                    self.fail(f"slice [{high}:{low}] reaches outside the {bits} bits of its value "
                              f"(bits {bits - 1}…0)")
            case Extend(value, bits, signed):
                self.widthless_constant(value, "sext()" if signed else "zext()")
                if bits < self.width(value):
                    self.fail(f"{'sext' if signed else 'zext'}() to {bits} bits, but its value already has "
                              f"{self.width(value)}")
            case Not(operand):
                self.one_bit(operand)
            case Logic(_, left, right):
                self.one_bit(left)
                self.one_bit(right)
            case Condition(test):
                self.one_bit(test)
            case Choose(_, if_true, if_false):
                for branch in (if_true, if_false):
                    for n in walk(branch):
                        if isinstance(n, Call) and n.op not in WORD_SELECTORS:
                            self.fail(f"the ALU operation {n.op}() cannot stand in a branch of a choice: "
                                      f"choose its operands instead, or give it a step of its own")
            case Input():
                self.io += 1
                self.line("in")
            case Call(op, args):
                self.call(op, args)
            case _:
                unknown_node(node)

    def condition(self, node: Condition) -> None:
        """Check a condition (of a choice, or of a sequencing statement): a 1-bit boolean expression."""
        self.expr(node)

    def one_bit(self, operand) -> None:
        bits = self.width(operand)
        if bits != 1 and not (isinstance(operand, Const) and operand.value in (0, 1)):
            self.fail(f"a condition operand must be 1 bit wide (a flag, a 1-bit register or field, or a "
                      f"slice like x[0]), but {_shown(operand)} has {bits}")

    def widthless_constant(self, node, where: str) -> None:
        if isinstance(node, Const):
            self.fail(f"a constant in {where} has no width of its own: write zext({node.value}, N)")

    def call(self, op, args) -> None:
        """Check an operation's name and arity and count it; expr() checks its arguments."""
        names = self.names
        if op in WORD_SELECTORS:
            if len(args) != 1:
                self.fail(f"{op}() takes one argument")
            self.widthless_constant(args[0], f"{op}()")
            if op == "hi" and self.width(args[0]) <= names.data_bits:
                self.fail(f"hi() needs a value wider than one data word ({names.data_bits} bits), "
                          f"not one of {self.width(args[0])}")
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
            widths = [self.width(a) for a in args if not isinstance(a, Const)]
            for arg in args:
                if isinstance(arg, Const) and widths and arg.value.bit_length() > max(widths):
                    self.fail(f"the constant {arg.value} does not fit the {max(widths)} bits of {op}()'s "
                              f"other operand")
            self.alu += 1
            if self.alu > 1:
                self.fail("two ALU operations in one micro-step (the design rule allows one)")
            self.line(f"alu {op}")

    def finish(self):
        if self.idle and self.lines:
            self.fail(self.idle_problem())
        if self.memory > 1:
            self.fail("two memory accesses in one micro-step (the design rule allows one)")
        if self.io > 1:
            self.fail("two port transfers in one micro-step (there is one I/O bus)")


    def idle_problem(self) -> str:
        """Why this step cannot be idle; when only its sequencing condition drives a line, what to write."""
        if self.lines != self.condition_lines:
            return "'idle' cannot stand with statements that transfer or drive something"
        kind = {End: "end", Goto: "goto", WaitUntil: "wait until"}[type(self.sequencing)]
        reads = " and ".join(_CONDITION_READS.get(line, f"drives the '{line}' line") for line in self.lines)
        return (f"'idle' cannot stand with this {kind}: its condition {reads}, and an idle step drives no "
                f"line; leave out 'idle' (the {kind} alone takes the same one cycle)")


_CONDITION_READS = {"in": "reads a port (the 'in' line)", "read": "reads memory (the 'read' line)"}


def _shown(node) -> str:
    """A short name for an operand in a message: the name, or its kind of expression."""
    return f"'{node.name}'" if isinstance(node, Name) else f"its {type(node).__name__.lower()} operand"
