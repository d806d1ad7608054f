"""Monte Carlo over the parts: how clocks built from real parts will beat.

Each sample is one clock built from parts drawn within their tolerances;
it runs a few turns of its ring, its armatures varying from operation to
operation (``jitter``), and yields its rate, duty cycle, shortest high and
low pulse and the largest change between consecutive cycle periods,
each measured against its own position's nominal length in the turn. All
work is numpy over whole chunks of samples; the chunk size is fixed, so a
seed gives the same figures whether or not a progress bar is drawn.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from ._model import TimingModel

__all__ = ["ClockSamples", "monte_carlo", "PERCENTILES", "TURNS_PER_SAMPLE", "CHUNK"]

PERCENTILES = (1, 5, 50, 95, 99)
TURNS_PER_SAMPLE = 2
CHUNK = 50_000
METRICS = {
    "rate_hz": ("rate", "Hz", 1.0),
    "duty": ("duty cycle", "%", 100.0),
    "shortest_high_s": ("shortest high pulse", "ms", 1e3),
    "shortest_low_s": ("shortest low pulse", "ms", 1e3),
    "irregularity": ("cycle-to-cycle irregularity", "%", 100.0),
}
"""Per-sample figure → (label, display unit, factor from SI to that unit)."""


@dataclass
class ClockSamples:
    """The figures of every built clock; stalled clocks are counted, not kept."""
    model: TimingModel
    seed: int
    samples: int
    stalled: int
    rate_hz: np.ndarray
    duty: np.ndarray
    shortest_high_s: np.ndarray
    shortest_low_s: np.ndarray
    irregularity: np.ndarray
    phase_s: np.ndarray
    """Phase times of each kept clock's first turn, shape (kept, phases)."""

    def figure(self, name: str) -> np.ndarray:
        return getattr(self, name)

    def below_min_pulse(self) -> float | None:
        """Fraction of all built clocks whose shortest high pulse is too short for the datapath."""
        if self.model.min_pulse is None:
            return None
        return float(np.count_nonzero(self.shortest_high_s < self.model.min_pulse)) / self.samples

    def summary(self) -> dict:
        """The figures as a JSON-able dict, in display units."""
        figures = {}
        for name, (label, unit, factor) in METRICS.items():
            values = self.figure(name) * factor
            entry = {"label": label, "unit": unit}
            if values.size:
                entry.update(mean=float(values.mean()), std=float(values.std()),
                             min=float(values.min()), max=float(values.max()),
                             percentiles={str(p): float(v) for p, v in
                                          zip(PERCENTILES, np.percentile(values, PERCENTILES))})
            figures[name] = entry
        return {"samples": self.samples, "seed": self.seed, "spread": self.model.spread,
                "turns_per_sample": TURNS_PER_SAMPLE, "stalled": self.stalled,
                "min_pulse_ms": None if self.model.min_pulse is None else self.model.min_pulse * 1e3,
                "below_min_pulse": self.below_min_pulse(), "figures": figures}


def monte_carlo(model: TimingModel, samples: int, seed: int = 1,
                progress: Callable[[int, int], None] | None = None) -> ClockSamples:
    """Build ``samples`` clocks from the model's parts; ``progress(done, total)`` between chunks."""
    if samples < 1:
        raise ValueError("samples must be at least 1")
    rng = np.random.default_rng(seed)
    shape = _PulseShape(model)
    parts = []
    stalled = 0
    done = 0
    while done < samples:
        count = min(CHUNK, samples - done)
        supply, values = model.draw_parts(rng, count)
        electrical = model.electrical_times(supply, values)
        mechanical = model.mechanical_times(values)
        turns = model.jittered(rng, electrical, mechanical, TURNS_PER_SAMPLE)
        running = np.all(np.isfinite(electrical), axis=1)
        stalled += int(count - np.count_nonzero(running))
        parts.append(shape.figures(turns[running]))
        done += count
        if progress is not None:
            progress(done, samples)
    joined = {key: np.concatenate([p[key] for p in parts]) for key in parts[0]}
    return ClockSamples(model=model, seed=seed, samples=samples, stalled=stalled, **joined)


class _PulseShape:
    """Where the high and low pulses of a turn begin, once per model.

    The phase table is rotated to start at a rising edge, so every turn is a
    whole number of cycles: high pulse, low interval, high pulse, … A design
    may give its cycles different lengths on purpose (a short pulse and a
    long one a turn); irregularity is measured against that design: each
    cycle is first scaled by the mean nominal cycle over its own position's
    nominal length (the nominal parts, no jitter), so only what differs from
    the design counts. On a ring whose cycles are all alike the scale is 1.
    """

    def __init__(self, model: TimingModel):
        levels = [p.level for p in model.machine.phases]
        count = len(levels)
        first_rise = next(i for i in range(count) if levels[i] == 1 and levels[i - 1] == 0)
        self.order = [(first_rise + i) % count for i in range(count)]
        rotated = [levels[i] for i in self.order]
        run_starts = [0] + [i for i in range(1, count) if rotated[i] != rotated[i - 1]]
        self.run_starts = np.array([t * count + s for t in range(TURNS_PER_SAMPLE) for s in run_starts])
        self.pulses = len(run_starts) // 2 * TURNS_PER_SAMPLE
        nominal = np.tile(model.nominal_phase_seconds()[self.order], TURNS_PER_SAMPLE)
        nominal_cycles = np.add.reduceat(nominal, self.run_starts).reshape(-1, 2).sum(axis=1)
        self.design_scale = nominal_cycles.mean() / nominal_cycles

    def figures(self, turns: np.ndarray) -> dict:
        sequence = turns[:, :, self.order].reshape(len(turns), -1)
        runs = np.add.reduceat(sequence, self.run_starts, axis=1)
        high, low = runs[:, 0::2], runs[:, 1::2]
        cycles = high + low
        total = cycles.sum(axis=1)
        as_designed = cycles * self.design_scale
        steps = np.abs(np.diff(as_designed, axis=1)).max(axis=1)
        return {"rate_hz": self.pulses / total, "duty": high.sum(axis=1) / total,
                "shortest_high_s": high.min(axis=1, initial=np.inf),
                "shortest_low_s": low.min(axis=1, initial=np.inf),
                "irregularity": steps / as_designed.mean(axis=1), "phase_s": turns[:, 0, :]}
