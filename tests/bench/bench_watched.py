"""Watched runs against a plain run of the same program (targets from issue 14, item 7).

Run:  python tests/bench/bench_watched.py

programs/ref8/ledger.asm (about 12 million cycles) is run to its final halt by
the debugger, resuming at its pauses, once plain and once under each of:
a breakpoint, a watchpoint on a memory word, an instruction-count goal and
a call-depth goal (the `leave` of the top level, asked around every call
and return). The variants are interleaved round by round, and the best
time of each is divided by the best plain time: the target is at most 1.5
for each.

A second table runs the engine alone (no debugger) under watched
registers, which the program writes all the time: there the many real
stops (one per change) are counted in, but not the debugger's own cost of
a stop (the replay that draws its timing diagram, tens of milliseconds).
"""

from __future__ import annotations

import os
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from emu import load_machine  # noqa: E402
from emu.debugger import AnyOf, CallDepth, Count, Session, Watch, Watches, call_shape, load_view  # noqa: E402
from emu.runs import load_program, start_emulator  # noqa: E402

TARGET = 1.5
ROUNDS = 3
REF8 = load_machine("ref8")


def count_goal(session):
    return Count(3_000_000, session.emu)


def depth_goal(session):
    return CallDepth(session.machine, call_shape(session.machine), session.emu.instruction_address, 0,
                     "returned to the caller")


VARIANTS = {
    "plain go": ([], None),
    "breakpoint (break print_hex32)": (["break print_hex32"], None),
    "watchpoint on a word (watch [crc])": (["watch [crc]"], None),
    "until: instruction count (instr 3000000)": ([], count_goal),
    "until: call depth (leave at top level)": ([], depth_goal),
}


def to_the_end(setup, goal) -> tuple[float, int, int]:
    """Seconds to run ledger.asm to its halt under the variant; cycles and stops on the way."""
    session = Session(REF8, load_view("ledger.asm", REF8))
    for line in setup:
        session.execute(line)
    emu, stops = session.emu, 0
    started = time.perf_counter()
    emu.set_switch_run(True)
    while True:
        session.let_run(goal=goal(session) if goal else None, max_cycles=10**9)
        if emu.halt_latch:
            if "pause" not in session.last_stop:
                break
            emu.press_resume()
        else:
            stops += 1
            emu.set_switch_run(True)
    return time.perf_counter() - started, emu.cycles, stops


ENGINE_WATCHES = {"plain run": None, "watch sp (1,004 changes)": "sp",
                  "watch r6 (483 changes)": "r6", "watch flag v (32,272 changes)": "v"}


def engine_run(program, name) -> tuple[float, int, int]:
    """The engine alone to the final halt, stopping at every change of the watched register."""
    emu = start_emulator(program, REF8)
    stops = 0
    started = time.perf_counter()
    while True:
        until = AnyOf([Watches([Watch(1, name=name)], emu)]) if name else None
        stop = emu.run(max_cycles=10**9, until=until)
        if stop.kind == "halted":
            if emu.halt_address not in program.pauses:
                break
            emu.press_resume()
        else:
            stops += 1
    return time.perf_counter() - started, emu.cycles, stops


def table(title, variants, run, plain_name) -> bool:
    best: dict[str, float] = {}
    told: dict[str, tuple[int, int]] = {}
    for _ in range(ROUNDS):
        for name, variant in variants.items():
            seconds, cycles, stops = run(variant)
            best[name] = min(best.get(name, seconds), seconds)
            told[name] = (cycles, stops)
    print(title)
    ok = True
    for name, seconds in best.items():
        ratio = seconds / best[plain_name]
        cycles, stops = told[name]
        mark = "" if name == plain_name or ratio <= TARGET else "   MISSED"
        ok &= not mark
        print(f"  {name:<44} {seconds:6.2f} s  {ratio:5.2f} x plain  ({cycles:,} cycles, {stops:,} stops){mark}")
    return ok


def main() -> int:
    os.chdir(ROOT / "programs" / "ref8")
    ok = table("the debugger, go to the end:", VARIANTS, lambda v: to_the_end(*v), "plain go")
    program = load_program("ledger.asm", REF8)
    ok &= table("the engine alone, watched registers:", ENGINE_WATCHES, lambda v: engine_run(program, v),
                "plain run")
    print(f"target: each at most {TARGET} x plain; " + ("all met" if ok else "A TARGET WAS MISSED"))
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
