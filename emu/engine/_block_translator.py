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
the work (``_StepTranslator`` with a local-variable access policy, made to
use what is known in ``_known_instructions``), so a block cannot drift from
them; this module lays the instructions out: where the block goes on, loops,
skips forward or leaves.
"""

from __future__ import annotations

import ast
from contextlib import nullcontext
from dataclasses import dataclass

from ..description import Instruction, Machine
from ..description.notation import Assign, Choose, Name, Offset
from ._dead_assignments import without_dead_assignments
from ._emitter import Emitter
from ._known_instructions import _constant, _Context, _KnownAccess, _store_check, _translate_instruction

__all__ = ["BlockPlan", "block_source", "JUMP", "MAYBE", "NEXT", "successor"]

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
