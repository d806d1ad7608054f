"""The statement translator: one micro-step's IR → lines of Python, for every back end.

The stepping functions, the fused functions and block translation all translate statements
here, each with its own state access (``_state_access``), so they cannot drift apart.
"""

from __future__ import annotations

from ..description import Instruction, Machine, Step, resolve_flag
from ._alu_codegen import emit_alu
from ._emitter import Emitter
from ..description.notation import (Assign, Call, Choose, Condition, Const, End, Extend, FlagsOnly, Goto, Halt, Idle,
                                    Input, Join, Logic, Mem, Name, Not, Offset, Output, Slice, WaitUntil, name_width,
                                    top_word_shift, unknown_node, value_width, walk)

__all__ = ["_StepTranslator"]


class _StepTranslator:
    """Turns IR statements of one instruction into lines, through an access policy.

    ``fixed`` maps register fields whose value is known at compile time (the
    fused back end's first-word fields) to their register index. A field that
    selects groups is then that group; chosen at run time, it is read and written
    one lane at a time (``Machine.selection_lanes``), each lane indexed by the field.
    """

    def __init__(self, machine: Machine, out: Emitter, access, ins: Instruction | None,
                 fixed: dict[str, int] | None = None):
        self.machine, self.out, self.access = machine, out, access
        self.ins, self.fixed = ins, fixed or {}
        self.fields = ins.fields if ins else {}
        self.reg_slots = {name: reg.slot for name, reg in machine.registers.items()}
        self.reg_slots.update({name: flag.slot for name, flag in machine.flags.items()})

    # -- names

    def register(self, name: str) -> str:
        """A register or a flag (both are one slot each)."""
        return self.access.read(self.reg_slots[name], name)

    def lane_slots(self, field_name: str) -> list[list[int]]:
        """The slots of each lane a register or group field selects in, most significant first."""
        lanes = self.machine.selection_lanes(self.fields[field_name].kind)
        return [[self.reg_slots[r] for r in lane] for lane in lanes]

    def fixed_selection(self, field_name: str) -> str:
        """The register or group a field known at compile time names."""
        return self.fields[field_name].kind.registers[self.fixed[field_name]]

    def field_value(self, field_name: str) -> str:
        """The raw value of an operand field, read from the register(s) holding its word(s)."""
        fld = self.fields[field_name]
        parts = []
        for piece in fld.pieces:
            holder = self.register(self.ins.holders[piece.word])
            mask = (1 << piece.width) - 1
            part = f"({holder} >> {piece.shift} & {mask})" if piece.shift else f"({holder} & {mask})"
            parts.append(f"{part} << {piece.field_bit}" if piece.field_bit else part)
        return " | ".join(parts) if len(parts) > 1 else parts[0]

    def dynamic_slot(self, field_name: str, slots: list[int], writing: bool = False) -> str:
        """The slot of a lane (``slots``) a register field chooses at run time; values naming
        no register reach the undriven slot (reads 0) or, for writes, the one after it."""
        index = self.field_value(field_name)
        size = 1 << self.fields[field_name].kind.bits
        if len(slots) == size and slots == list(range(slots[0], slots[0] + size)):
            return f"{slots[0]} + {index}" if slots[0] else index
        spare = self.machine.undriven_slot + (1 if writing else 0)
        padded = slots + [spare] * (size - len(slots))
        return f"({', '.join(map(str, padded))})[{index}]"

    def width(self, node) -> int:
        return value_width(node, self.machine, self.fields)

    # -- expressions

    def expr(self, node) -> str:
        machine = self.machine
        match node:
            case Name(name) if name in self.fields:
                fld = self.fields[name]
                if not fld.kind.is_register:
                    return f"({self.field_value(name)})"
                if name in self.fixed:
                    return self.expr(Name(self.fixed_selection(name)))
                lanes = self.lane_slots(name)
                self.access.flush([slot for lane in lanes for slot in lane])
                reads = [(f"s[{self.dynamic_slot(name, lane)}]", self.machine.registers[regs[0]].width)
                         for lane, regs in zip(lanes, machine.selection_lanes(fld.kind))]
                return self.join(reads) if fld.kind.selects_groups else reads[0][0]
            case Name(name) if name in machine.groups:
                return self.join([(self.register(part), machine.registers[part].width)
                                  for part in machine.groups[name].parts])
            case Name(name):
                return self.register(name)
            case Const(value):
                return str(value)
            case Mem(address):
                return f"m[{self.address(address)}]"
            case Join(parts):
                return self.join([(self.expr(part), self.width(part)) for part in parts])
            case Offset(base, delta):
                mask = (1 << self.width(base)) - 1
                sign = "+" if delta >= 0 else "-"
                return f"({self.expr(base)} {sign} {abs(delta)} & {mask:#x})"
            case Slice(base, high, low):
                shifted = f"{self.expr(base)} >> {low}" if low else self.expr(base)
                return f"({shifted} & {(1 << (high - low + 1)) - 1:#x})"
            case Extend(value, bits, signed):
                if not signed or bits == self.width(value):
                    return self.expr(value)
                # two's complement: flip the sign bit, subtract it back, keep N bits
                sign_bit = 1 << (self.width(value) - 1)
                return f"(({self.expr(value)} ^ {sign_bit:#x}) - {sign_bit:#x} & {(1 << bits) - 1:#x})"
            case Not(operand):
                return f"(1 ^ {self.expr(operand)})"
            case Logic(op, left, right):
                return f"({self.expr(left)} {op} {self.expr(right)})"
            case Condition():
                return self.condition(node)
            case Choose(Condition(Not(test)), a, b):
                return f"({self.expr(b)} if {self.expr(test)} else {self.expr(a)})"
            case Choose(condition, a, b):
                return f"({self.expr(a)} if {self.condition(condition)} else {self.expr(b)})"
            case Input(port):
                return f"in_({self.expr(port)})"
            case Call("hi", (arg,)):
                shift = top_word_shift(self.width(arg), machine.data_bits)
                return f"({self.expr(arg)} >> {shift} & {machine.data_mask:#x})"
            case Call("lo", (arg,)):
                return f"({self.expr(arg)} & {machine.data_mask:#x})"
            case Call():
                raise AssertionError("ALU operations are translated by alu()")
            case _:
                unknown_node(node)

    def condition(self, node: Condition) -> str:
        """A condition as a Python expression that is 1 when it holds and 0 when not
        (the hook sequencing statements use for their ``if``)."""
        return self.expr(node.test)

    def join(self, parts: list[tuple[str, int]]) -> str:
        """Parts (text, width), most significant first, side by side."""
        pieces, shift = [], 0
        for text, width in reversed(parts):
            pieces.append(f"{text} << {shift}" if shift else text)
            shift += width
        return f"({' | '.join(reversed(pieces))})"

    def address(self, node) -> str:
        text = self.expr(node)
        if self.width(node) > (self.machine.memory_words - 1).bit_length():
            return f"{text} & {self.machine.memory_words - 1:#x}"
        return text

    def value(self, node) -> tuple[str, int]:
        """An expression's text and width; ALU operations are computed into a temporary."""
        if isinstance(node, Call) and node.op in self.machine.alu_ops:
            result, _flags = self.alu(node)
            return result, self.width(node)
        return self.expr(node), self.width(node)

    def alu(self, call: Call, flags: tuple[str, ...] = ()) -> tuple[str, dict[str, str]]:
        """Emit the ALU operation; return its kept result and the value of each flag in ``flags``.

        A flag costs a line only when it needs the exact result or an
        operand, and only the flags a step names are computed:
        ``inc(rd) sets z n`` computes neither carry nor overflow.
        """
        machine = self.machine
        op = machine.alu_ops[call.op]
        width = self.width(call)
        operands = []
        for key, arg in zip(op.operands, call.args):
            text = self.expr(arg)
            if not text.isidentifier():
                name = self.out.fresh(key)
                self.out.line(f"{name} = {text}")
                text = name
            operands.append(text)
        reads = {}
        for ref in op.reads:
            flag, _problem = resolve_flag(ref, machine.flags)
            reads[ref] = self.access.read(flag.slot, flag.name)
        wanted = {name: op.produces(machine.flags[name]) for name in flags}
        return emit_alu(op, operands, reads, width, wanted, self.out)

    # -- statements

    def next_step(self, step: Step, own: int) -> str:
        """The index of the step after ``step`` (own step ``own``), decided on the state before it."""
        jump = step.jump
        if jump.condition is None:
            return str(jump.target)
        test = self.condition(jump.condition)
        taken, passed = (jump.target, own + 1) if jump.when else (own + 1, jump.target)
        return f"{taken} if {test} else {passed}"

    def step(self, step: Step) -> None:
        """One micro-step with parallel semantics: every read sees the state before the step.

        Its sequencing statement (if any) is not the datapath's: ``next_step`` translates it.
        """
        statements = [st for st in step.statements if not isinstance(st, (End, Goto, WaitUntil))]
        ordered = _order_for_direct_writes(statements, self)
        if ordered is None:
            self.step_through_temporaries(statements)
        else:
            for st in ordered:
                self.statement(st)

    def statement(self, st) -> None:
        match st:
            case Assign(target, value, flags):
                if flags:
                    result, values = self.alu(value, flags)
                    self.assign(target, result, self.width(value))
                    self.write_flags(flags, values)
                else:
                    text, width = self.value(value)
                    self.assign(target, text, width)
            case FlagsOnly(call, flags):
                _result, values = self.alu(call, flags)
                self.write_flags(flags, values)
            case Output(port, value):
                self.out.line(f"out_({self.expr(port)}, {self.expr(value)})")
            case Halt():
                self.out.line("halted = True")
            case Idle():
                pass
            case _:
                unknown_node(st)

    def write_flags(self, flags, values) -> None:
        for name in flags:
            self.access.write(self.machine.flags[name].slot, name, values[name])

    def assign(self, target, value: str, width: int) -> None:
        """Write a value the checker has held to the target's width (so no mask, except a
        register field over registers of different widths, which keeps each one's own)."""
        machine = self.machine
        if isinstance(target, Mem):
            self.out.line(f"m[{self.address(target.address)}] = {value}")
            return
        name = target.name
        if name in self.fields:
            fld = self.fields[name]
            if name in self.fixed:
                reg = self.fixed_selection(name)
                if reg in machine.groups:
                    self.assign(Name(reg), value, width)
                    return
                if width > machine.registers[reg].width:
                    value = f"{value} & {(1 << machine.registers[reg].width) - 1:#x}"
                self.access.write(self.reg_slots[reg], reg, value)
            elif fld.kind.selects_groups:
                lanes = self.lane_slots(name)
                every_slot = [slot for lane in lanes for slot in lane]
                self.access.flush(every_slot)
                widths = [machine.registers[regs[0]].width for regs in machine.selection_lanes(fld.kind)]
                for lane, text in zip(lanes, self.split(value, widths)):
                    self.out.line(f"s[{self.dynamic_slot(name, lane, writing=True)}] = {text}")
                self.access.forget(every_slot)
            else:
                narrowest = min(machine.registers[r].width for r in fld.kind.registers)
                if width > narrowest:
                    value = f"{value} & {(1 << name_width(name, machine, self.fields)) - 1:#x}"
                slots, = self.lane_slots(name)
                self.access.flush(slots)
                self.out.line(f"s[{self.dynamic_slot(name, slots, writing=True)}] = {value}")
                self.access.forget(slots)
            return
        if name in machine.groups:
            parts = machine.groups[name].parts
            for part, text in zip(parts, self.split(value, [machine.registers[p].width for p in parts])):
                self.access.write(self.reg_slots[part], part, text)
            return
        self.access.write(self.reg_slots[name], name, value)

    def split(self, value: str, widths: list[int]) -> list[str]:
        """A group's value cut into its parts of ``widths`` bits, most significant first."""
        if not value.isidentifier():
            temp = self.out.fresh("v")
            self.out.line(f"{temp} = {value}")
            value = temp
        texts, shift = [], sum(widths)
        for width in widths:
            shift -= width
            shifted = f"{value} >> {shift}" if shift else value
            texts.append(f"{shifted} & {(1 << width) - 1:#x}")
        return texts

    def step_through_temporaries(self, statements) -> None:
        """A step whose transfers read each other's targets (a swap): compute all, then write."""
        pending = []
        for st in statements:
            if isinstance(st, Assign) and not st.flags:
                text, width = self.value(st.value)
                temp = self.out.fresh("v")
                self.out.line(f"{temp} = {text}")
                pending.append((st.target, temp, width))
            elif isinstance(st, (Assign, FlagsOnly)):
                call = st.value if isinstance(st, Assign) else st.call
                result, values = self.alu(call, st.flags)
                temps = {}
                for name in st.flags:
                    temp = self.out.fresh("f")
                    self.out.line(f"{temp} = {values[name]}")
                    temps[name] = temp
                pending.append(("flags", st.flags, temps))
                if isinstance(st, Assign):
                    pending.append((st.target, result, self.width(call)))
            else:
                self.statement(st)
        for item in pending:
            if item[0] == "flags":
                self.write_flags(item[1], item[2])
            else:
                self.assign(*item)


def _slots_touched(node, translator: _StepTranslator, writing=False) -> set:
    """Names of state a statement reads (or, with writing=True, writes), for ordering."""
    machine = translator.machine
    fields = translator.fields
    found = set()

    def selected(name):
        """The registers a register or group field stands for here."""
        if name in translator.fixed:
            return name_slots(translator.fixed_selection(name))
        return machine.selectable_registers(fields[name].kind)

    def name_slots(name):
        if name in fields:
            fld = fields[name]
            holders = {translator.ins.holders[p.word] for p in fld.pieces}
            if fld.kind.is_register:
                return selected(name) | (set() if name in translator.fixed else holders)
            return holders
        if name in machine.groups:
            return set(machine.groups[name].parts)
        return {name}

    if writing:
        match node:
            case Assign(Name(name), _, flags):
                found |= selected(name) if name in fields else name_slots(name)
                found |= set(flags)
            case Assign(Mem(), _, flags) | FlagsOnly(_, flags):
                found |= set(flags)
            case Output() | Halt() | Idle():
                pass
            case _:
                unknown_node(node)
        return found
    for sub in walk(node):
        match sub:
            case Name(name):
                found |= name_slots(name)
            case Call(op, _) if op in machine.alu_ops:
                found |= {resolve_flag(ref, machine.flags)[0].name for ref in machine.alu_ops[op].reads}
            case (Const() | Mem() | Join() | Offset() | Slice() | Extend() | Not() | Logic() | Condition()
                  | Choose() | Input() | Call()):
                pass  # no state of their own; their parts come next in the walk
            case _:
                unknown_node(sub)
    if isinstance(node, Assign) and isinstance(node.target, Name) and node.target.name in fields:
        fld = fields[node.target.name]
        found |= {translator.ins.holders[p.word] for p in fld.pieces}
    return found


def _order_for_direct_writes(statements, translator):
    """An order in which writing each target at once never spoils a later read; None if none."""
    remaining = list(statements)
    reads = {id(st): _slots_touched(st, translator) for st in statements}
    writes = {id(st): _slots_touched(st, translator, writing=True) for st in statements}
    ordered = []
    while remaining:
        for st in remaining:
            others = [o for o in remaining if o is not st]
            if not any(writes[id(st)] & reads[id(o)] for o in others):
                ordered.append(st)
                remaining.remove(st)
                break
        else:
            return None
    return ordered
