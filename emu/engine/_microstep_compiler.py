"""The micro-step compiler: machine description IR → Python source → code.

Two back ends share one statement translator, so they cannot drift:

* **stepping** — one function per micro-step, reading its operand fields
  from the instruction register (or the latch that holds a later word) at
  run time. The control unit calls one of these per falling clock edge.
* **fused** — one function per instruction *and* per value of the
  register fields in its first word, with those fields baked in as literal
  slot numbers and registers kept in locals. It runs the fetch steps and
  all the instruction's steps in one call and returns its cycle count.
  Instructions that drive halt are not fused: their entry raises
  ``Fallback`` before touching anything, and the control unit steps them,
  so a halt lands exactly where the hardware would put it.

All generated functions are closures inside one ``build(s, m, in_, out_,
Fallback)`` function: ``s`` is the flat list of register and flag slots,
``m`` the memory. The code object is compiled once per machine and cached;
``build`` is called once per emulator. Set ``RELAYBENCH_DUMP_CODE`` to a
folder to have the source written there, under the file name that
tracebacks show.
"""

from __future__ import annotations

import weakref
from contextlib import nullcontext
from dataclasses import dataclass
from typing import Callable, NamedTuple

from ..description import Instruction, Machine, Step, resolve_flag
from ._alu_codegen import emit_alu
from ._emitter import Emitter, compile_generated
from ..description.notation import (Assign, Call, Choose, Condition, Const, End, Extend, FlagsOnly, Goto, Halt, Idle,
                                    Input, Join, Logic, Mem, Name, Not, Offset, Output, Slice, WaitUntil, name_width,
                                    top_word_shift, unknown_node, value_width, walk)

__all__ = ["CompiledMachine", "compile_machine", "Fallback"]


class Fallback(Exception):
    """Raised by a fused entry that must be stepped instead (halt, undefined opcode)."""


class BoundFunctions(NamedTuple):
    """The generated functions, bound to one emulator's state."""
    fetch_steps: tuple[Callable[[], None], ...]
    instruction_steps: tuple[tuple[Callable[[], bool | None], ...], ...]
    instruction_jumps: tuple[tuple[Callable[[], int] | None, ...], ...]
    """Per own step: None (go on to the next step) or a function, called before the step, returning
    the index of the step to run next (the number of steps: the instruction is finished)."""
    fused: list[Callable[[], int]]
    """First word → its fused function; the free runners index it themselves."""
    run_free: Callable
    run_free_watching: Callable


@dataclass
class CompiledMachine:
    machine: Machine
    source: str
    code: object
    max_fused_cycles: int

    def build(self, s: list, m, in_, out_, undefined) -> BoundFunctions:
        """Bind to one emulator; ``undefined(address)`` counts an undefined opcode that a fused
        decode group found in a later word (after its shared steps had run)."""
        namespace: dict = {}
        exec(self.code, namespace)
        return BoundFunctions(*namespace["build"](s, m, in_, out_, Fallback, undefined))


_cache: dict[int, CompiledMachine] = {}


def compile_machine(machine: Machine) -> CompiledMachine:
    """Compile once per machine object; later calls return the cached result.

    The cache entry goes when the machine object does.
    """
    key = id(machine)
    cached = _cache.get(key)
    if cached is not None and cached.machine is machine:
        return cached
    source, max_cycles = _MachineCompiler(machine).source()
    code = compile_generated(source, machine.name, f"{machine.name}_generated")
    compiled = CompiledMachine(machine, source, code, max_cycles)
    _cache[key] = compiled
    weakref.finalize(machine, _cache.pop, key, None)
    return compiled


# ----- state access: list slots (stepping) or cached locals (fused) ---------

class _SlotAccess:
    """Every read and write goes straight to ``s[slot]``."""

    def __init__(self, out: Emitter):
        self.out = out

    def read(self, slot: int, name: str) -> str:
        return f"s[{slot}]"

    def write(self, slot: int, name: str, value: str) -> None:
        self.out.line(f"s[{slot}] = {value}")

    def forget(self, slots) -> None:
        pass

    def flush(self, slots) -> None:
        pass


class _LocalAccess:
    """Registers live in locals for the whole fused function, written back at the end."""

    def __init__(self, out: Emitter, machine: Machine):
        self.out = out
        self.first_flag_slot = len(machine.registers)
        self.loaded: dict[int, str] = {}
        self.dirty: dict[int, str] = {}

    def local(self, slot: int, name: str) -> str:
        return f"flag_{name}" if slot >= self.first_flag_slot else f"reg_{name}"

    def read(self, slot: int, name: str) -> str:
        if slot not in self.loaded:
            self.loaded[slot] = self.local(slot, name)
            self.out.line(f"{self.loaded[slot]} = s[{slot}]")
        return self.loaded[slot]

    def write(self, slot: int, name: str, value: str) -> None:
        local = self.local(slot, name)
        self.out.line(f"{local} = {value}")
        self.loaded[slot] = local
        self.dirty[slot] = local

    def flush(self, slots) -> None:
        """Before a register is reached by a run-time index, put cached values back."""
        for slot in sorted(slots):
            if slot in self.dirty:
                self.out.line(f"s[{slot}] = {self.dirty.pop(slot)}")

    def forget(self, slots) -> None:
        """After a write by run-time index, cached copies are stale."""
        for slot in slots:
            self.loaded.pop(slot, None)
            self.dirty.pop(slot, None)

    def write_back(self) -> None:
        for slot in sorted(self.dirty):
            self.out.line(f"s[{slot}] = {self.dirty[slot]}")
        self.dirty.clear()


# ----- the statement translator ---------------------------------------------

class _StepTranslator:
    """Turns IR statements of one instruction into lines, through an access policy.

    ``fixed`` maps register fields whose value is known at compile time (the
    fused back end's first-word fields) to their register index.
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

    def kind_slots(self, field_name: str) -> list[int]:
        return [self.reg_slots[r] for r in self.fields[field_name].kind.registers]

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

    def dynamic_slot(self, field_name: str, writing: bool = False) -> str:
        """The slot a register field chooses at run time; values naming no register
        reach the undriven slot (reads 0) or, for writes, the one after it."""
        slots = self.kind_slots(field_name)
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
                    return self.register(fld.kind.registers[self.fixed[name]])
                slots = self.kind_slots(name)
                self.access.flush(slots)
                return f"s[{self.dynamic_slot(name)}]"
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
                reg = fld.kind.registers[self.fixed[name]]
                if width > machine.registers[reg].width:
                    value = f"{value} & {(1 << machine.registers[reg].width) - 1:#x}"
                self.access.write(self.reg_slots[reg], reg, value)
            else:
                narrowest = min(machine.registers[r].width for r in fld.kind.registers)
                if width > narrowest:
                    value = f"{value} & {(1 << name_width(name, machine, self.fields)) - 1:#x}"
                slots = self.kind_slots(name)
                self.access.flush(slots)
                self.out.line(f"s[{self.dynamic_slot(name, writing=True)}] = {value}")
                self.access.forget(slots)
            return
        if name in machine.groups:
            if not value.isidentifier():
                temp = self.out.fresh("v")
                self.out.line(f"{temp} = {value}")
                value = temp
            shift = machine.groups[name].width
            for part in machine.groups[name].parts:
                part_width = machine.registers[part].width
                shift -= part_width
                shifted = f"{value} >> {shift}" if shift else value
                self.access.write(self.reg_slots[part], part, f"{shifted} & {(1 << part_width) - 1:#x}")
            return
        self.access.write(self.reg_slots[name], name, value)

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

    def name_slots(name):
        if name in fields:
            fld = fields[name]
            if fld.kind.is_register:
                if name in translator.fixed:
                    return {fld.kind.registers[translator.fixed[name]]}
                return set(fld.kind.registers) | {translator.ins.holders[p.word] for p in fld.pieces}
            return {translator.ins.holders[p.word] for p in fld.pieces}
        if name in machine.groups:
            return set(machine.groups[name].parts)
        return {name}

    if writing:
        match node:
            case Assign(Name(name), _, flags):
                found |= name_slots(name) if name not in fields else (
                    {fields[name].kind.registers[translator.fixed[name]]} if name in translator.fixed
                    else set(fields[name].kind.registers))
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


# ----- whole-machine compiler ------------------------------------------------

class _MachineCompiler:
    def __init__(self, machine: Machine):
        self.machine = machine
        self.out = Emitter()
        self.used: set[str] = set()
        self.group_tables: dict[int, str] = {}
        """First member's index → the name of its decode group's table in the generated code."""

    def unique(self, name: str, ins: Instruction | None) -> str:
        if name in self.used and ins is not None:
            name = f"{name}_{ins.index}"
        self.used.add(name)
        return name

    def source(self) -> tuple[str, int]:
        machine, out = self.machine, self.out
        out.line(f'"""Generated by relaybench from {machine.path} — do not edit; edit the machine file."""')
        out.line()
        out.line("def build(s, m, in_, out_, Fallback, undefined_):")
        with out.indent():
            out.line('"""Return the micro-step, sequencing and fused functions bound to this state."""')
            fetch_names = [self.stepping_function(f"fetch_{i + 1}", step, None)
                           for i, step in enumerate(machine.fetch)]
            step_names, jump_names = [], []
            for ins in machine.instructions:
                names, jumps = [], []
                for k, step in enumerate(ins.steps):
                    number = len(machine.fetch) + k + 1
                    names.append(self.stepping_function(f"{_ident(ins)}_step_{number}", step, ins))
                    jumps.append(self.jump_function(f"{_ident(ins)}_after_{number}", step, ins, k)
                                 if step.jump else "None")
                step_names.append(names)
                jump_names.append(jumps)
            fused_by_word, max_cycles = self.fused_functions()
            self.fallback_function()
            peek = self.peek_expression()
            self.free_runners(peek)
            out.line()
            out.line(f"fetch_steps = ({', '.join(fetch_names)},)")
            for table, rows in (("instruction_steps", step_names), ("instruction_jumps", jump_names)):
                out.line(f"{table} = (")
                with out.indent():
                    for names in rows:
                        out.line(f"({''.join(n + ', ' for n in names)}),")
                out.line(")")
            out.line("fused = [")
            with out.indent():
                for row in range(0, len(fused_by_word), 4):
                    out.line(" ".join(f"{name}," for name in fused_by_word[row:row + 4]))
            out.line("]")
            out.line("return fetch_steps, instruction_steps, instruction_jumps, fused, run_free, run_free_watching")
        return out.source(), max_cycles

    def stepping_function(self, name: str, step: Step, ins: Instruction | None) -> str:
        out = self.out
        name = self.unique(name, ins)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(repr(step.text))
            translator = _StepTranslator(self.machine, out, _SlotAccess(out), ins)
            if step.drives_halt:
                out.line("halted = False")
            translator.step(step)
            if step.drives_halt:
                out.line("return halted")
        return name

    def jump_function(self, name: str, step: Step, ins: Instruction, own: int) -> str:
        """The sequencer's choice after a step with end/goto/wait: called before the step runs."""
        out = self.out
        name = self.unique(name, ins)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            translator = _StepTranslator(self.machine, out, _SlotAccess(out), ins)
            out.line(f"return {translator.next_step(step, own)}")
        return name

    def fused_functions(self):
        """One fused function per instruction and first-word register-field values (per first word
        for a decode group). Halting instructions and those with a loop are stepped instead."""
        machine = self.machine
        by_word = ["fallback"] * (1 << machine.data_bits)
        made: dict[tuple, str] = {}
        max_cycles = len(machine.fetch)
        for word, index in enumerate(machine.decode_table):
            if index < 0:
                continue
            group = machine.decode_groups.get(index)
            members = [machine.instructions[i] for i in (group.members if group else (index,))]
            if any(ins.drives_halt or ins.has_loop for ins in members):
                continue
            if group is not None:
                key = (index, word)
                if key not in made:
                    made[key] = self.fused_group(group, members, word)
            else:
                fixed = _first_word_fixed(members[0], word)
                key = (index, tuple(sorted(fixed.items())))
                if key not in made:
                    made[key] = self.fused_function(members[0], fixed)
            max_cycles = max([max_cycles] + [ins.cycles(machine).longest for ins in members])
            by_word[word] = made[key]
        return by_word, max_cycles

    def fused_function(self, ins: Instruction, fixed: dict[str, int]) -> str:
        machine, out = self.machine, self.out
        suffix = "".join(f"_{ins.fields[n].kind.registers[v]}" for n, v in sorted(fixed.items()))
        name = self.unique(f"run_{_ident(ins)}{suffix}", ins)
        cycles = ins.cycles(machine)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(f'"""{ins.display} — {cycles} cycle{"s" if str(cycles) != "1" else ""}"""')
            access = _LocalAccess(out, machine)
            for step in machine.fetch:
                _StepTranslator(machine, out, access, None).step(step)
            if not ins.has_jumps:
                self.fused_steps(ins, fixed, access, 0, counting=False)
                access.write_back()
                out.line(f"return {cycles.shortest}")
            else:
                out.line(f"c = {len(machine.fetch)}")
                self.fused_steps(ins, fixed, access, 0, counting=True)
                access.write_back()
                out.line("return c")
        return name

    def fused_group(self, group, members: list[Instruction], word: int) -> str:
        """Fetch, the shared steps, then a dispatch on the decoding words to each member's own steps."""
        machine, out = self.machine, self.out
        first = members[0]
        name = self.unique(f"run_group_{_ident(first)}_{word:x}", None)
        table = self.group_tables.get(first.index)
        if table is None:
            table = self.group_tables[first.index] = self.unique(f"decode_{_ident(first)}", None)
            out.line()
            out.line(f"{table} = {{{', '.join(f'{k}: {v}' for k, v in sorted(group.table.items()))}}}")
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(f'"""First word {word:#x}: {", ".join(i.display for i in members)}, decoded after '
                     f'step {len(machine.fetch) + group.decode_step + 1}"""')
            out.line(f"start = s[{machine.registers[machine.program_counter].slot}]")
            access = _LocalAccess(out, machine)
            for step in machine.fetch:
                _StepTranslator(machine, out, access, None).step(step)
            out.line(f"c = {len(machine.fetch)}")
            self.fused_steps(first, _first_word_fixed(first, word), access, 0, counting=True,
                             stop=group.decode_step + 1)
            access.write_back()
            access.loaded.clear()
            key = " | ".join(f"(s[{machine.registers[reg].slot}] & {mask:#x}) << {machine.data_bits * k}"
                             if k else f"(s[{machine.registers[reg].slot}] & {mask:#x})"
                             for k, (reg, mask) in enumerate(zip(group.holders, group.masks)))
            out.line(f"member = {table}.get({key}, -1)")
            branch = "if"
            for ins in members:
                if not ins.fixed[0][1] == word & ins.fixed[0][0]:
                    continue
                out.line(f"{branch} member == {ins.index}:")
                branch = "elif"
                with out.indent():
                    out.line(f"# {ins.display}: its own steps after the shared ones")
                    self.fused_steps(ins, _first_word_fixed(ins, word), access, group.decode_step + 1,
                                     counting=True)
                    access.write_back()
                    access.loaded.clear()
            out.line("else:")
            with out.indent():
                out.line("undefined_(start)")
            out.line("return c")
        return name

    def fused_steps(self, ins: Instruction, fixed, access, start: int, counting: bool, stop: int | None = None):
        """An instruction's own steps ``start``…``stop`` inline, with their sequencing.

        Without ``counting`` the steps run straight through (no jumps). With
        it, ``c`` counts the cycles run and ``at`` holds the next step once a
        step has jumped: every later step runs only ``if at == k`` (jumps in
        a fused instruction go forward: one with a loop is stepped), and is
        a block of its own for the register cache (written back at its end).
        """
        machine, out = self.machine, self.out
        guarded = False
        for k in range(start, len(ins.steps) if stop is None else stop):
            step = ins.steps[k]
            out.line(f"# {step.text}")
            translator = _StepTranslator(machine, out, access, ins, fixed)
            if not counting:
                translator.step(step)
                continue
            if guarded:
                out.line(f"if at == {k}:")
            with out.indent() if guarded else nullcontext():
                if step.jump is not None:
                    out.line(f"at = {translator.next_step(step, k)}")
                elif guarded:
                    out.line(f"at = {k + 1}")
                translator.step(step)
                out.line("c += 1")
                if guarded or step.jump is not None:
                    access.write_back()
                    access.loaded.clear()
            guarded = guarded or step.jump is not None

    def fallback_function(self):
        out = self.out
        out.line()
        out.line("def fallback():")
        with out.indent():
            out.line('"""Halting or undefined: the control unit steps this one."""')
            out.line("raise Fallback")

    def peek_expression(self) -> str:
        """The first word the fetch steps will load, as an expression of the state before them."""
        machine = self.machine
        env: dict[str, object] = {}
        for step in machine.fetch:
            updates = {}
            for st in step.statements:
                if isinstance(st, Assign) and isinstance(st.target, Name):
                    updates[st.target.name] = _substitute(st.value, env)
            env.update(updates)
        word = env[machine.instruction_register]
        text = _StepTranslator(machine, Emitter(), _SlotAccess(Emitter()), None).expr(word)
        return text

    def free_runners(self, peek: str):
        """The hot loops: nothing in them but dispatch, cycle and instruction counts."""
        out = self.out
        for name, watching in (("run_free", False), ("run_free_watching", True)):
            out.line()
            args = "limit, watch" if watching else "limit"
            out.line(f"def {name}({args}):")
            with out.indent():
                out.line('"""Run whole instructions while the cycle count stays at or below limit."""')
                out.line("cycles = instructions = 0")
                out.line("table = fused")
                out.line("try:")
                with out.indent():
                    out.line("while cycles <= limit:")
                    with out.indent():
                        out.line(f"cycles += table[{peek}]()")
                        out.line("instructions += 1")
                        if watching:
                            out.line("if watch(cycles, instructions):")
                            with out.indent():
                                out.line("return cycles, instructions, True")
                out.line("except Fallback:")
                with out.indent():
                    out.line("pass")
                out.line("return cycles, instructions, False")


def _first_word_fixed(ins: Instruction, word: int) -> dict[str, int]:
    """The register fields wholly in the first word, with the register index ``word`` gives them
    (values naming no register are left to the run-time index, which reaches the undriven slot)."""
    values = ins.decode([word] + [0] * (ins.word_count - 1))
    return {name: values[name] for name, fld in ins.fields.items()
            if fld.kind.is_register and all(p.word == 0 for p in fld.pieces)
            and values[name] < len(fld.kind.registers)}


def _substitute(node, env):
    """The expression with each name bound in ``env`` replaced by its value there."""
    if isinstance(node, Name):
        return env.get(node.name, node)
    return node.with_children(*(_substitute(part, env) for part in node.children()))


def _ident(ins: Instruction) -> str:
    """A Python name for an instruction form: ``ld rd, [x]`` → ``ld_rd_ix``."""
    parts = [ins.mnemonic]
    for op in ins.operands:
        text = op.text().replace("[", "i").replace("]", "")
        parts.append("".join(ch if ch.isalnum() else "_" for ch in text))
    return "_".join(parts)
