"""Fused functions: one per instruction and first-word register fields, with the free runners
that call them back to back.

A mixin of ``_MachineCompiler``: a fused function runs the fetch steps and all of an
instruction's steps in one call with registers in locals; an instruction that drives halt is
left to the control unit (its entry raises ``Fallback``), which runs it to the halting step
through its *halting* function when nothing watches the cycles in between.
"""

from __future__ import annotations

from contextlib import nullcontext

from ..description import Instruction
from ._emitter import Emitter
from ..description.notation import Assign, Name
from ._naming import _ident
from ._state_access import _LocalAccess, _SlotAccess
from ._step_translator import _StepTranslator

__all__ = ["_FusedFunctions", "halting_step"]


class _FusedFunctions:
    """The fused functions and free runners of ``_MachineCompiler``
    (which supplies ``out``, ``machine`` and ``unique``)."""

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

    def halting_entries(self) -> list[str]:
        """Per first word: the name of a function running a halting instruction up to the step
        that drives halt, or ``"None"`` (no halt there, or one the control unit must step)."""
        machine = self.machine
        by_word = ["None"] * (1 << machine.data_bits)
        made: dict[tuple, str] = {}
        for word, index in enumerate(machine.decode_table):
            if index < 0 or index in machine.decode_groups:
                continue
            ins = machine.instructions[index]
            last = halting_step(ins)
            if last is None:
                continue
            fixed = _first_word_fixed(ins, word)
            key = (index, tuple(sorted(fixed.items())))
            if key not in made:
                made[key] = self.halting_function(ins, fixed, last)
            by_word[word] = made[key]
        return by_word

    def halting_function(self, ins: Instruction, fixed: dict[str, int], last: int) -> str:
        """The fetch and the steps up to ``last`` (the one that drives halt) in one call, with
        registers in locals; returns whether halt was driven (a step may drive it on a condition)."""
        machine, out = self.machine, self.out
        name = self.form_name("halting", ins, fixed)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(f'"""{ins.display} — fetch and steps 1–{last + 1}, to the one that drives halt"""')
            out.line("halted = False")
            access = _LocalAccess(out, machine)
            self.fetch_steps(access)
            self.fused_steps(ins, fixed, access, 0, counting=False, stop=last + 1)
            access.write_back()
            out.line("return halted")
        return name

    def form_name(self, prefix: str, ins: Instruction, fixed: dict[str, int]) -> str:
        """A function's name for one form: ``prefix``, the instruction and the registers its
        first word fixes (``run_add_rd_imm_r1``), unique in the generated source."""
        registers = "".join(f"_{ins.fields[n].kind.registers[v]}" for n, v in sorted(fixed.items()))
        return self.unique(f"{prefix}_{_ident(ins)}{registers}", ins)

    def fused_function(self, ins: Instruction, fixed: dict[str, int]) -> str:
        machine, out = self.machine, self.out
        name = self.form_name("run", ins, fixed)
        cycles = ins.cycles(machine)
        out.line()
        out.line(f"def {name}():")
        with out.indent():
            out.line(f'"""{ins.display} — {cycles} cycle{"s" if str(cycles) != "1" else ""}"""')
            access = _LocalAccess(out, machine)
            self.fetch_steps(access)
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
            self.fetch_steps(access)
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
                self.count_step(translator, step, (ins.index, k), counted=False)
                translator.step(step)
                continue
            if guarded:
                out.line(f"if at == {k}:")
            with out.indent() if guarded else nullcontext():
                if step.jump is not None:
                    out.line(f"at = {translator.next_step(step, k)}")
                elif guarded:
                    out.line(f"at = {k + 1}")
                self.count_step(translator, step, (ins.index, k), counted=True)
                translator.step(step)
                out.line("c += 1")
                if guarded or step.jump is not None:
                    access.write_back()
                    access.loaded.clear()
            guarded = guarded or step.jump is not None

    def fetch_steps(self, access) -> None:
        """The fetch steps inline, at the start of a fused function."""
        for j, step in enumerate(self.machine.fetch):
            translator = _StepTranslator(self.machine, self.out, access, None)
            self.count_step(translator, step, (-1, j), counted=False)
            translator.step(step)

    def count_step(self, translator: _StepTranslator, step, place: tuple[int, int], counted: bool) -> None:
        """Where a fused function may count the step it is about to run (``place``: instruction
        index or -1 for the fetch, and step index); ``counted``: the step is not one every run
        of the function takes. Plain runs count nothing; ``_line_tally`` counts."""

    def call_fused(self, word: str) -> None:
        """The free runner's call of the next instruction's fused function; ``word``: the first
        word as an expression, or ``"word"`` where the loop already holds it in that local."""
        self.out.line(f"cycles += table[{word}]()")

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
        """The hot loops: nothing in them but dispatch, cycle and instruction counts.

        ``run_free_watching`` asks ``watch`` after every instruction;
        ``run_free_stopping`` returns at a breakpoint and where ``stops``
        (``_lookout.stop_words``) says: after an instruction marked ``AFTER``,
        or ``WRITES`` once ``changed()``; before one marked ``BEFORE`` (not
        where it started).
        """
        out = self.out
        pc = self.machine.registers[self.machine.program_counter].slot
        for name, args in (("run_free", "limit"), ("run_free_watching", "limit, watch"),
                           ("run_free_stopping", "limit, stops, points, changed")):
            out.line()
            out.line(f"def {name}({args}):")
            with out.indent():
                out.line('"""Run whole instructions while the cycle count stays at or below limit."""')
                out.line("cycles = instructions = 0")
                out.line("table = fused")
                out.line("try:")
                with out.indent():
                    out.line("while cycles <= limit:")
                    with out.indent():
                        if name == "run_free_stopping":
                            out.line(f"word = {peek}")
                            out.line("if stops[word] & 2 and cycles:")
                            out.line("    return cycles, instructions, True")
                            self.call_fused("word")
                        else:
                            self.call_fused(peek)
                        out.line("instructions += 1")
                        if name == "run_free_watching":
                            out.line("if watch(cycles, instructions):")
                            out.line("    return cycles, instructions, True")
                        elif name == "run_free_stopping":
                            out.line("stop = stops[word]")
                            out.line(f"if stop & 1 or stop & 4 and changed() or s[{pc}] in points:")
                            out.line("    return cycles, instructions, True")
                out.line("except Fallback:")
                with out.indent():
                    out.line("pass")
                out.line("return cycles, instructions, False")


def halting_step(ins: Instruction) -> int | None:
    """The index of the first step of ``ins`` that drives halt, when the steps up to it run in
    order (none of them jumps, the instruction decodes on its first word); else None."""
    if ins.decode_words != 1:
        return None
    for k, step in enumerate(ins.steps):
        if step.jump is not None:
            return None
        if step.drives_halt:
            return k
    return None


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
