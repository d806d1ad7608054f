"""Benchmark: ``relaybench check --machine`` with 200 examples a property, on every machine.

Run with ``python tests/bench/bench_check_machine.py`` (or ``pytest -s tests/bench/bench_check_machine.py``).
The goal is under 60 s for each shipped machine. Prints, per machine, the
wall time and the CPU time of this process (the CPU time counts less of the
load other work puts on the computer), and each property's share of it.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from emu import load_machine  # noqa: E402
from emu.checks import MACHINE_PROPERTIES, PASSED, check_property, design_report  # noqa: E402

EXAMPLES = 200
SEED = 1
GOAL_SECONDS = 60.0
MACHINES = sorted((ROOT / "emu" / "machines").glob("*.toml")) + sorted((ROOT / "tests" / "machines").glob("*.toml"))


def one_machine(path: Path) -> tuple[float, float, dict]:
    wall, cpu = time.perf_counter(), time.process_time()
    machine = load_machine(path)
    shares = {}
    for prop in MACHINE_PROPERTIES:
        start = time.process_time()
        result = check_property(prop, machine, EXAMPLES, SEED)
        assert result.status == PASSED, (path.name, prop.key, result.failure)
        shares[prop.key] = time.process_time() - start
    design_report(machine)
    return time.perf_counter() - wall, time.process_time() - cpu, shares


def test_check_machine_speed():
    print(f"\ncheck --machine, {EXAMPLES} examples a property, seed {SEED} (goal: under {GOAL_SECONDS:g} s a shipped machine)")
    for path in MACHINES:
        wall, cpu, shares = one_machine(path)
        shipped = "shipped" if path.parent.name == "machines" and path.parent.parent.name == "emu" else "test"
        parts = ", ".join(f"{key} {seconds:.1f}" for key, seconds in shares.items())
        print(f"  {path.stem:<6} ({shipped}) wall {wall:5.1f} s, CPU {cpu:5.1f} s  [{parts}]")


if __name__ == "__main__":
    test_check_machine_speed()
