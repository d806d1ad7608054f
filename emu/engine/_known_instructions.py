"""One instruction translated with everything known at translation time: for blocks, and for
the fused instructions that check their stores.

Inside a block pc, the instruction register and the operand latches hold
literals, so every register field the words name is fixed and reads of the
block's own words become constants (``_BlockTranslator``); registers live in
locals (``_KnownAccess``). Each store is recorded, and ``_store_check``
tests the stored words against ``cmap``, the per-word count of translated
blocks covering them, after the instruction.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from functools import lru_cache

from ..description import Instruction, Machine
from ..description.notation import Mem
from ._emitter import Emitter
from ._line_gates import count_gates
from ._state_access import _LocalAccess
from ._step_translator import _StepTranslator

__all__ = ["_Context", "_KnownAccess", "_constant", "_store_check", "_translate_instruction"]

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
