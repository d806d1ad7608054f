"""Start-up: ``relaybench run`` of a short program as a whole process (target: under 0.2 s warm).

Run:  python tests/bench/bench_startup.py [--program FILE] [--repeat K] [--baseline TREE]

Each case is a fresh ``python -m emu.cli run PROGRAM`` process:

* warm  — the user's cache folder already holds the parsers, the machine and its code;
* cold  — an empty cache folder every time (the first run after an install or upgrade);
* off   — the cache turned off (``RELAYBENCH_CACHE=off``);
* base  — with ``--baseline TREE``: the same command from another source tree (say an
  export of main: ``git archive main | tar -x -C /tmp/base``), its own cache empty.

The cases take turns, K rounds, so a change in the machine's load hits all
alike; each reports the median and the best wall time and the median CPU time
of the process, and the ratio of each median to the warm one. Python's own
start (``python -c pass``) is given for scale. Bytecode files are allowed, as
in an installed copy, and one unmeasured run of each tree writes them first.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
TARGET_S = 0.2


def _environment(tree: Path, cache: str) -> dict:
    env = {key: value for key, value in os.environ.items() if key != "PYTHONDONTWRITEBYTECODE"}
    env.update(PYTHONPATH=str(tree), RELAYBENCH_CACHE=cache)
    return env


def timed_process(command: list[str], cwd: Path, env: dict) -> tuple[float, float]:
    """Wall and CPU seconds (user + system) of one process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    subprocess.run(command, cwd=cwd, env=env, check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--program", default=str(next((ROOT / "programs").rglob("berths.asm"))),
                        help="the program to run (default: the example berths.asm)")
    parser.add_argument("--repeat", type=int, default=7)
    parser.add_argument("--baseline", metavar="TREE", type=Path,
                        help="another source tree to compare with (it needs emu/ and asm/)")
    args = parser.parse_args()
    program = str(Path(args.program).resolve())
    run = [sys.executable, "-m", "emu.cli", "run", program]
    with tempfile.TemporaryDirectory(prefix="relaybench-bench-") as scratch:
        warm = os.path.join(scratch, "warm")
        cases = {
            "warm": lambda: timed_process(run, ROOT, _environment(ROOT, warm)),
            "cold": lambda: timed_process(run, ROOT, _environment(ROOT, tempfile.mkdtemp(dir=scratch))),
            "off": lambda: timed_process(run, ROOT, _environment(ROOT, "off")),
            "python -c pass": lambda: timed_process([sys.executable, "-c", "pass"], ROOT, os.environ.copy()),
        }
        if args.baseline:
            base = args.baseline.resolve()
            cases["base"] = lambda: timed_process(run, base, _environment(base, tempfile.mkdtemp(dir=scratch)))
            timed_process(run, base, _environment(base, os.path.join(scratch, "base-first")))
        timed_process(run, ROOT, _environment(ROOT, warm))      # bytecode written, warm cache filled
        times: dict[str, list[tuple[float, float]]] = {name: [] for name in cases}
        for _round in range(args.repeat):
            for name, case in cases.items():
                times[name].append(case())
    warm_median = statistics.median(wall for wall, _cpu in times["warm"])
    print(f"relaybench run {Path(program).name}: {args.repeat} rounds, wall median (best), CPU median")
    for name, samples in times.items():
        walls = [wall for wall, _cpu in samples]
        cpu = statistics.median(c for _wall, c in samples)
        median = statistics.median(walls)
        print(f"  {name:<15} {median:6.3f} s ({min(walls):.3f})  cpu {cpu:6.3f} s  "
              f"{median / warm_median:5.2f}× warm")
    verdict = "ok" if warm_median < TARGET_S else "TOO SLOW"
    print(f"warm median {warm_median:.3f} s; target < {TARGET_S} s: {verdict}")
    return 0 if warm_median < TARGET_S else 1


if __name__ == "__main__":
    sys.exit(main())
