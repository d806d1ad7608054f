"""A sweep's cost per run: a new emulator for each run against one emulator reused.

Run:  python tests/bench/bench_sweep.py [--pairs N] [--repeat N]

The routine is the 16-bit multiply of programs/ref8/lib (as programs/ref8/tolls.asm
calls it, without the printing): two bytes multiplied, about 80 instructions a
run, swept over operand pairs ``load × rate``. Three ways
to run the same pairs in this process, each checked against Python's own
product before any timing:

* **new** — a new ``Emulator`` per run, image loaded, run as ``relaybench run`` runs;
* **reload** — one emulator, ``reload`` per run (power-on state, image again);
* **rewind** — one emulator, ``rewind`` to a save point per run (what ``sweep`` does).

Then the whole sweep of all 65,536 pairs as ``relaybench sweep`` runs it, on
every core, wall-clock time from plan to the last row. Times per run are the
best of N CPU times (the machine is shared; CPU time is what a run costs).
Target: the 65,536-run sweep in under 1 s on two cores.
"""

from __future__ import annotations

import argparse
import os
import random
import resource
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from emu import load_machine  # noqa: E402
from emu.runs import (SweepPlan, load_program, parse_input, parse_output, run_loaded, start_emulator,  # noqa: E402
                      sweep_locally)

MACHINE = load_machine("ref8")
ROUTINE = """
        ld r0, [load]
        li r1, 0
        ld r2, [rate]
        li r3, 0
        call mul16
        st [toll], r0
        st [toll + 1], r1
        halt
load:   .byte 0
rate:   .byte 0
toll:   .word 0
"""


def _program():
    """The routine and the shipped 16-bit multiply (wherever programs/ keeps its library)."""
    library = next(ROOT.glob("programs/**/math16.inc"))
    folder = Path(tempfile.mkdtemp(prefix="bench_sweep_"))
    source = folder / "multiply.asm"
    source.write_text(ROUTINE + library.read_text(encoding="utf-8"), encoding="utf-8")
    return load_program(source, MACHINE)


PROGRAM = _program()
LOAD, RATE = PROGRAM.labels["load"], PROGRAM.labels["rate"]
TOLL = PROGRAM.labels["toll"]


def _toll(emu) -> int:
    return emu.memory[TOLL] | emu.memory[TOLL + 1] << 8


def new_each(pairs) -> list[int]:
    tolls = []
    for load, rate in pairs:
        emu = start_emulator(PROGRAM, MACHINE)
        emu.memory[LOAD], emu.memory[RATE] = load, rate
        run_loaded(PROGRAM, MACHINE, emulator=emu)
        tolls.append(_toll(emu))
    return tolls


def reused(pairs, back_to_start) -> list[int]:
    """One emulator for every run; ``back_to_start(emu, point)`` before each."""
    tolls = []
    emu = start_emulator(PROGRAM, MACHINE)
    start = emu.save_point()
    for load, rate in pairs:
        back_to_start(emu, start)
        emu.memory[LOAD], emu.memory[RATE] = load, rate
        run_loaded(PROGRAM, MACHINE, emulator=emu)
        tolls.append(_toll(emu))
    return tolls


def reload_each(pairs) -> list[int]:
    return reused(pairs, lambda emu, _point: emu.reload(PROGRAM.segments))


def rewind_each(pairs) -> list[int]:
    return reused(pairs, lambda emu, point: emu.rewind(point))


def whole_sweep(workers: int) -> tuple[float, list]:
    machine_text = Path(MACHINE.path).read_text(encoding="utf-8")
    started = time.perf_counter()
    plan = SweepPlan.made(MACHINE, machine_text, PROGRAM, switches=0, input_bytes=b"",
                          inputs=(parse_input("load=0..255", MACHINE, PROGRAM, 0),
                                  parse_input("rate=0..255", MACHINE, PROGRAM, 0)),
                          outputs=(parse_output("toll:2", MACHINE, PROGRAM, set()),),
                          checks=(("toll == load * rate", None),), max_cycles=1_000_000)
    rows = sweep_locally(plan, workers)
    return time.perf_counter() - started, rows


TARGET_S = 1.0


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--pairs", type=int, default=4096, help="pairs timed in process, drawn at random (default 4096)")
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    pairs = [(p // 256, p % 256) for p in random.Random(1).sample(range(65536), args.pairs)]
    products = [load * rate for load, rate in pairs]
    ways = {"new": new_each, "reload": reload_each, "rewind": rewind_each}
    for name, way in ways.items():
        assert way(pairs) == products, f"{name} computed a wrong product"
    best = {name: float("inf") for name in ways}
    for _ in range(args.repeat):
        for name, way in ways.items():
            started = time.process_time()
            way(pairs)
            best[name] = min(best[name], time.process_time() - started)
    print(f"{len(pairs):,} runs of the multiply in this process (best of {args.repeat}, CPU time):")
    for name in ways:
        print(f"  {name:7} {best[name] / len(pairs) * 1e6:7.1f} µs/run   "
              f"{best['new'] / best[name]:5.2f}× new")
    workers = os.cpu_count() or 1
    before = _cpu_seconds()
    seconds, rows = whole_sweep(workers)
    cpu = _cpu_seconds() - before
    assert len(rows) == 65536 and all(ok for _v, _o, ok, _s, _w in rows), "the sweep found a wrong product"
    print(f"sweep of 65,536 runs on {workers} workers: {seconds:.2f} s wall clock, {cpu:.2f} s CPU in all "
          f"({cpu / 65536 * 1e6:.1f} µs a run; on {workers} idle cores about {cpu / workers:.2f} s; "
          f"target under {TARGET_S:g} s; load average now {os.getloadavg()[0]:.1f})")
    return 0 if seconds < TARGET_S else 1


def _cpu_seconds() -> float:
    """CPU time of this process and of the workers it has waited for."""
    own, workers = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + workers.ru_utime + workers.ru_stime


if __name__ == "__main__":
    sys.exit(main())
