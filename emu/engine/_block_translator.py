"""Straight-line blocks of instructions → one Python function each.

A block starts at a known pc and runs consecutive instructions, up to one
that jumps unconditionally; a conditional branch leaves the block when it
is taken (or loops, or skips forward inside it: see ``block_source``). The
instructions' words are known at translation time, so the translator
propagates constants: pc, the instruction register and the operand latches
are literals, every register field is fixed, and CPython's own constant
folding does the rest. Registers live in locals for the whole block and are
written back when it leaves. Dead assignments (flag values a later
instruction overwrites before anything reads them, temporaries of dropped
flags) are removed before the function is compiled (``_dead_assignments``).

Every memory write is checked against ``cmap``, the per-word count of
translated blocks covering that word; a hit calls ``invalidate``, and when
the word belongs to the running block, the block leaves right after the
current instruction, with the state written back and the cycles and
instructions run so far.

The same statement translator as the stepping and fused back ends does
the work (``_StepTranslator`` with a local-variable access policy), so a
block cannot drift from them; this module only adds what is known.
"""

from __future__ import annotations

import ast
import re
from contextlib import nullcontext
from functools import lru_cache
from dataclasses import dataclass, field

from ..description import Instruction, Machine
from ..description.notation import Assign, Choose, Mem, Name, Offset
from ._dead_assignments import without_dead_assignments
from ._emitter import Emitter
from ._line_gates import count_gates
from ._state_access import _LocalAccess
from ._step_translator import _StepTranslator

__all__ = ["BlockPlan", "block_source", "JUMP", "MAYBE", "NEXT", "successor"]

_NUMBER = re.compile(r"\b0[xXbBoO][0-9a-fA-F_]+\b|\b\d+\b")
_NAME_START = re.compile(r"[A-Za-z_]")


@lru_cache(maxsize=4096)
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
        self.texts: dict[int, str] = {}
        self.read_from_state: set[int] = set()
        self.written: set[int] = set()
        self.written_now: set[int] = set()
        """Slots written since the translator last cleared it (a watching block: by one instruction)."""
        self.dynamic = False

    def read(self, slot: int, name: str) -> str:
        if slot in self.known:
            return str(self.known[slot])
        if slot not in self.loaded:
            self.read_from_state.add(slot)
        return super().read(slot, name)

    def write(self, slot: int, name: str, value: str) -> None:
        self.written.add(slot)
        self.written_now.add(slot)
        constant = _constant(value)
        if constant is not None:
            self.known[slot] = constant
            self.known_dirty.add(slot)
            self.loaded.pop(slot, None)
            self.dirty.pop(slot, None)
            return
        self.known.pop(slot, None)
        self.known_dirty.discard(slot)
        self.texts[slot] = value
        super().write(slot, name, value)

    def flush(self, slots) -> None:
        self.dynamic = True
        super().flush(slots)
        for slot in sorted(slots):
            if slot in self.known_dirty:
                self.out.line(f"s[{slot}] = {self.known[slot]}")
                self.known_dirty.discard(slot)

    def forget(self, slots) -> None:
        self.dynamic = True
        self.written_now.update(slots)
        super().forget(slots)
        for slot in slots:
            self.known.pop(slot, None)
            self.known_dirty.discard(slot)

    def snapshot(self) -> tuple:
        return dict(self.known), set(self.known_dirty), dict(self.loaded), dict(self.dirty), dict(self.texts)

    def restore(self, saved: tuple) -> None:
        known, known_dirty, loaded, dirty, texts = saved
        self.known, self.known_dirty, self.loaded, self.dirty, self.texts = (
            dict(known), set(known_dirty), dict(loaded), dict(dirty), dict(texts))

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


def _translate_instruction(machine, out, access, ins, context, preset=None, layout=None) -> None:
    """The fetch and the instruction's steps; with a ``TallyLayout``, each gated line counted."""
    for j, step in enumerate(machine.fetch):
        translator = _BlockTranslator(machine, out, access, None, {}, context)
        if layout is not None:
            count_gates(out, translator, step, (-1, j), layout)
        translator.step(step)
    for k, step in enumerate(ins.steps):
        out.line(f"# {step.text}")
        fixed = _fixed_fields(machine, ins, access, preset or {})
        translator = _BlockTranslator(machine, out, access, ins, fixed, context)
        if layout is not None:
            count_gates(out, translator, step, (ins.index, k), layout)
        translator.step(step)


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


# ----- how an instruction form leaves pc ---------------------------------

NEXT, MAYBE, JUMP = "next", "maybe", "jump"


def successor(machine: Machine, ins: Instruction) -> str:
    """``NEXT`` when the form only ever increments pc, ``MAYBE`` when it chooses by a flag
    between a jump and pc as incremented (a block goes on past it, leaving when
    the jump is taken), ``JUMP`` for every other write of pc."""
    pc = machine.program_counter
    kind = NEXT
    for step in ins.steps:
        for st in step.statements:
            if not isinstance(st, Assign) or not isinstance(st.target, Name):
                continue
            name = st.target.name
            if name in machine.groups and pc in machine.groups[name].parts:
                return JUMP
            fld = ins.fields.get(name)
            if fld is not None and fld.kind.is_register and pc in machine.selectable_registers(fld.kind):
                return JUMP
            if name != pc or _only_pc(st.value, pc):
                continue
            if isinstance(st.value, Choose) and (_only_pc(st.value.if_true, pc) or _only_pc(st.value.if_false, pc)):
                kind = MAYBE
            else:
                return JUMP
    return kind


def _only_pc(node, pc: str) -> bool:
    """pc itself or pc counted on: the sequential successor."""
    return node == Name(pc) or (isinstance(node, Offset) and node.base == Name(pc) and node.delta > 0)


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
        return sum(ins.cycles(machine).shortest for _address, ins in self.instructions)


def block_source(machine: Machine, plan: BlockPlan, loops: bool = True, layout=None,
                 watched: tuple[int, ...] = ()) -> tuple[str, int]:
    """The block's source, defining ``build(s, m, in_, out_, cmap, invalidate)``, and the
    cycles of its longest way through (all its instructions). With a ``TallyLayout`` the
    block counts what it runs for wear: ``build`` takes ``sites_, words_`` besides.

    ``watched`` (state slots) makes a watching block, for a run that stops at
    the first change of a register or flag: after each instruction that may
    write one, it compares them with their values at entry and, at the first
    difference, sets ``noticed_[0]`` (a last argument of ``build``) and leaves
    with the state written back. A watched run stops at every change, so at
    entry they still hold the values its test compares with.

    A branch back to the block's own start (a conditional one, or the
    jump that ends the block) becomes a loop inside the function (when ``loops``: not when the start is a breakpoint,
    which must see every pass), and one forward to a later
    instruction of the block an ``if`` around the instructions it jumps
    over. Both need every register the block touches in its local from the
    start, so they are made in a second translation, once the first has
    found those registers (and only if no register is reached by a run-time
    index). The loop goes round again only while one more full pass fits
    the room the dispatcher gives.
    """
    first = _BlockWriter(machine, plan, carried=None, layout=layout, watched=watched)
    if first.access.dynamic or not (loops and first.loops_back or first.skips):
        return first.source(), first.cycles
    written = first.access.written - {first.pc_slot}
    carried = (first.access.read_from_state | written, written)
    second = _BlockWriter(machine, plan, carried=carried, loops=loops, layout=layout, watched=watched)
    return second.source(), second.cycles


class _BlockWriter:
    """One translation of a block, straight or with its loop."""

    def __init__(self, machine: Machine, plan: BlockPlan, carried: tuple[set[int], set[int]] | None,
                 loops: bool = True, layout=None, watched: tuple[int, ...] = ()):
        """``carried``: for the loop, the slots it keeps in locals and those of them it writes."""
        self.machine, self.plan, self.carried, self.loops = machine, plan, carried, loops
        self.layout, self.watched = layout, watched
        self.pc_slot = machine.registers[machine.program_counter].slot
        self.loops_back = False
        self.skips = False
        self.out = out = Emitter()
        self.access = access = _KnownAccess(out, machine, {self.pc_slot: plan.start})
        self.body_indent = " " * (12 if carried is not None else 8)
        kept, written = carried or ((), ())
        with out.indent(), out.indent():
            for slot in sorted(kept):
                access.read(slot, self._slot_name(slot))
                if slot in written:
                    access.dirty[slot] = access.loaded[slot]
            self.preloads = out.lines[:]
            out.lines.clear()
            with out.indent() if carried is not None else nullcontext():
                self.cycles = self._body()

    def _slot_name(self, slot: int) -> str:
        machine = self.machine
        names = {r.slot: n for n, r in machine.registers.items()} | {f.slot: n for n, f in machine.flags.items()}
        return names[slot]

    def _returning(self, cycles: int, count: int) -> str:
        if self.carried is None:
            return f"return {cycles}, {count}"
        return f"return done + {cycles}, ran + {count}"

    def _body(self) -> int:
        plan = self.plan
        self.context = _Context(code=dict(zip(range(plan.start, plan.end), plan.words)))
        self.starts = {address: index for index, (address, _ins) in enumerate(plan.instructions)}
        self.cycles_so_far = self.count_so_far = 0
        self._emit_range(0, len(plan.instructions))
        if self.access.known.get(self.pc_slot) == plan.start:
            self.loops_back = True          # it ends jumping back to its own start
            if self.carried is not None and self.loops:
                self._go_round(self.cycles_so_far, self.count_so_far)
        self.access.emit_write_back()
        self.out.line(self._returning(self.cycles_so_far, self.count_so_far))
        return self.cycles_so_far

    def _emit_range(self, first: int, last: int) -> bool:
        """Instructions ``first`` up to ``last``; False when the block ended inside them."""
        machine, plan, out, access, pc_slot = self.machine, self.plan, self.out, self.access, self.pc_slot
        index = first
        while index < last:
            address, ins = plan.instructions[index]
            out.line(f"# {address:#x}: {ins.display}")
            access.written_now.clear()
            _translate_instruction(machine, out, access, ins, self.context, layout=self.layout)
            if self.layout is not None:
                out.line(f"words_[{plan.words[address - plan.start]}] += 1")
            self.cycles_so_far += ins.cycles(machine).shortest
            self.count_so_far += 1
            cycles, count = self.cycles_so_far, self.count_so_far

            def leave(cycles=cycles, count=count):
                access.emit_write_back()
                out.line(self._returning(cycles, count))
            following = address + ins.word_count
            _store_check(out, self.context, (plan.start, lambda: (self._watch_test(), leave())))
            self._watch_test(leave)
            index += 1
            if access.known.get(pc_slot) == following:
                continue
            alternatives = _alternatives(access.texts.get(pc_slot)) if pc_slot not in access.known else ()
            if following not in alternatives:
                return False
            others = [a for a in alternatives if a != following]
            if not others:                  # a jump to the next instruction: no jump at all
                access.write(pc_slot, machine.program_counter, str(following))
                continue
            target, pc_local = others[0], access.loaded[pc_slot]
            skip_to = self.starts.get(target)
            if self.carried is not None and skip_to is not None and index < skip_to <= last:
                self.skips = True
                self._skip(pc_local, following, index, skip_to, target)
                index = skip_to
                continue
            if target == plan.start:
                self.loops_back = True
            elif skip_to is not None and skip_to > index:
                self.skips = True
            out.line(f"if {pc_local} != {following}:")
            with out.indent():
                if self.carried is not None and self.loops and target == plan.start:
                    self._go_round(cycles, count)
                leave()
            access.write(pc_slot, machine.program_counter, str(following))
        return True

    def _watch_test(self, leave=None) -> None:
        """In a watching block, after an instruction that wrote a watched slot: at a change, note
        it and ``leave()``; without ``leave``, only note it (a store is leaving the block)."""
        access = self.access
        tests = [f"{access.known.get(slot, access.loaded.get(slot, f's[{slot}]'))} != seen_{k}"
                 for k, slot in enumerate(self.watched) if slot in access.written_now]
        if not tests:
            return
        self.out.line(f"if {' or '.join(tests)}:")
        with self.out.indent():
            self.out.line("noticed_[0] = True")
            if leave is not None:
                leave()

    def _go_round(self, cycles: int, count: int) -> None:
        """Back to the block's start inside the function, while one more full pass fits the room."""
        out = self.out
        out.line(f"if done + {cycles} + MOST <= room:")
        with out.indent():
            self._as_locals(sorted(self.access.known_dirty - {self.pc_slot}))
            out.line(f"done += {cycles}")
            out.line(f"ran += {count}")
            out.line("continue")

    def _skip(self, pc_local: str, following: int, first: int, last: int, target: int) -> None:
        """A taken branch forward inside the block: the instructions it jumps over run under an ``if``.

        Both ways meet at the target with every slot whose known value
        differs between them in its local; the way that jumps counts the
        cycles and instructions it did not run off ``done`` and ``ran``.
        """
        access, out = self.access, self.out
        saved = access.snapshot()
        before = dict(access.known)
        cycles, count = self.cycles_so_far, self.count_so_far
        out.line(f"if {pc_local} == {following}:")
        with out.indent():
            access.write(self.pc_slot, self.machine.program_counter, str(following))
            ended = self._emit_range(first, last)
            after = dict(access.known)
            differing = sorted(slot for slot in set(before) | set(after)
                               if slot != self.pc_slot and before.get(slot) != after.get(slot))
            if ended:
                self._as_locals([slot for slot in differing if slot in after])
            else:                   # the block ends on this way: the other way alone goes on
                access.emit_write_back()
                out.line(self._returning(self.cycles_so_far, self.count_so_far))
                access.restore(saved)
                differing = []
        skipped_cycles, skipped_count = self.cycles_so_far - cycles, self.count_so_far - count
        out.line("else:")
        with out.indent():
            self._as_locals([slot for slot in differing if slot in before], before)
            out.line(f"done -= {skipped_cycles}")
            out.line(f"ran -= {skipped_count}")
        for slot in differing:
            local = access.local(slot, self._slot_name(slot))
            access.known.pop(slot, None)
            access.known_dirty.discard(slot)
            access.loaded[slot] = access.dirty[slot] = local
        access.write(self.pc_slot, self.machine.program_counter, str(target))

    def _as_locals(self, slots, known=None) -> None:
        """Put known values into their locals, where the loop's next pass or a meeting point expects them."""
        known = self.access.known if known is None else known
        for slot in slots:
            self.out.line(f"{self.access.local(slot, self._slot_name(slot))} = {known[slot]}")

    def source(self) -> str:
        plan, body = self.plan, self.out.lines
        counters = "" if self.layout is None else ", sites_, words_"
        watching = ", noticed_" if self.watched else ""
        lines = [f"def build(s, m, in_, out_, cmap, invalidate{counters}{watching}):",
                 "    def block(room):",
                 f'        """{len(plan.instructions)} instructions from {plan.start:#x}"""']
        seen = [f"        seen_{k} = s[{slot}]" for k, slot in enumerate(self.watched)]
        if self.carried is None:
            lines += without_dead_assignments(seen + body, self.body_indent)
        else:
            loop = without_dead_assignments(body, self.body_indent, looping=True)
            lines += without_dead_assignments(
                seen + self.preloads + ["        done = ran = 0", "        while True:"] + loop, " " * 8)
        lines.append("    return block")
        text = "\n".join(lines) + "\n"
        return text.replace(", END):", f", {plan.end}):").replace("MOST", str(self.cycles))


def _alternatives(text: str | None) -> tuple:
    """The constant alternatives of a pc value ``a if flag else b`` (after folding)."""
    if text is None:
        return ()
    node = ast.parse(text, mode="eval").body
    if not isinstance(node, ast.IfExp):
        return ()
    return _constant(ast.unparse(node.body)), _constant(ast.unparse(node.orelse))
