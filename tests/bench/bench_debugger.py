"""Responsiveness of the debugger (targets from the debugger's issue).

Run:  python tests/bench/bench_debugger.py

1. A command on a stopped machine answers in under 50 ms (worst of many).
2. Ctrl-C during a run of 10^8 cycles stops the machine within 0.2 s: a real
   SIGINT is sent to this process while ``go 100000000`` runs, and the time
   from the signal to the frozen machine is measured.
3. Real-time mode keeps the panel within one phase of the simulated clock:
   the live clock is ticked at the live view's frame rate with the real
   wall clock, and the worst lag (in phases) is recorded.
"""

from __future__ import annotations

import os
import signal
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from debugger_programs import KILN, REF8, session_for  # noqa: E402
from emu.debugger import FRAME_SECONDS, LiveClock, ctrl_c_is_the_stop_switch  # noqa: E402

COMMAND_TARGET_S = 0.050
STOP_TARGET_S = 0.2

LONG = """\
; three nested 8-bit counters, twice over: about 1.7 * 10^8 cycles before the halt
        li r5, 2
outer:  inc r0
        jnz outer
        inc r1
        jnz outer
        inc r2
        jnz outer
        dec r5
        jnz outer
        halt
"""

COMMANDS = ["panel", "registers", "code", "dump 0 256", "scope 16", "scope 200", "points", "why",
            "instr", "pulse", "over", "break log", "drop all", "watch r1", "drop all", "help",
            "help go", "put r2 7", "toggles 0x5a", "console", "reg", "nonsense"]


def command_latency(folder: Path) -> dict[str, float]:
    session = session_for(folder, KILN)
    session.execute("instr 3")
    worst = {}
    for line in COMMANDS:
        times = []
        for _ in range(30):
            t0 = time.perf_counter()
            session.execute(line)
            times.append(time.perf_counter() - t0)
        worst[line] = max(times)
    return worst


def ctrl_c_stop(folder: Path, *, watch: bool, after_s: float = 1.0) -> tuple[float, int]:
    session = session_for(folder, LONG, name="long.asm")
    if watch:
        session.execute("watch [0x300]")
    sent = []

    def press():
        time.sleep(after_s)
        sent.append(time.perf_counter())
        os.kill(os.getpid(), signal.SIGINT)

    presser = threading.Thread(target=press)
    presser.start()
    with ctrl_c_is_the_stop_switch(session):
        reply = session.execute("go 100000000")
        done = time.perf_counter()
    presser.join()
    assert "stopped by the stop switch (Ctrl-C)" in reply, reply
    assert session.emu.frozen
    return done - sent[0], session.emu.cycles


def live_lag(folder: Path, factor: float, seconds: float) -> tuple[float, int]:
    session = session_for(folder, LONG, name="long.asm")
    clock = LiveClock(session, factor)
    clock.press("run")
    end = time.monotonic() + seconds
    worst = 0.0
    while time.monotonic() < end:
        clock.tick()
        worst = max(worst, clock.lag_phases())
        time.sleep(FRAME_SECONDS)
    return worst, session.emu.cycles


def main() -> int:
    ok = True
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        os.chdir(folder)
        worst = command_latency(folder)
        slowest = max(worst, key=worst.get)
        print(f"command on a stopped machine: worst {worst[slowest] * 1000:.2f} ms ({slowest!r}); "
              f"median of the worst cases {sorted(worst.values())[len(worst) // 2] * 1000:.2f} ms "
              f"(target < {COMMAND_TARGET_S * 1000:.0f} ms)")
        ok &= worst[slowest] < COMMAND_TARGET_S
        for watch in (False, True):
            delay, cycles = ctrl_c_stop(folder, watch=watch)
            what = "with a watchpoint" if watch else "no watchpoint"
            print(f"Ctrl-C during go 100000000 ({what}): stopped {delay * 1000:.1f} ms after the signal, "
                  f"at cycle {cycles:,} (target < {STOP_TARGET_S * 1000:.0f} ms)")
            ok &= delay < STOP_TARGET_S
        for factor, seconds in ((1.0, 3.0), (40.0, 2.0), (1000.0, 2.0)):
            lag, cycles = live_lag(folder, factor, seconds)
            print(f"live at {factor:g} x {REF8.nominal_hz:g} Hz for {seconds:g} s: worst lag {lag:.3f} phase "
                  f"({cycles:,} cycles run; target < 1 phase)")
            ok &= lag < 1.0
    print("all targets met" if ok else "A TARGET WAS MISSED")
    return 0 if ok else 1


def test_debugger_responsiveness():
    assert main() == 0


if __name__ == "__main__":
    sys.exit(main())
