"""Speed of the assembler (target: a 10,000-line program in under 1 s).

Run:  python tests/bench/bench_assembler.py [--lines N] [--machine NAME] [--repeat K]

The program is generated from the machine description's own instruction
forms (labels, forward jumps, data lines and comments mixed in), so the
benchmark runs on any machine. Prints the best of K runs.
"""

from __future__ import annotations

import argparse
import random
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import asm  # noqa: E402
from emu import load_machine  # noqa: E402

TARGET_S = 1.0
_WORDS_PER_LINE = 2.1
"""A little above the mean words of an instruction line (with its data lines) on ref8."""


def _filler(index: int, rng) -> str:
    """A line that takes no memory: a constant, a comment or a blank line."""
    kind = index % 3
    if kind == 0:
        return f"K{index} = COUNT * {rng.randint(1, 9)} + {rng.randint(0, 99)}"
    if kind == 1:
        return f"; note {index}: nothing is stored here"
    return ""


def generate(machine, lines: int, seed: int = 1) -> str:
    """A valid program of ``lines`` lines; address operands point at labels.

    When the machine's memory cannot hold that many instructions, lines that
    take no memory (comments, constants, blank lines) fill the gaps between
    them, as in a long, well-commented program.
    """
    rng = random.Random(seed)
    out = ["; generated benchmark program", "COUNT = 12"]
    labels = [f"l{i}" for i in range(lines // 10 + 1)]
    next_label = 0
    budget = machine.memory_words
    used = 0
    code_share = min(1.0, 0.9 * budget / (lines * _WORDS_PER_LINE))
    fillers = 0
    while len(out) < lines:
        while rng.random() > code_share and len(out) < lines - 1:
            fillers += 1
            out.append(_filler(fillers, rng))
        ins = rng.choice(machine.instructions)
        if used + ins.word_count + 4 > budget:
            break
        parts = []
        for pattern in ins.operands:
            if pattern.field is None:
                parts.append(pattern.before)
                continue
            kind = ins.fields[pattern.field].kind
            if kind.is_register:
                shown = rng.choice(kind.registers)
            elif kind.high >= machine.memory_words - 1 and kind.low == 0:
                shown = rng.choice(labels)
            else:
                shown = rng.choice([str(rng.randint(max(kind.low, 0), kind.high)), "COUNT", "lo($) & 7"])
            parts.append(f"{pattern.before}{shown}{pattern.after}")
        text = f"{ins.mnemonic} {', '.join(parts)}".strip()
        prefix = ""
        if len(out) % 10 == 0 and next_label < len(labels):
            prefix = f"{labels[next_label]}:"
            next_label += 1
        out.append(f"{prefix:<8}{text}" + ("   ; step" if len(out) % 7 == 0 else ""))
        used += ins.word_count
        if len(out) % 50 == 0:
            out.append("        .byte 1, 2, 'z'")
            used += 3
    while next_label < len(labels):
        out.append(f"{labels[next_label]}:")
        next_label += 1
    return "\n".join(out) + "\n"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--lines", type=int, default=10_000)
    parser.add_argument("--machine", default="ref8")
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    machine = load_machine(args.machine)
    source = generate(machine, args.lines)
    line_count = source.count("\n")
    best = float("inf")
    for _ in range(args.repeat):
        started = time.perf_counter()
        program = asm.assemble_text(source, machine, filename="bench.asm")
        best = min(best, time.perf_counter() - started)
    words = sum(len(w) for _s, w in program.segments)
    verdict = "ok" if best < TARGET_S else "TOO SLOW"
    print(f"assembled {line_count} lines ({words} words) for {machine.name} in {best:.3f} s "
          f"best of {args.repeat}; target < {TARGET_S:.1f} s: {verdict}")
    return 0 if best < TARGET_S else 1


if __name__ == "__main__":
    sys.exit(main())
