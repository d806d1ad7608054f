"""Benchmark: halt placement over every statement of programs/ref8/fares.asm.

Run with ``python tests/bench/bench_check_program.py``. The goal is the whole
placement in under 30 s on two cores. Measured in one run, wall time:

* baseline: each statement on its own with ``emu.runs.check_planting``
  (assemble with the halt, run the plain program and the planted one), one
  process, as a script would do with the tools that existed before;
* ``relaybench check``'s placement on one worker (the unplanted run made
  once, the machine compiled once), and on two (one per core).
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import asm  # noqa: E402
from emu import load_machine  # noqa: E402
from emu.checks import check_program_timing  # noqa: E402
from emu.runs import check_planting  # noqa: E402

PROGRAM = ROOT / "programs" / "ref8" / "fares.asm"


def baseline(machine) -> tuple[float, int]:
    started = time.perf_counter()
    original = asm.assemble_file(PROGRAM, machine)
    places = list(dict.fromkeys((e.file, e.line) for e in original.lines if e.kind == "code"))
    for place in places:
        check_planting(original, machine, [place], path=str(PROGRAM))
    return time.perf_counter() - started, len(places)


def placement(machine, workers: int) -> tuple[float, int]:
    started = time.perf_counter()
    check = check_program_timing(str(PROGRAM), machine, examples=0, workers=workers)
    return time.perf_counter() - started, len(check.placements)


def main() -> None:
    machine = load_machine("ref8")
    base, statements = baseline(machine)
    one, _ = placement(machine, 1)
    two, _ = placement(machine, 2)
    print(f"halt placement over {statements} statements of {PROGRAM.name}")
    print(f"  baseline (check_planting per statement)  {base:6.1f} s")
    print(f"  relaybench check, 1 worker               {one:6.1f} s   {base / one:4.1f}× the baseline")
    print(f"  relaybench check, 2 workers              {two:6.1f} s   {base / two:4.1f}× the baseline, "
          f"{one / two:4.2f}× one worker  (goal: under 30 s)")


if __name__ == "__main__":
    main()
