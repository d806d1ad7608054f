"""A shrunk failing example in the builder's terms: listing, panel actions, expected, happened.

The program is shown as the disassembler lists it (addresses, words,
instructions), each panel action at the cycle and phase where it was
applied, then what the property expected and what the machine did, and
the command line that repeats the same search.
"""

from __future__ import annotations

import asm

from ..formatting import count_text

from ._property_runner import PropertyResult

__all__ = ["failure_lines", "failure_json", "reproduce_command"]


def reproduce_command(machine_arg: str, seed: int, examples: int) -> str:
    return f"relaybench check --machine {machine_arg} --seed {seed} --examples {examples}"


def _actions(result: PropertyResult, machine) -> list[dict]:
    """The panel actions: where each was applied, and those the failure came before."""
    example = result.example
    applied = [{"action": action, "cycle": cycle, "phase": phase, "frozen": frozen, "reached": True}
               for action, cycle, phase, frozen in example.trail]
    for planned in example.schedule[len(applied):]:
        applied.append({"action": planned.action, "cycle": planned.cycle,
                        "phase": machine.phases[planned.phase].name, "frozen": None, "reached": False})
    return applied


def _where(failure) -> str:
    return f" (at cycle {failure.cycle}, phase {failure.phase})" if failure.cycle is not None else ""


def failure_lines(result: PropertyResult, machine, reproduce: str, indent: str = "      ") -> list[str]:
    example, failure = result.example, result.failure
    lines = [f"{indent}program ({count_text(len(example.words), 'word')}):"]
    lines += [f"{indent}  {line.strip()}" for line in asm.disassemble(machine, example.words, 0)]
    actions = _actions(result, machine)
    if "tail" in example.counts:
        lines.append(f"{indent}panel actions:" if actions else f"{indent}panel actions: none")
        for act in actions:
            note = " (clock frozen)" if act["frozen"] else ""
            if not act["reached"]:
                note = " (not reached: the failure came first)"
            lines.append(f"{indent}  cycle {act['cycle']}, phase {act['phase']}: {act['action']}{note}")
    lines.append(f"{indent}{result.prop.procedure(example)}")
    lines.append(f"{indent}expected: {failure.expected}")
    lines.append(f"{indent}happened: {failure.happened}{_where(failure)}")
    lines.append(f"{indent}reproduce: {reproduce}")
    return lines


def failure_json(result: PropertyResult, machine, reproduce: str) -> dict:
    example, failure = result.example, result.failure
    return {
        "words": list(example.words),
        "listing": [line.strip() for line in asm.disassemble(machine, example.words, 0)],
        "panel_actions": _actions(result, machine),
        "procedure": result.prop.procedure(example),
        "expected": failure.expected, "happened": failure.happened,
        "cycle": failure.cycle, "phase": failure.phase,
        "reproduce": reproduce,
    }
