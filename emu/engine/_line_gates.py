"""Which control lines a micro-step drives in the present state.

A step drives its plain lines on every pulse, and each gated line
(``ld-pc if z`` in the machine file) only when its condition holds on the
state before the step. The conditions are compiled from the description
once per machine, through the same statement translator as the steps, so a
gate reads flags, registers and fields exactly as the step's own choices
do. A machine without gated lines compiles nothing here.
"""

from __future__ import annotations

import weakref

from ..description import Machine, Step
from ._emitter import Emitter, compile_generated
from ._naming import _ident
from ._state_access import _SlotAccess
from ._step_translator import _StepTranslator

__all__ = ["LineGates", "TallyLayout", "count_gates", "gated_steps", "per_machine"]


def gated_steps(machine: Machine):
    """(place, step, instruction or None) of every step with gated lines; place is (instruction
    index, step index), the instruction index -1 for a fetch step."""
    for j, step in enumerate(machine.fetch):
        if step.gated_lines:
            yield (-1, j), step, None
    for ins in machine.instructions:
        for k, step in enumerate(ins.steps):
            if step.gated_lines:
                yield (ins.index, k), step, ins


class TallyLayout:
    """Where generated code that counts lines for wear puts each count: ``sites_[n]`` for each
    own step of an instruction (counted where a fused function's steps vary) and each gated line,
    ``words_[w]`` for each run of first word ``w``'s fused function or of its instruction in a block."""

    def __init__(self, machine: Machine):
        self.step_site: dict[tuple[int, int], int] = {}
        for ins in machine.instructions:
            for k in range(len(ins.steps)):
                self.step_site[(ins.index, k)] = len(self.step_site)
        self.gate_site: dict[tuple[tuple[int, int], str], int] = {}
        for place, step, _ins in gated_steps(machine):
            for line in step.gated_lines:
                self.gate_site[(place, line.name)] = len(self.step_site) + len(self.gate_site)
        self.size = len(self.step_site) + len(self.gate_site)
        self.word_lines = [self._word_lines(machine, index) for index in machine.decode_table]

    @staticmethod
    def _word_lines(machine: Machine, index: int) -> tuple[str, ...]:
        """The plain lines one run of a first word's instruction drives for sure: the fetch's,
        and all of its own when its steps run straight through (no jumps, no decode group)."""
        lines = [line for step in machine.fetch for line in step.control_lines]
        if index >= 0 and index not in machine.decode_groups and not machine.instructions[index].has_jumps:
            lines += [line for step in machine.instructions[index].steps for line in step.control_lines]
        return tuple(lines)


def count_gates(out: Emitter, translator: _StepTranslator, step: Step, place: tuple[int, int],
                layout: TallyLayout, counted: bool = False) -> None:
    """Count each gated line of ``step`` whose condition holds, before the step's statements run;
    ``counted``: the step itself too (one a fused function does not take on every run)."""
    if counted:
        out.line(f"sites_[{layout.step_site[place]}] += 1")
    for line in step.gated_lines:
        out.line(f"if {translator.condition(line.condition)}:")
        out.line(f"    sites_[{layout.gate_site[(place, line.name)]}] += 1")


def per_machine(make):
    """``make(machine)`` computed once per machine object, and forgotten with it."""
    cache: dict[int, tuple[Machine, object]] = {}

    def cached(machine: Machine):
        key = id(machine)
        hit = cache.get(key)
        if hit is not None and hit[0] is machine:
            return hit[1]
        value = make(machine)
        cache[key] = (machine, value)
        weakref.finalize(machine, cache.pop, key, None)
        return value
    return cached


@per_machine
def _gates_code(machine: Machine):
    """One function per step with gated lines, returning the names of those that fire."""
    out = Emitter()
    out.line("def build(s, m):")
    places = []
    with out.indent():
        for place, step, ins in gated_steps(machine):
            name = f"gates_{'fetch' if ins is None else _ident(ins)}_{place[0]}_{place[1]}"
            places.append((place, name))
            out.line(f"def {name}():")
            with out.indent():
                out.line(repr(step.text))
                translator = _StepTranslator(machine, out, _SlotAccess(out), ins)
                out.line("fired = ()")
                for line in step.gated_lines:
                    out.line(f"if {translator.condition(line.condition)}:")
                    out.line(f"    fired += ({line.name!r},)")
                out.line("return fired")
        out.line(f"return {{{', '.join(f'{place}: {name}' for place, name in places)}}}")
    return compile_generated(out.source(), machine.name, f"{machine.name}_line_gates") if places else None


class LineGates:
    """The lines each step of one emulator's machine drives, read from that emulator's state."""

    def __init__(self, machine: Machine, s: list, memory):
        self.machine = machine
        code = _gates_code(machine)
        namespace: dict = {}
        if code is not None:
            exec(code, namespace)
        self.gates = namespace["build"](s, memory) if code is not None else {}

    def step(self, index: int, step: int) -> Step:
        machine = self.machine
        return machine.fetch[step] if index < 0 else machine.instructions[index].steps[step]

    def driven(self, index: int, step: int) -> tuple[str, ...]:
        """The lines step ``step`` of instruction ``index`` (-1: the fetch) drives now."""
        lines = self.step(index, step).control_lines
        gate = self.gates.get((index, step))
        return lines if gate is None else lines + gate()
