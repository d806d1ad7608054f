"""The generated code around blocks: the dispatch loops, and fused instructions that check stores.

Both are compiled once per machine. The loops run a translated block where
one is in place and fits the budget, fused instructions elsewhere; once any
block exists, the fused instructions that write memory are swapped for
versions that check the per-word map of translated code after each store.
"""

from __future__ import annotations

from ..description import Instruction, Machine
from ..description.notation import Assign, Mem
from ._known_instructions import _Context, _KnownAccess, _store_check, _translate_instruction
from ._emitter import Emitter
from ._machine_compiler import _MachineCompiler

__all__ = ["checked_fused_source", "dispatcher_source", "writes_memory"]


def writes_memory(ins: Instruction) -> bool:
    return any(isinstance(st, Assign) and isinstance(st.target, Mem) for step in ins.steps for st in step.statements)


class _CheckedFusedCompiler(_MachineCompiler):
    """The fused back end's choice of forms, each store followed by the code-map check.

    Only forms that write memory get a function; the others stay as fused. With a
    ``TallyLayout`` each counts its gated lines (the dispatch loop counts its first word).
    """

    def __init__(self, machine: Machine, layout=None):
        super().__init__(machine)
        self.layout = layout

    def fused_group(self, group, members, word: int) -> str:
        """None: a decode group's checked form would be its plain fused function over again, and
        that one is bound to the emulator's count of undefined opcodes, which this build is not."""
        return "None"

    def fused_function(self, ins: Instruction, fixed: dict[str, int]) -> str:
        if not writes_memory(ins):
            return "None"
        machine, out = self.machine, self.out
        name = self.form_name("checked", ins, fixed)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(f'"""{ins.display}, stores checked against translated code"""')
            access = _KnownAccess(out, machine)
            context = _Context()
            _translate_instruction(machine, out, access, ins, context, preset=fixed, layout=self.layout)
            _store_check(out, context)
            access.write_back()
            out.line(f"return {ins.cycles(machine).shortest}")
        return name

    def checked_source(self) -> str:
        out = self.out
        counters = "" if self.layout is None else ", sites_"
        out.line(f"def build(s, m, in_, out_, cmap, invalidate{counters}):")
        with out.indent():
            by_word, _max_cycles = self.fused_functions()
            out.line()
            names = ", ".join("None" if n == "fallback" else n for n in by_word)
            out.line(f"return [{names}]")
        return out.source()


def checked_fused_source(machine: Machine, layout=None) -> str:
    """Source of ``build(...)`` returning, per first word, a checked fused function or None."""
    return _CheckedFusedCompiler(machine, layout).checked_source()


# ----- the dispatch loop ------------------------------------------------------------

def dispatcher_source(machine: Machine, max_fused: int, counting: bool = False) -> str:
    """The hot loops with blocks: a block where one is translated and fits, else fused instructions.

    A block runs only when its full cycle count fits the budget, a fused
    instruction only when the longest one does, so no run passes the point
    where the stepping path would have stopped. Fused instructions run on
    until one that may change pc (``ends``); only the pc reached then, or
    after a block, is looked up and counted, so straight-line code that is
    not hot costs one table look-up per instruction more than the fused path.
    ``hits[pc]`` is negative where a block is in place; ``table[pc]`` then
    holds (block, its longest cycles, whether a watched run must stop after it).
    ``counting``: each fused instruction's first word is counted into ``words_``
    (for wear; a counting block counts its own).
    """
    pc = machine.registers[machine.program_counter].slot
    peek = _MachineCompiler(machine).peek_expression()
    out = Emitter()
    out.line(f"def build(s, m, table, hits, ends, translate, Fallback{', words_' if counting else ''}):")
    with out.indent():
        for name, watching in (("run_blocks", False), ("run_blocks_watching", True)):
            arguments = ", stops, noticed, changed" if watching else ""
            out.line(f"def {name}(budget, points, fused, threshold{arguments}):")
            with out.indent():
                _dispatch_loop(out, pc, peek, max_fused, watching, counting)
        out.line("return run_blocks, run_blocks_watching")
    return out.source()


def _dispatch_loop(out: Emitter, pc: int, peek: str, max_fused: int, watching: bool, counting: bool) -> None:
    """The watching loop returns (hit) at a breakpoint, where ``stops`` says (see
    ``_lookout.stop_words``: after an instruction marked ``AFTER``, or ``WRITES`` once
    ``changed()``; before one marked ``BEFORE``), and after an instruction that set
    ``noticed[0]`` (a store to a watched word, or a watched slot changed in a watching
    block); a block made of an instruction marked ``AFTER`` carries the mark (``asks``)."""
    stop_before = ["if stops[word] & 2 and cycles:", "    return cycles, count, True"] if watching else []
    out.line("cycles = count = 0")
    out.line(f"limit = budget - {max_fused}")
    out.line("try:")
    with out.indent():
        out.line("while True:")
        with out.indent():
            out.line(f"pc = s[{pc}]")
            if watching:
                out.line(f"word = {peek}")
                for line in stop_before:
                    out.line(line)
            out.line("hit = hits[pc]")
            out.line("if hit < 0:")
            with out.indent():
                out.line("block, most, asks = table[pc]")
                out.line("room = budget - cycles")
                out.line("if most <= room:")
                with out.indent():
                    out.line("done, ran = block(room)")
                    out.line("cycles += done")
                    out.line("count += ran")
                    if watching:
                        out.line(f"if asks & 1 or noticed[0] or s[{pc}] in points:")
                        out.line("    return cycles, count, True")
                    out.line("continue")
            out.line("else:")
            with out.indent():
                out.line("hit += 1")
                out.line("hits[pc] = hit")
                out.line("if hit == threshold:")
                with out.indent():
                    out.line("fused = translate(pc)")
                    out.line("continue")
            out.line("while True:")
            with out.indent():
                out.line("if cycles > limit:")
                out.line("    return cycles, count, False")
                out.line(f"word = {peek}")
                for line in stop_before:
                    out.line(line)
                out.line("cycles += fused[word]()")
                if counting:
                    out.line("words_[word] += 1")
                out.line("count += 1")
                if watching:
                    out.line("stop = stops[word]")
                    out.line(f"if stop & 1 or stop & 4 and changed() or noticed[0] or s[{pc}] in points:")
                    out.line("    return cycles, count, True")
                out.line("if ends[word]:")
                out.line("    break")
    out.line("except Fallback:")
    out.line("    pass")
    out.line("return cycles, count, False")
