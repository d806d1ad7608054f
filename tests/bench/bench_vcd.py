"""Waveforms against a plain run of the same cycles (targets from issue 14, item 4).

Run:  python tests/bench/bench_vcd.py

programs/ref8/ledger.asm is run headless (the `relaybench run` path) three ways,
interleaved round by round, best of each kept:

1. plain, to its final halt (about 12 million cycles);
2. the same with a waveform window of WINDOW cycles from cycle FROM
   (``--vcd-from`` / ``--vcd-cycles``): only the window is watched;
3. a stretch of STRETCH cycles plain, and the same stretch dumped whole,
   whose ratio is what a full dump costs per cycle against a plain run.

Sizes of the dumps are printed, with the bytes per cycle.
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from emu import load_machine  # noqa: E402
from emu.runs import load_program, run_loaded  # noqa: E402
from emu.timing import record_vcd  # noqa: E402

FROM, WINDOW, STRETCH = 5_000_000, 100_000, 300_000
ROUNDS = 3
FULL_TARGET = 10.0
REF8 = load_machine("ref8")


def timed(program, cycles=None, vcd=None, start=0, window=None) -> tuple[float, int]:
    started = time.perf_counter()
    limit = {"max_cycles": cycles} if cycles else {}
    if vcd is None:
        run_loaded(program, REF8, **limit)
        return time.perf_counter() - started, 0
    from emu.runs import start_emulator
    emu = start_emulator(program, REF8)
    with record_vcd(emu, vcd, start=start, cycles=window):
        run_loaded(program, REF8, emulator=emu, **limit)
    return time.perf_counter() - started, os.path.getsize(vcd)


def main() -> int:
    os.chdir(ROOT / "programs" / "ref8")
    program = load_program("ledger.asm", REF8)
    best: dict[str, float] = {}
    sizes: dict[str, int] = {}
    with tempfile.TemporaryDirectory() as folder:
        dump = os.path.join(folder, "run.vcd")
        runs = {
            "plain run, whole program": lambda: timed(program),
            f"window of {WINDOW:,} cycles from {FROM:,}": lambda: timed(program, vcd=dump, start=FROM, window=WINDOW),
            f"plain, first {STRETCH:,} cycles": lambda: timed(program, cycles=STRETCH),
            f"full dump, first {STRETCH:,} cycles": lambda: timed(program, cycles=STRETCH, vcd=dump),
        }
        for _ in range(ROUNDS):
            for name, run in runs.items():
                seconds, size = run()
                best[name] = min(best.get(name, seconds), seconds)
                sizes[name] = size
    names = list(runs)
    for name in names:
        size = f", {sizes[name] / 1e6:.1f} MB" if sizes[name] else ""
        print(f"{name:<44} {best[name]:7.2f} s{size}")
    window_ratio = best[names[1]] / best[names[0]]
    full_ratio = best[names[3]] / best[names[2]]
    print(f"window dump / plain run of the whole program: {window_ratio:.2f} x")
    print(f"full dump / plain run of the same {STRETCH:,} cycles: {full_ratio:.1f} x "
          f"(target {FULL_TARGET:g} x); {sizes[names[3]] / STRETCH:.0f} bytes a cycle")
    return 0 if full_ratio <= FULL_TARGET else 1


if __name__ == "__main__":
    sys.exit(main())
