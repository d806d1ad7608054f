"""Benchmark: ``relaybench run`` on the longest example, and its overhead over the bare API.

Run with ``python tests/bench/bench_cli.py`` (or ``pytest -s tests/bench/bench_cli.py``).
Prints emulated cycles per second of wall time, end to end (a fresh process:
interpreter start, imports, machine compile, assembly, run, report), and the
overhead of the command line over the bare emulator API on the same program,
both measured in-process as CPU time, interleaved, the best of five each.
"""

from __future__ import annotations

import contextlib
import io
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import asm  # noqa: E402
import emu  # noqa: E402
from emu.cli import main as relaybench  # noqa: E402

PROGRAM = ROOT / "programs" / "ref8" / "ledger.asm"
REPEATS = 5


def bare_api() -> int:
    machine = emu.load_machine("ref8")
    program = asm.assemble_file(PROGRAM, machine)
    emulator = emu.Emulator(machine)
    emulator.load(program.segments)
    pauses = set(program.pauses)
    while True:
        stop = emulator.run(max_cycles=50_000_000 - emulator.cycles)
        if stop.kind != "halted" or stop.address not in pauses:
            return emulator.cycles
        emulator.press_resume()


def command_in_process() -> None:
    with contextlib.redirect_stdout(io.StringIO()):
        assert relaybench(["run", str(PROGRAM), "--json"]) == 0


def best_of(work, repeats: int = REPEATS) -> float:
    times = []
    for _ in range(repeats):
        start = time.process_time()     # CPU time of this process: other load on the machine counts less
        work()
        times.append(time.process_time() - start)
    return min(times)


def end_to_end() -> float:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    start = time.perf_counter()
    subprocess.run([sys.executable, "-m", "emu.cli", "run", str(PROGRAM), "--json"], check=True,
                   stdout=subprocess.DEVNULL, env=env)
    return time.perf_counter() - start


def measure() -> dict:
    cycles = bare_api()
    bare = command = float("inf")
    for _ in range(REPEATS):        # interleaved, so drift in the machine's speed hits both alike
        bare = min(bare, best_of(bare_api, 1))
        command = min(command, best_of(command_in_process, 1))
    whole = min(end_to_end() for _ in range(REPEATS))
    return {"cycles": cycles, "bare_s": bare, "command_s": command, "process_s": whole,
            "overhead": (command - bare) / bare}


def report(figures: dict) -> str:
    return "\n".join([
        f"program: {PROGRAM.relative_to(ROOT)}, {figures['cycles']:,} cycles",
        f"relaybench run, end to end (new process): {figures['process_s']:.2f} s = "
        f"{figures['cycles'] / figures['process_s']:,.0f} cycles/s",
        f"bare API in-process: {figures['bare_s']:.3f} s; command line in-process: {figures['command_s']:.3f} s",
        f"command-line overhead over the bare API: {figures['overhead'] * 100:+.1f} % (target: under 10 %)",
    ])


def test_cli_overhead_report():
    figures = measure()
    print("\n" + report(figures))
    assert figures["overhead"] < 0.10


if __name__ == "__main__":
    print(report(measure()))
