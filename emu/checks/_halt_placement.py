"""Halt placement: may a halt go in front of this statement without changing the result?

For each instruction statement (or a sample of them) the program is
assembled again with the machine's pause in front of it, as a builder
burns a halt into the program (``asm.plant_halts``: everything after it
moves), run with RESUME pressed each time the planted halt is reached, and
its result compared with the unplanted run's
``_outcomes``: registers, flags, lamps, console, the data the labels name,
the checks and dumps). A statement where the result changes gets the first divergence
and the nearest cause (``_causes``).

The statements are shared out among worker processes, one per core; each
worker loads the machine and the program once, runs the unplanted program
once, and then only plants and runs (the fast path: no observer).
"""

from __future__ import annotations

import os
import random
import signal
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass

import asm

from ..description import Machine, load_machine
from ..runs import ProgramError
from ._causes import nearest_cause, statement_text
from ._outcomes import difference_text, first_difference, labelled_data, watched_memory
from ._subject import load_subject

__all__ = ["Placement", "halt_placement", "planting_places"]


@dataclass(frozen=True)
class Placement:
    """One statement with a halt planted in front of it."""
    file: str
    line: int
    statement: str
    changed: str | None = None
    """The first divergence in words; None when the result is the same."""
    cause: str | None = None
    extra_cycles: int = 0
    """How much longer the run took (the halt's own cycles, once per pass)."""
    extra_seconds: float = 0.0
    """The same in real time: what a halt in a timing loop does to the loop's duration."""
    error: str | None = None
    """Why the program with a halt there could not be assembled or loaded."""

    @property
    def safe(self) -> bool:
        return self.changed is None and self.error is None


def planting_places(program: asm.Program, sample: int | None, seed: int) -> list[tuple[str, int]]:
    """Every instruction statement once (a statement of an included file counted once), or
    ``sample`` of them drawn with ``seed``, in program order."""
    places = list(dict.fromkeys((e.file, e.line) for e in program.lines if e.kind == "code"))
    if sample is not None and sample < len(places):
        chosen = set(random.Random(seed).sample(places, sample))
        places = [place for place in places if place in chosen]
    return places


def halt_placement(path: str, machine: Machine, places, *, dumps=(), max_cycles=None,
                   workers: int | None = None, done=None) -> list[Placement]:
    """Plant a halt in front of each place, in worker processes (one per core unless
    ``workers`` says otherwise); ``done(n)`` after each. Workers load the machine from its
    file, so a machine made from text alone is checked in this process."""
    workers = max(1, min(workers or os.cpu_count() or 1, len(places)))
    if not os.path.isfile(machine.path):
        workers = 1
    results = []
    pool = None
    try:
        if workers == 1:
            _start_worker(path, machine, dumps, max_cycles)
            planted = map(_plant_one, places)
        else:
            pool = ProcessPoolExecutor(max_workers=workers, initializer=_start_pool_worker,
                                       initargs=(path, machine.path, tuple(dumps), max_cycles))
            planted = pool.map(_plant_one, places, chunksize=max(1, len(places) // (workers * 8)))
        for result in planted:
            results.append(result)
            if done:
                done(len(results))
    finally:
        _worker.clear()
        if pool is not None:
            pool.shutdown(cancel_futures=True)     # Ctrl-C: the statements not begun are dropped
    return results


_worker = {}
"""What a worker keeps between statements: the subject and its unplanted run."""


def _start_pool_worker(*setup) -> None:
    signal.signal(signal.SIGINT, signal.SIG_IGN)    # Ctrl-C is the parent's to handle
    _start_worker(*setup)


def _start_worker(path: str, machine: Machine | str, dumps, max_cycles) -> None:
    machine = machine if isinstance(machine, Machine) else load_machine(machine)
    subject = load_subject(path, machine, dumps=dumps, max_cycles=max_cycles)
    watched = watched_memory(subject.loaded, subject.dumps, checks=False) + labelled_data(subject.program)
    plain, outcome = subject.run(watched=watched)
    _worker.update(subject=subject, plain=plain, outcome=outcome)


def _plant_one(place: tuple[str, int]) -> Placement:
    subject, plain, plain_outcome = _worker["subject"], _worker["plain"], _worker["outcome"]
    file, line = place
    statement = statement_text(subject.program.sources, file, line)
    try:
        planting = asm.plant_halts(subject.program, [place])
        loaded = subject.planted_program(planting)
        emulator = subject.power_on(loaded)
    except asm.AsmError as exc:
        return Placement(file, line, statement, error=exc.diagnostics[0].message)
    except ProgramError as exc:         # the planted image does not fit in memory
        return Placement(file, line, statement, error=exc.message)
    watched = (watched_memory(loaded, subject.dumps, planting.relocate, checks=False)
               + labelled_data(subject.program, planting.relocate))
    planted, outcome = subject.run(loaded=loaded, emulator=emulator, watched=watched,
                                   planted=frozenset(planting.halt_places))
    extra = planted.emulator.cycles - plain.emulator.cycles
    extra_seconds = planted.emulator.sim_seconds - plain.emulator.sim_seconds
    difference = first_difference(plain_outcome, outcome, moved=planting.relocate)
    changed = None if difference is None else difference_text(difference, "as written", "with the halt planted")
    cause = nearest_cause(planting, subject.machine) if changed is not None else None
    return Placement(file, line, statement, changed, cause, extra, extra_seconds)
