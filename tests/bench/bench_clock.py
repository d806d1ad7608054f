"""Speed of the clock Monte Carlo (target: 100,000 built clocks in under 2 s).

Run:  python tests/bench/bench_clock.py [--samples N] [--machine NAME] [--repeat K]

Times ``monte_carlo`` alone (the figures of every built clock, percentiles
included), best of K runs, and prints samples per second.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from emu import load_machine  # noqa: E402
from emu.timing import monte_carlo, timing_model  # noqa: E402

TARGET_S = 2.0


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=100_000)
    parser.add_argument("--machine", default="ref8")
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    model = timing_model(load_machine(args.machine))
    best = float("inf")
    for seed in range(args.repeat):
        start = time.perf_counter()
        monte_carlo(model, args.samples, seed=seed).summary()
        best = min(best, time.perf_counter() - start)
    verdict = "ok" if args.samples < 100_000 or best * 100_000 / args.samples < TARGET_S else "TOO SLOW"
    print(f"monte carlo, {args.machine}: {args.samples:,} samples in {best:.3f} s "
          f"(best of {args.repeat}; {args.samples / best:,.0f} samples/s; target < {TARGET_S} s per 100,000) {verdict}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
