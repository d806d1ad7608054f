"""Operator interleavings and irregular clocks: the same result as the free run?

An *operator script* here is what a person at the panel might do while the
program runs: throw STOP at some moment, press STEP a few times, throw RUN
again, as often as they like between the halts; at each halt they give the
panel file's answer (toggles, input) and press RESUME, as ``relaybench
test`` does. Each script is drawn from the check's seed, so a failure can
be replayed with the seed and the script's number.

An *irregular clock* is one built from parts drawn within tolerance
(``emu.timing.spread_source``): the program must compute the same, and
the real time it takes on each such clock is the program's time spread.
"""

from __future__ import annotations

import random
from dataclasses import dataclass

from ..engine import Emulator
from ..errors import MachineError
from ..timing import has_timing, spread_source
from ._outcomes import first_difference

__all__ = ["ClockSpread", "Interleaving", "OperatorScript", "clock_spread", "operator_interleavings"]

MOST_STOPS = 6
MOST_STEPS = 40


class OperatorScript:
    """STOP, STEP and RUN at moments drawn from ``seed``, between the halts of a run.

    ``attach`` puts the script between the runner and the emulator's ``run``:
    the runner (``run_loaded``) still answers every halt as the panel file
    says, while each stretch the clock runs may be cut by the operator.
    """

    def __init__(self, seed: int, run_cycles: int):
        self.rng = random.Random(seed)
        self.run_cycles = max(run_cycles, 2)
        self.stops_left = self.rng.randint(1, MOST_STOPS)
        self.actions: list[str] = []
        """What the operator did, in words, to show with a failure."""

    def attach(self, emulator: Emulator) -> None:
        free_run = emulator.run

        def run(max_cycles=None, **options):
            target = None if max_cycles is None else emulator.cycles + max_cycles
            while emulator.switch_run and self.stops_left:
                gap = self.rng.randint(1, max(1, self.run_cycles // 3))
                if target is not None and emulator.cycles + gap >= target:
                    break
                stop = free_run(max_cycles=gap, **options)
                if stop.kind != "cycle_limit":
                    return stop
                self._stop_and_step(emulator, free_run, target, options)
            left = None if target is None else max(target - emulator.cycles, 0)
            return free_run(max_cycles=left, **options)

        emulator.run = run

    def _stop_and_step(self, emulator: Emulator, free_run, target, options) -> None:
        self.stops_left -= 1
        steps = self.rng.choice((0, 1, self.rng.randint(1, MOST_STEPS)))
        at = emulator.cycles
        emulator.set_switch_run(False)
        free_run(max_cycles=None if target is None else max(target - emulator.cycles, 0), **options)
        given = 0
        while given < steps and not emulator.halt_latch and emulator.press_step():
            given += 1
        self.actions.append(f"STOP at cycle {at:,}, STEP ×{given}, RUN")
        emulator.set_switch_run(True)


@dataclass(frozen=True)
class Interleaving:
    """One operator script whose run did not compute what the free run did."""
    script: int
    actions: tuple[str, ...]
    difference: tuple[str, object, object]


def operator_interleavings(subject, free_outcome, free_cycles: int, examples: int, seed: int,
                           done=None) -> list[Interleaving]:
    """Run ``examples`` operator scripts; the ones whose result differs from the free run's
    (``done(n)`` after each)."""
    failures = []
    for number in range(examples):
        script = OperatorScript(_script_seed(seed, number), free_cycles)
        emulator = subject.power_on()
        script.attach(emulator)
        _result, outcome = subject.run(emulator=emulator)
        difference = first_difference(free_outcome, outcome)
        if difference is not None:
            failures.append(Interleaving(number, tuple(script.actions), difference))
        if done:
            done(number + 1)
    return failures


@dataclass(frozen=True)
class ClockSpread:
    """The program on ``clocks`` irregular clocks: its real time, and any clock it computed otherwise on."""
    clocks: int
    nominal_seconds: float
    fastest_seconds: float
    slowest_seconds: float
    differing: tuple[tuple[int, tuple[str, object, object]], ...]
    """(clock seed, first difference) for each clock the result was not the free run's."""
    skipped: str | None = None
    """Why no clock was built (the machine has no usable ``[timing]`` section)."""
    stopped: int = 0
    """Clocks drawn whose parts stop the ring: no run on them, and not counted in ``clocks``."""

    @property
    def drawn(self) -> int:
        return self.clocks + self.stopped

    @property
    def spread(self) -> float:
        """(slowest − fastest) / nominal."""
        return (self.slowest_seconds - self.fastest_seconds) / self.nominal_seconds if self.nominal_seconds else 0.0


def clock_spread(subject, free_outcome, nominal_seconds: float, examples: int, seed: int,
                 done=None) -> ClockSpread:
    """Run on ``examples`` clocks built from random parts; a seed whose parts would stop the
    ring is counted in ``stopped`` and passed over (that build has no clock to run on: a fault
    of the parts' tolerances, which ``relaybench clock`` measures, not of the program)."""
    if not has_timing(subject.machine):
        return ClockSpread(0, nominal_seconds, nominal_seconds, nominal_seconds, (),
                           f"{subject.machine.name} has no [timing] section, so no clock can be built from parts")
    times, differing, stopped = [], [], 0
    for number in range(examples):
        clock_seed = _script_seed(seed, number)
        emulator = subject.power_on()
        try:
            emulator.clock_source = spread_source(subject.machine, clock_seed)
        except MachineError:
            stopped += 1
        else:
            result, outcome = subject.run(emulator=emulator)
            times.append(result.emulator.sim_seconds)
            difference = first_difference(free_outcome, outcome)
            if difference is not None:
                differing.append((clock_seed, difference))
        if done:
            done(number + 1)
    return ClockSpread(len(times), nominal_seconds, min(times, default=nominal_seconds),
                       max(times, default=nominal_seconds), tuple(differing), stopped=stopped)


def _script_seed(seed: int, number: int) -> int:
    """The seed of one script or clock: the check's seed and its number, so each can be replayed."""
    return seed * 1_000_003 + number
