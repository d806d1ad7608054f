"""Sweeps: one program run over many inputs, every run judged as ``relaybench run`` would.

A ``SweepPlan`` says everything a run needs and nothing of argparse: the
machine's text, the program's words and pauses, the base toggles and input,
what varies, what is collected and what is checked. It pickles small, so the
same plan serves a pool of local processes and the workers of a dask cluster.

Each worker builds one emulator per plan and, before each run, rewinds it to
a save point taken at power-on with the program loaded: the compiled
functions stay bound, so a run costs the run. The rows of a sweep are the
product of its inputs' values, first input slowest (as nested loops), or
``draws`` rows picked from that product at random (seeded); a chunk of work
is a slice of row numbers, so what travels is two integers.
"""

from __future__ import annotations

import hashlib
import itertools
import random
import threading
from dataclasses import dataclass, field, replace

from ..description import Machine, machine_from_text
from ._headless import run_loaded, start_emulator
from ._loading import LoadedProgram
from ._panel_files import HaltAnswer
from ._sweep_checks import compile_check
from ._sweep_spec import SweepInput, SweepOutput

__all__ = ["SweepPlan", "SweepRows", "chunk_bounds", "run_chunk", "sweep_locally", "sweep_on_cluster"]


@dataclass(frozen=True)
class SweepPlan:
    machine_text: str
    machine_path: str
    program: LoadedProgram
    """Only what a run reads: the words, pauses and where they are."""
    switches: int
    input_bytes: bytes
    inputs: tuple[SweepInput, ...]
    outputs: tuple[SweepOutput, ...]
    checks: tuple[tuple[str, str | None], ...] = ()
    """(expression, the output an ``--expect`` compares or None for ``--check``)."""
    max_cycles: int = 50_000_000
    operator: tuple[HaltAnswer, ...] = ()
    draws: int | None = None
    seed: int = 0
    key: str = field(default="", compare=False)

    @classmethod
    def made(cls, machine: Machine, machine_text: str, program: LoadedProgram, **parts) -> "SweepPlan":
        slim = LoadedProgram(program.path, program.kind, program.segments, program.pauses,
                             source_map=program.source_map)
        plan = cls(machine_text, str(machine.path), slim, **parts)
        digest = hashlib.sha256(repr(plan).encode()).hexdigest()[:16]
        _machines[digest] = machine
        return replace(plan, key=digest)

    @property
    def columns(self) -> list[str]:
        return [i.column for i in self.inputs] + [o.column for o in self.outputs]

    @property
    def rows(self) -> "SweepRows":
        return SweepRows(self.inputs, self.draws, self.seed)


class SweepRows:
    """Row numbers → input values: the product of the inputs' values, or draws from it."""

    def __init__(self, inputs, draws: int | None, seed: int):
        self.values = [i.values for i in inputs]
        self.product = 1
        for values in self.values:
            self.product *= len(values)
        self.picked = None if draws is None else random.Random(seed).sample(range(self.product), draws)

    def __len__(self) -> int:
        return self.product if self.picked is None else len(self.picked)

    def slice(self, first: int, stop: int):
        """Rows ``first``…``stop - 1`` in order (the product walked in C, not one row at a time)."""
        if self.picked is not None:
            return (self[row] for row in range(first, stop))
        return itertools.islice(itertools.product(*self.values), first, stop)

    def __getitem__(self, row: int) -> tuple:
        number = row if self.picked is None else self.picked[row]
        values = []
        for column in reversed(self.values):
            number, at = divmod(number, len(column))
            values.append(column[at])
        return tuple(reversed(values))


SWEEP_HOT_THRESHOLD = 64
"""Visits of a pc before a sweep translates its block. One run may be short, but a sweep
runs the same code row after row: a block visited once a row repays its compiling
within a few hundred rows, so the emulator's warm-up and its threshold of thousands
of visits (meant for a single run of unknown length) would only delay it."""


TICK_SECONDS = 0.5
"""How often a sweep's own process hears of its progress while no chunk ends."""


class _Runner:
    """One emulator at the save point of a plan, and the plan's inputs, outputs and checks bound to it."""

    def __init__(self, plan: SweepPlan, machine: Machine):
        self.plan = plan
        self.machine = machine
        self.emu = start_emulator(plan.program, machine, switches=plan.switches, input_bytes=plan.input_bytes)
        blocks = self.emu.blocks
        blocks.warm_up, blocks.threshold = 0, SWEEP_HOT_THRESHOLD
        self.start = self.emu.save_point()
        self.rows = plan.rows
        self.columns = plan.columns
        self.checks = [compile_check(text, self.columns, "check", column) for text, column in plan.checks]
        self.setters = [_setter(self.emu, given) for given in plan.inputs]
        self.getters = [_getter(self.emu, wanted) for wanted in plan.outputs]

    def run(self, first: int, stop: int, tick=None) -> list[tuple]:
        """Rows ``first``…``stop - 1``: (input values, output values, ok, status, warnings).

        ``ok``: every check passed and the run gave no warning (a read past the
        end of its input, a port with no device, an undefined opcode): as in
        ``relaybench test``, a run that warned does not pass, whatever it computed.
        """
        results = []
        plan, emu, start, columns, checks = self.plan, self.emu, self.start, self.columns, self.checks
        setters, getters, program, machine = self.setters, self.getters, plan.program, self.machine
        chunk = None if tick is None else (lambda _emu: tick())
        for values in self.rows.slice(first, stop):
            emu.rewind(start)
            for setter, value in zip(setters, values):
                setter(value)
            result = run_loaded(program, machine, max_cycles=plan.max_cycles, emulator=emu, operator=plan.operator,
                                chunk=chunk)
            found = tuple([getter(result) for getter in getters])
            warnings = tuple(emu.warnings) if emu.has_warnings else ()
            ok = not warnings
            if checks and ok:
                row = dict(zip(columns, values + found))
                ok = all([check.passes(row) for check in checks])
            results.append((values, found, ok, result.status, warnings))
        return results


def _setter(emu, given: SweepInput):
    """How one input is put into the machine, decided once (the emulator's memory object stays)."""
    kind, memory, target = given.kind, emu.memory, given.target
    if kind == "memory" and given.words == 1:
        return lambda value: memory.__setitem__(target, value)
    if kind == "memory" and isinstance(memory, bytearray) and emu.machine.data_bits == 8:
        return lambda value: memory.__setitem__(slice(target, target + given.words),
                                                value.to_bytes(given.words, "little"))
    if kind == "memory":
        width, mask = emu.machine.data_bits, emu.machine.data_mask
        return lambda value: memory.__setitem__(slice(target, target + given.words),
                                                [value >> width * k & mask for k in range(given.words)])
    if kind == "register":
        return lambda value: emu.set(target, value)
    if kind == "toggles":
        return lambda value: setattr(emu, "switches", value)
    return lambda value: setattr(emu, "input_bytes", value)


def _getter(emu, wanted: SweepOutput):
    """How one output is read from a run's result, decided once."""
    kind, memory, target = wanted.kind, emu.memory, wanted.target
    if kind == "memory" and isinstance(memory, bytearray) and emu.machine.data_bits == 8:
        return lambda result: int.from_bytes(memory[target:target + wanted.words], "little")
    if kind == "memory":
        width = emu.machine.data_bits
        return lambda result: sum(memory[target + k] << width * k for k in range(wanted.words))
    if kind == "register":
        return lambda result: emu.get(target)
    if kind == "console":
        return lambda result: emu.output.decode("latin-1")
    if kind == "status":
        return lambda result: result.status
    name = "switches" if kind == "toggles" else kind         # lamps, cycles, instructions
    return lambda result: getattr(emu, name)


_machines: dict[str, Machine] = {}
"""Plan key → its machine, in the process that made the plan (and processes forked from it)."""
_runners = threading.local()
"""Each thread's runners by plan key: a dask worker may run chunks in several threads."""


def run_chunk(plan: SweepPlan, first: int, stop: int, tick=None) -> list[tuple]:
    """Run rows ``first``…``stop - 1`` of ``plan`` here, building this thread's runner at its first chunk;
    ``tick()`` is called every hundred thousand cycles or so of a long run.

    Called in the sweeping process, in forked pool workers (which inherit the
    compiled machine) and on cluster workers (which build it from its text).
    """
    runners = getattr(_runners, "by_key", None)
    if runners is None:
        runners = _runners.by_key = {}
    runner = runners.get(plan.key)
    if runner is None:
        machine = _machines.get(plan.key) or machine_from_text(plan.machine_text, plan.machine_path)
        runner = runners[plan.key] = _Runner(plan, machine)
    return runner.run(first, stop, tick)


def chunk_bounds(total: int, workers: int) -> list[tuple[int, int]]:
    """Slices of row numbers: about thirty-two a worker, so progress moves and the workers end
    within a small chunk of each other (a few long runs are a chunk each, so every worker gets one)."""
    size = max(1, min(4096, -(-total // (workers * 32))))
    return [(first, min(first + size, total)) for first in range(0, total, size)]


def sweep_locally(plan: SweepPlan, workers: int, done=None) -> list[tuple]:
    """Every row of ``plan``, in order, on ``workers`` processes (this one alone for 1).

    ``done(rows_so_far)`` is called as chunks finish and, while runs are long,
    about every ``TICK_SECONDS`` between (from this process, where a progress
    line may draw). Workers are forked, so
    they start with the compiled machine, and ignore Ctrl-C: the sweeping
    process takes it and ends them, with whatever chunk they were in.
    """
    chunks = chunk_bounds(len(plan.rows), workers)
    results: dict[int, list] = {}

    def tick() -> None:
        if done is not None:
            done(sum(map(len, results.values())))

    if workers <= 1 or len(chunks) == 1:
        for first, stop in chunks:
            results[first] = run_chunk(plan, first, stop, tick=tick if done is not None else None)
            tick()
    else:
        import multiprocessing
        pool = multiprocessing.get_context("fork").Pool(min(workers, len(chunks)), initializer=_quiet_worker)
        try:
            pending = pool.imap_unordered(_run_numbered, [(plan, first, stop) for first, stop in chunks])
            while len(results) < len(chunks):
                try:
                    first, rows = pending.next(timeout=TICK_SECONDS)
                except multiprocessing.TimeoutError:
                    tick()              # long runs: the progress line still appears and its clock moves
                    continue
                results[first] = rows
                tick()
            pool.close()
        finally:
            pool.terminate()
            pool.join()
    return [row for first, _stop in chunks for row in results[first]]


def _run_numbered(task: tuple) -> tuple[int, list]:
    plan, first, stop = task
    return first, run_chunk(plan, first, stop)


def sweep_on_cluster(plan: SweepPlan, client, done=None) -> list[tuple]:
    """Every row of ``plan``, in order, on the workers of a dask.distributed ``client``."""
    from distributed import as_completed
    chunks = chunk_bounds(len(plan.rows), max(1, sum(client.nthreads().values())))
    scattered = client.scatter(plan, broadcast=True)
    futures = {client.submit(run_chunk, scattered, first, stop, pure=False): first for first, stop in chunks}
    results: dict[int, list] = {}
    try:
        for future in as_completed(futures):
            results[futures[future]] = future.result()
            if done is not None:
                done(sum(map(len, results.values())))
    finally:
        client.cancel(list(futures))
    return [row for first, _stop in chunks for row in results[first]]


def _quiet_worker() -> None:
    import signal
    signal.signal(signal.SIGINT, signal.SIG_IGN)
