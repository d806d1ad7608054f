"""Speed of the assembler, per line, from 1,000 to 100,000 lines.

Targets: 10,000 lines in under 1 s and 100,000 in under 3 s, with the time
per line flat: a long program must not cost more per line than a short one.

Run:  python tests/bench/bench_assembler.py [--lines N ...] [--machine NAME] [--repeat K]
                                            [--baseline TREE]

The program is generated from the machine description's own instruction
forms (labels, forward jumps, data lines and comments mixed in), so the
benchmark runs on any machine; past what the memory holds, lines that take
no memory fill in, in the same share at every size. Each size is assembled in a fresh process (the
``assemble_file`` call alone is timed, CPU and wall), the best of K. With
``--baseline TREE`` (another source tree, say ``git archive main | tar -x
-C /tmp/base``) the same files are assembled by that tree too, in turns with
this one, and the ratio of the CPU times is printed.
"""

from __future__ import annotations

import argparse
import os
import random
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from emu import load_machine  # noqa: E402

TARGETS_S = {10_000: 1.0, 100_000: 3.0}
"""Lines → the most seconds they may take (a size within 10 % of it counts)."""
_MEASURE = """
import sys, time, asm, emu
machine = emu.load_machine(sys.argv[2])
asm.assemble_text("nop\\n", machine)            # the parser is ready before the clock starts
cpu, wall = time.process_time(), time.perf_counter()
asm.assemble_file(sys.argv[1], machine)
print(time.process_time() - cpu, time.perf_counter() - wall)
"""
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


def code_share(machine, lines: int) -> float:
    """The share of instruction lines that lets ``lines`` lines fit the machine's memory."""
    return min(1.0, 0.9 * machine.memory_words / (lines * _WORDS_PER_LINE))


def generate(machine, lines: int, seed: int = 1, share: float | None = None) -> str:
    """A valid program of ``lines`` lines; address operands point at labels.

    Lines that take no memory (comments, constants, blank lines) fill the
    gaps between instruction lines so that a ``share`` of the lines are
    instructions (by default as many as the memory holds), as in a long,
    well-commented program.
    """
    rng = random.Random(seed)
    out = ["; generated benchmark program", "COUNT = 12"]
    labels = [f"l{i}" for i in range(lines // 10 + 1)]
    next_label = 0
    budget = machine.memory_words
    used = 0
    share = code_share(machine, lines) if share is None else share
    fillers = 0
    while len(out) < lines:
        while rng.random() > share and len(out) < lines - 1:
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


def _assemble_in(tree: Path, path: str, machine: str) -> tuple[float, float]:
    """CPU and wall seconds of ``assemble_file`` in a fresh process running ``tree``'s code."""
    done = subprocess.run([sys.executable, "-c", _MEASURE, path, machine], cwd=tree, check=True,
                          capture_output=True, text=True, env={**os.environ, "PYTHONPATH": str(tree)})
    cpu, wall = done.stdout.split()
    return float(cpu), float(wall)


def _target(lines: int) -> float | None:
    return next((s for n, s in TARGETS_S.items() if abs(lines - n) <= n // 10), None)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--lines", type=int, nargs="+", default=[1_000, 10_000, 100_000])
    parser.add_argument("--machine", default="ref8")
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--baseline", metavar="TREE", type=Path, help="another source tree to compare with")
    args = parser.parse_args()
    machine = load_machine(args.machine)
    trees = {"this": ROOT} | ({"base": args.baseline.resolve()} if args.baseline else {})
    ok, first_per_line = True, None
    share = code_share(machine, max(args.lines))      # one mix of lines for every size
    with tempfile.TemporaryDirectory(prefix="relaybench-bench-") as scratch:
        for size in args.lines:
            path = os.path.join(scratch, f"bench{size}.asm")
            source = generate(machine, size, share=share)
            Path(path).write_text(source, encoding="utf-8")
            lines = source.count("\n")
            best = {name: (float("inf"), float("inf")) for name in trees}
            for _ in range(args.repeat):
                for name, tree in trees.items():
                    cpu, wall = _assemble_in(tree, path, args.machine)
                    best[name] = (min(best[name][0], cpu), min(best[name][1], wall))
            cpu, wall = best["this"]
            per_line = cpu / lines * 1e6
            first_per_line = first_per_line or per_line
            target = _target(lines)
            verdict = "" if target is None else f"; target < {target:.0f} s: {'ok' if cpu < target else 'TOO SLOW'}"
            ok = ok and (target is None or cpu < target)
            base = f"; base {best['base'][0]:.3f} s, {best['base'][0] / cpu:.2f}× slower" if "base" in best else ""
            print(f"{lines:>7} lines on {machine.name}: cpu {cpu:.3f} s (wall {wall:.3f} s), "
                  f"{per_line:.1f} µs a line, {per_line / first_per_line:.2f}× the first size's{base}{verdict}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
