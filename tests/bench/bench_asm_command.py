"""``relaybench asm`` of a 100,000-line program as a whole process (target: under 3 s).

Run:  python tests/bench/bench_asm_command.py [--lines N] [--machine NAME] [--repeat K]
                                              [--baseline TREE]

The program comes from ``bench_assembler.generate`` (the machine's own
instruction forms, labels, forward jumps, data, constants and comments). Each
run is a fresh ``python -m emu.cli asm FILE`` process, timed from outside:
start-up, machine, parsing, both passes, the Intel HEX image and the debug
file; a second case adds ``--listing`` (the listing with its symbol table).
The user's cache folder is warm, as after a first run.

With ``--baseline TREE`` (another source tree, say ``git archive main | tar
-x -C /tmp/base``) the same commands run from that tree too, in turns with
this one, so both see the same load; the files both write are compared byte
for byte, and the ratios of the medians (wall and CPU) are printed. Each case reports the
median and best wall time, the median CPU time, and the median's share of the
target.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_assembler import code_share, generate  # noqa: E402
from bench_startup import timed_process  # noqa: E402
from emu import load_machine  # noqa: E402

TARGET_S = 3.0
_OUTPUTS = (".hex", ".dbg.json", ".lst")


def _asm_process(tree: Path, source: Path, out: Path, extra: list[str], cache: str) -> tuple[float, float]:
    """Wall and CPU seconds of one ``relaybench asm`` process run from ``tree``."""
    env = {**os.environ, "PYTHONPATH": str(tree), "RELAYBENCH_CACHE": cache}
    command = [sys.executable, "-m", "emu.cli", "asm", str(source), "-o", str(out.with_suffix(".hex")), *extra]
    return timed_process(command, tree, env)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--lines", type=int, default=100_000)
    parser.add_argument("--machine", default="ref8")
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--baseline", metavar="TREE", type=Path, help="another source tree to compare with")
    args = parser.parse_args()
    machine = load_machine(args.machine)
    trees = {"this": ROOT} | ({"base": args.baseline.resolve()} if args.baseline else {})
    with tempfile.TemporaryDirectory(prefix="relaybench-bench-") as scratch:
        folder = Path(scratch)
        source = folder / "long.asm"
        text = generate(machine, args.lines, share=code_share(machine, args.lines))
        source.write_text(text, encoding="utf-8")
        cases = {(tree, listing): [] for tree in trees for listing in (False, True)}

        def run(tree: str, listing: bool) -> tuple[float, float]:
            out = folder / f"{tree}{'-listed' if listing else ''}"
            extra = ["--listing", str(out.with_suffix(".lst"))] if listing else []
            return _asm_process(trees[tree], source, out, extra, str(folder / f"cache-{tree}"))

        for tree, listing in cases:         # bytecode and the cache folder written, not timed
            run(tree, listing)
        for _round in range(args.repeat):
            for tree, listing in cases:
                cases[tree, listing].append(run(tree, listing))
        same = all((folder / f"this-listed{suffix}").read_bytes() == (folder / f"base-listed{suffix}").read_bytes()
                   for suffix in _OUTPUTS) if "base" in trees else None
    print(f"relaybench asm, {text.count(chr(10)):,} lines on {machine.name}: {args.repeat} rounds, "
          f"wall median (best), CPU median; target {TARGET_S:.1f} s")
    medians, cpus = {}, {}
    for (tree, listing), times in cases.items():
        walls = [wall for wall, _cpu in times]
        medians[tree, listing] = statistics.median(walls)
        cpus[tree, listing] = statistics.median(c for _wall, c in times)
        name = f"{tree}{' --listing' if listing else ''}"
        print(f"  {name:<16} {medians[tree, listing]:6.3f} s ({min(walls):.3f}), cpu {cpus[tree, listing]:6.3f} s, "
              f"{medians[tree, listing] / TARGET_S:.2f} of the target")
    if "base" in trees:
        for listing in (False, True):
            print(f"  base / this{' --listing' if listing else ''}: "
                  f"wall {medians['base', listing] / medians['this', listing]:.2f}×, "
                  f"cpu {cpus['base', listing] / cpus['this', listing]:.2f}×")
        print(f"  outputs byte for byte the same as the baseline's: {'yes' if same else 'NO'}")
    return 0 if all(wall < TARGET_S for (tree, _listing), wall in medians.items() if tree == "this") else 1


if __name__ == "__main__":
    sys.exit(main())
