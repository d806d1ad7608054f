"""Straight-line blocks of instructions → one Python function each.

A block starts at a known pc and runs consecutive instructions whose words
are known at translation time, so the translator propagates constants:
pc, the instruction register and the operand latches are literals, every
register field is fixed, and CPython's own constant folding does the rest.
Registers live in locals for the whole block and are written back once, at
the end. Dead assignments (flag values a later instruction overwrites
before anything reads them, temporaries of dropped flags) are removed from
the function's syntax tree before it is compiled.

Every memory write is checked against ``cmap``, the per-word count of
translated blocks covering that word; a hit calls ``invalidate``, and when
the word belongs to a later instruction of the running block, the block
leaves right after the current instruction, with the state written back
and the cycles and instructions run so far.

The same statement translator as the stepping and fused back ends does
the work (``_StepTranslator`` with a local-variable access policy), so a
block cannot drift from them; this module only adds what is known.
"""

from __future__ import annotations

import ast
import re
from dataclasses import dataclass, field

from ..description import Instruction, Machine
from ..description.notation import Assign, Mem, walk
from ._emitter import Emitter
from ._microstep_compiler import _ident, _LocalAccess, _MachineCompiler, _StepTranslator

__all__ = ["BlockPlan", "checked_fused_source", "dispatcher_source", "falls_through", "translate_block"]

_NUMBER = re.compile(r"\b0[xXbBoO][0-9a-fA-F_]+\b|\b\d+\b")
_NAME_START = re.compile(r"[A-Za-z_]")


def _constant(text: str) -> int | None:
    """The value of an expression text that names nothing (a literal folded), else None."""
    if text.isdigit():
        return int(text)
    if _NAME_START.search(_NUMBER.sub("", text)):
        return None
    try:
        return int(eval(text, {"__builtins__": {}}))  # only digits, operators and brackets reach here
    except (SyntaxError, TypeError, ValueError, ZeroDivisionError):
        return None


class _KnownAccess(_LocalAccess):
    """Locals for registers, as in fused functions, plus slots whose value is a known constant."""

    def __init__(self, out: Emitter, machine: Machine, known: dict[int, int] | None = None):
        super().__init__(out, machine)
        self.known: dict[int, int] = dict(known or {})
        self.known_dirty: set[int] = set()

    def read(self, slot: int, name: str) -> str:
        if slot in self.known:
            return str(self.known[slot])
        return super().read(slot, name)

    def write(self, slot: int, name: str, value: str) -> None:
        constant = _constant(value)
        if constant is not None:
            self.known[slot] = constant
            self.known_dirty.add(slot)
            self.loaded.pop(slot, None)
            self.dirty.pop(slot, None)
            return
        self.known.pop(slot, None)
        self.known_dirty.discard(slot)
        super().write(slot, name, value)

    def flush(self, slots) -> None:
        super().flush(slots)
        for slot in sorted(slots):
            if slot in self.known_dirty:
                self.out.line(f"s[{slot}] = {self.known[slot]}")
                self.known_dirty.discard(slot)

    def forget(self, slots) -> None:
        super().forget(slots)
        for slot in slots:
            self.known.pop(slot, None)
            self.known_dirty.discard(slot)

    def emit_write_back(self) -> None:
        """Put every changed slot back, leaving the bookkeeping as it is (side exits use it too)."""
        values = {slot: self.dirty[slot] for slot in self.dirty}
        values.update({slot: str(self.known[slot]) for slot in self.known_dirty})
        for slot in sorted(values):
            self.out.line(f"s[{slot}] = {values[slot]}")


@dataclass
class _Context:
    """What one translation knows about memory: the block's own words, and stores made so far."""
    code: dict[int, int] = field(default_factory=dict)
    bake: bool = True
    stores: list[str] = field(default_factory=list)


class _BlockTranslator(_StepTranslator):
    """Reads of the block's own words become literals; writes to memory are recorded for checking."""

    def __init__(self, machine, out, access, ins, fixed, context: _Context):
        super().__init__(machine, out, access, ins, fixed)
        self.context = context

    def expr(self, node) -> str:
        if isinstance(node, Mem):
            address = self.address(node.address)
            constant = _constant(address)
            if constant is None:
                return f"m[{address}]"
            word = self.context.code.get(constant) if self.context.bake else None
            return str(word) if word is not None else f"m[{constant}]"
        return super().expr(node)

    def assign(self, target, value: str, width: int) -> None:
        if not isinstance(target, Mem):
            super().assign(target, value, width)
            return
        machine = self.machine
        if width > machine.data_bits:
            value = f"{value} & {machine.data_mask:#x}"
        address = self.address(target.address)
        constant = _constant(address)
        if constant is not None:
            address = str(constant)
        else:
            temp = self.out.fresh("a")
            self.out.line(f"{temp} = {address}")
            address = temp
        self.out.line(f"m[{address}] = {value}")
        self.context.stores.append(address)
        self.context.bake = False    # later steps of this instruction read memory as it now is


def _fixed_fields(machine, ins: Instruction, access: _KnownAccess, preset: dict[str, int]) -> dict[str, int]:
    """Register fields whose words are known now, with the register index each names."""
    fixed = dict(preset)
    slots = {name: reg.slot for name, reg in machine.registers.items()}
    probe = _StepTranslator(machine, Emitter(), access, ins)
    for name, fld in ins.fields.items():
        if name in fixed or not fld.kind.is_register:
            continue
        if all(slots[ins.holders[p.word]] in access.known for p in fld.pieces):
            index = _constant(probe.field_value(name))
            if index is not None and index < len(fld.kind.registers):
                fixed[name] = index
    return fixed


def _translate_instruction(machine, out, access, ins, context, preset=None) -> None:
    for step in machine.fetch:
        _BlockTranslator(machine, out, access, None, {}, context).step(step)
    for step in ins.steps:
        out.line(f"# {step.text}")
        fixed = _fixed_fields(machine, ins, access, preset or {})
        _BlockTranslator(machine, out, access, ins, fixed, context).step(step)


def _store_check(out: Emitter, context: _Context, exit_lines=None) -> None:
    """After an instruction that wrote memory: invalidate translated words it hit."""
    if not context.stores:
        return
    addresses = ", ".join(context.stores) + ","
    out.line(f"if {' or '.join(f'cmap[{a}]' for a in context.stores)}:")
    with out.indent():
        if exit_lines is None:
            out.line(f"invalidate(({addresses}), 0, 0)")
        else:
            low, emit_exit = exit_lines
            out.line(f"if invalidate(({addresses}), {low}, END):")
            with out.indent():
                emit_exit()
    context.stores.clear()
    context.bake = True


# ----- which instruction forms end a block --------------------------------

def falls_through(machine: Machine, ins: Instruction) -> bool:
    """Whether the form leaves pc at the next instruction whatever its operands and flags say.

    Translated once per form with pc known and nothing else: a pc that is
    still a constant, one form's length on, is the fetch's increment alone.
    """
    pc_slot = machine.registers[machine.program_counter].slot
    start = 0x10 % machine.memory_words
    access = _KnownAccess(Emitter(), machine, {pc_slot: start})
    _translate_instruction(machine, access.out, access, ins, _Context())
    return access.known.get(pc_slot) == start + ins.word_count


# ----- one block --------------------------------------------------------------

@dataclass(frozen=True)
class BlockPlan:
    """The instructions of a block: where it starts, its words, and each instruction's place."""
    start: int
    words: tuple[int, ...]
    instructions: tuple[tuple[int, Instruction], ...]   # (address, form)

    @property
    def end(self) -> int:
        return self.start + len(self.words)

    def cycles(self, machine) -> int:
        return sum(ins.cycles(machine) for _address, ins in self.instructions)


def translate_block(machine: Machine, plan: BlockPlan, filename: str):
    """Compile the block: a code object defining ``build(s, m, in_, out_, cmap, invalidate)``."""
    pc_slot = machine.registers[machine.program_counter].slot
    out = Emitter()
    out.line("def build(s, m, in_, out_, cmap, invalidate):")
    with out.indent():
        out.line("def block():")
        with out.indent():
            out.line(f'"""{len(plan.instructions)} instructions at {plan.start:#x}, {plan.cycles(machine)} cycles"""')
            access = _KnownAccess(out, machine, {pc_slot: plan.start})
            context = _Context(code=dict(zip(range(plan.start, plan.end), plan.words)))
            cycles = 0
            for count, (address, ins) in enumerate(plan.instructions, start=1):
                out.line(f"# {address:#x}: {ins.display}")
                _translate_instruction(machine, out, access, ins, context)
                cycles += ins.cycles(machine)

                def side_exit(cycles=cycles, count=count):
                    access.emit_write_back()
                    out.line(f"return {cycles}, {count}")
                _store_check(out, context, (address + ins.word_count, side_exit))
            access.emit_write_back()
            out.line(f"return {cycles}, {len(plan.instructions)}")
        out.line("return block")
    source = out.source().replace(", END):", f", {plan.end}):")
    tree = ast.parse(source, filename)
    block = tree.body[0].body[0]
    block.body = _without_dead_assignments(block.body)
    return source, compile(tree, filename, "exec")


def _without_dead_assignments(body: list) -> list:
    """Drop assignments to locals that nothing reads afterwards (straight-line code, pure values).

    Walking backwards with the set of names read later: an assignment to a
    name outside that set, whose value calls nothing, changes nothing.
    """
    live: set[str] = set()
    kept = []
    for statement in reversed(body):
        nodes = list(ast.walk(statement))
        reads = {n.id for n in nodes if isinstance(n, ast.Name) and isinstance(n.ctx, ast.Load)}
        pure = not any(isinstance(n, ast.Call) for n in nodes)
        if isinstance(statement, ast.Assign) and len(statement.targets) == 1 \
                and isinstance(statement.targets[0], ast.Name):
            target = statement.targets[0].id
            if pure and target not in live:
                continue
            live.discard(target)
        elif isinstance(statement, ast.AugAssign) and isinstance(statement.target, ast.Name):
            if pure and statement.target.id not in live:
                continue
            reads.add(statement.target.id)
        live |= reads
        kept.append(statement)
    return kept[::-1]


# ----- fused instructions that check their stores ------------------------------

def _writes_memory(ins: Instruction) -> bool:
    return any(isinstance(node, Assign) and isinstance(node.target, Mem)
               for step in ins.steps for st in step.statements for node in walk(st))


class _CheckedFusedCompiler(_MachineCompiler):
    """The fused back end's choice of forms, each store followed by the code-map check.

    Only forms that write memory get a function; the others stay as fused.
    """

    def fused_function(self, ins: Instruction, fixed: dict[str, int]) -> str:
        if not _writes_memory(ins):
            return "None"
        machine, out = self.machine, self.out
        suffix = "".join(f"_{ins.fields[n].kind.registers[v]}" for n, v in sorted(fixed.items()))
        name = self.unique(f"checked_{_ident(ins)}{suffix}", ins)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(f'"""{ins.display}, stores checked against translated code"""')
            access = _KnownAccess(out, machine)
            context = _Context()
            _translate_instruction(machine, out, access, ins, context, preset=fixed)
            _store_check(out, context)
            access.write_back()
            out.line(f"return {ins.cycles(machine)}")
        return name

    def checked_source(self) -> str:
        out = self.out
        out.line("def build(s, m, in_, out_, cmap, invalidate):")
        with out.indent():
            by_word, _max_cycles = self.fused_functions()
            out.line()
            names = ", ".join("None" if n == "fallback" else n for n in by_word)
            out.line(f"return [{names}]")
        return out.source()


def checked_fused_source(machine: Machine) -> str:
    """Source of ``build(...)`` returning, per first word, a checked fused function or None."""
    return _CheckedFusedCompiler(machine).checked_source()


# ----- the dispatch loop ------------------------------------------------------------

def dispatcher_source(machine: Machine, max_fused: int) -> str:
    """The hot loop with blocks: a block where one is translated and fits, else one fused instruction.

    A block runs only when its full cycle count fits the budget, a fused
    instruction only when the longest one does, so no run passes the point
    where the stepping path would have stopped. Every instruction boundary
    the loop reaches without a block counts a hit for its pc.
    """
    pc = machine.registers[machine.program_counter].slot
    peek = _MachineCompiler(machine).peek_expression()
    out = Emitter()
    out.line("def build(s, m, table, hits, checked, translate, Fallback):")
    with out.indent():
        out.line("def run_blocks(budget, points, fused, threshold):")
        with out.indent():
            out.line("cycles = count = 0")
            out.line(f"limit = budget - {max_fused}")
            out.line("try:")
            with out.indent():
                out.line("while True:")
                with out.indent():
                    out.line(f"pc = s[{pc}]")
                    out.line("entry = table[pc]")
                    out.line("if entry is not None:")
                    with out.indent():
                        out.line("block, most = entry")
                        out.line("if cycles + most <= budget:")
                        with out.indent():
                            out.line("done, ran = block()")
                            out.line("cycles += done")
                            out.line("count += ran")
                            out.line(f"if points and s[{pc}] in points:")
                            out.line("    return cycles, count, True")
                            out.line("continue")
                    out.line("else:")
                    with out.indent():
                        out.line("hit = hits[pc] + 1")
                        out.line("hits[pc] = hit")
                        out.line("if hit == threshold:")
                        with out.indent():
                            out.line("translate(pc)")
                            out.line("fused = checked")
                            out.line("continue")
                    out.line("if cycles > limit:")
                    out.line("    return cycles, count, False")
                    out.line(f"cycles += fused[{peek}]()")
                    out.line("count += 1")
                    out.line(f"if points and s[{pc}] in points:")
                    out.line("    return cycles, count, True")
            out.line("except Fallback:")
            out.line("    pass")
            out.line("return cycles, count, False")
        out.line("return run_blocks")
    return out.source()
