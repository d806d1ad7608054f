"""Wear counting against a plain run of the same program, in one process.

Run:  python tests/bench/bench_wear.py [--repeat N] [--program PATH]

Three ways to run programs/ref8/ledger.asm on ref8 from power-on to its halt,
as ``relaybench run`` does (a new emulator, load, run, RESUME at each pause):

* **plain** — no counting (the fast path with block translation);
* **wear** — with the relay counts ``run --wear`` keeps (``count_wear``);
* **stepped wear** — the same counts phase by phase (an observer attached,
  the way ``run --wear`` counted before the fast path could), over the
  first ``--stepped-cycles`` cycles only, scaled to the whole run.

The counted and the plain run must end in the same state, the counts of
the fast run must equal those of a phase-by-phase run over the same first
cycles, and over the whole run the counts kept in translated blocks must
equal those of the fused functions alone. Timings are the best of N CPU times, taken in turn each
round. Target: wear within 1.5× of plain.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from emu import Emulator, Observer, load_machine  # noqa: E402
from emu.runs import load_program, run_loaded, start_emulator  # noqa: E402
from emu.timing import count_wear  # noqa: E402

TARGET = 1.5
CYCLE_CAP = 50_000_000
MACHINE = load_machine("ref8")


def fresh(program) -> Emulator:
    return start_emulator(program, MACHINE)


def timed(run) -> tuple[float, object]:
    start = time.process_time()
    result = run()
    return time.process_time() - start, result


def plain(program):
    emu = fresh(program)
    run_loaded(program, MACHINE, emulator=emu, max_cycles=CYCLE_CAP)
    return emu


def counted(program, cycles=CYCLE_CAP, stepped=False, blocks=True):
    emu = fresh(program)
    if stepped:
        emu.observe(Observer())
    with count_wear(emu) as wear:
        wear.tally.blocks.enabled = blocks
        run_loaded(program, MACHINE, emulator=emu, max_cycles=cycles)
    return emu, wear.counts


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--program", default=str(ROOT / "programs" / "ref8" / "ledger.asm"))
    parser.add_argument("--stepped-cycles", type=int, default=300_000)
    args = parser.parse_args()
    program = load_program(args.program, MACHINE)

    first = args.stepped_cycles
    _emu, fast_counts = counted(program, cycles=first)
    _emu, stepped_counts = counted(program, cycles=first, stepped=True)
    assert fast_counts == stepped_counts, "fast and phase-by-phase wear counts differ"
    _emu, with_blocks = counted(program)
    _emu, without_blocks = counted(program, blocks=False)
    assert with_blocks == without_blocks, "wear counted in blocks differs from the fused functions' count"

    best = {"plain": float("inf"), "wear": float("inf")}
    for _ in range(args.repeat):
        seconds, emu = timed(lambda: plain(program))
        best["plain"] = min(best["plain"], seconds)
        seconds, (counted_emu, _counts) = timed(lambda: counted(program))
        best["wear"] = min(best["wear"], seconds)
        assert (emu.cycles, emu.pc, bytes(emu.memory)) == (counted_emu.cycles, counted_emu.pc,
                                                            bytes(counted_emu.memory))
    stepped_seconds, _result = timed(lambda: counted(program, cycles=first, stepped=True))
    stepped_whole = stepped_seconds * emu.cycles / first

    ratio = best["wear"] / best["plain"]
    print(f"{Path(args.program).name}: {emu.cycles:,} cycles, {emu.instructions:,} instructions")
    print(f"  plain          {best['plain']:8.3f} s")
    print(f"  wear           {best['wear']:8.3f} s   {ratio:5.2f}× plain (target ≤ {TARGET}×)")
    print(f"  stepped wear   {stepped_whole:8.3f} s   {stepped_whole / best['plain']:5.1f}× plain "
          f"(estimated from the first {first:,} cycles)")
    return 0 if ratio <= TARGET else 1


if __name__ == "__main__":
    sys.exit(main())
