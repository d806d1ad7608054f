"""Every speed target of the engine in one go: each benchmark run in turn, its verdict kept.

Run:  python tests/bench/bench_speed_targets.py [--quick]

Each benchmark below measures its own ratio in one run, interleaving the
ways it compares (see its docstring); this script only runs them one after
the other in fresh processes, so none warms the next, prints each one's
closing lines and ends with a table of verdicts (a benchmark's exit status
says whether its target was met). Run it on a quiet machine: the ratios
hold under load, the absolute times (start-up, the sweep, the assembler) do
not. ``--quick`` leaves out the slowest (the whole-program VCD and watched
runs of ledger.asm).
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent

BENCHMARKS = [
    ("block translation ≥ 4× a plain interpreter (ledger)", "bench_blocks.py", [], False),
    ("sweep of 65,536 runs < 1 s", "bench_sweep.py", ["--repeat", "2"], False),
    ("wear ≤ 1.5× a plain run", "bench_wear.py", [], False),
    ("VCD ≤ 10× a plain run", "bench_vcd.py", [], True),
    ("start-up of `run` < 0.2 s", "bench_startup.py", [], False),
    ("assembler: 100,000 lines < 3 s", "bench_assembler.py", ["--lines", "100000", "--repeat", "2"], False),
    ("watched runs ≤ 1.5× a plain run", "bench_watched.py", [], True),
]
"""(target, script, its arguments, slow)."""
TAIL_LINES = 6


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--quick", action="store_true", help="leave out the slowest benchmarks")
    args = parser.parse_args()
    verdicts = []
    for target, script, arguments, slow in BENCHMARKS:
        if slow and args.quick:
            verdicts.append((target, "left out (--quick)", 0.0))
            continue
        print(f"== {script} {' '.join(arguments)}", flush=True)
        started = time.perf_counter()
        done = subprocess.run([sys.executable, str(HERE / script), *arguments], capture_output=True, text=True)
        seconds = time.perf_counter() - started
        lines = (done.stdout + done.stderr).rstrip().splitlines()
        print("\n".join(lines[-TAIL_LINES:]), flush=True)
        verdicts.append((target, "met" if done.returncode == 0 else f"MISSED (exit {done.returncode})", seconds))
    print(f"\nload average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    for target, verdict, seconds in verdicts:
        print(f"  {target:<52} {verdict:<22} {seconds:6.0f} s")
    return 0 if all(v.startswith(("met", "left")) for _t, v, _s in verdicts) else 1


if __name__ == "__main__":
    sys.exit(main())
