"""Letting the clock run from the debugger: fast, stoppable, and still traced.

A run takes the engine's fast path, which only works with no observer
attached, so the timing recorder is detached while it goes. Two things
are done from the engine's ``chunk`` callback, between chunks of work:

* Ctrl-C is the stop switch. The SIGINT handler only sets a flag; here the
  flag becomes ``set_switch_run(False)``, and the engine carries the clock
  on to the next hold point and freezes there, as the hardware would.
* Checkpoints: now and then the whole machine state is saved. When the run
  ends, its last cycles are run again from a checkpoint on a scratch
  emulator with the recorder attached. The engine is deterministic, so the
  replay ends in the same state; it is checked, and a replay that
  disagrees is a bug of the engine or of the replay: ``ReplayMismatch``,
  which the session shows as an internal error.
"""

from __future__ import annotations

from dataclasses import dataclass

from emu import Emulator, StopReason

from ._trace import Recorder

__all__ = ["CHUNK_CYCLES", "ClockRun", "ReplayMismatch", "run_clock"]

CHUNK_CYCLES = 20_000
"""Cycles between two looks at the Ctrl-C flag (a few milliseconds)."""
CHECKPOINT_EVERY = 5
"""Chunks between two checkpoints."""


@dataclass(frozen=True)
class ClockRun:
    """How one run of the clock ended, as the engine tells it."""
    stop: StopReason
    interrupted: bool
    """The stop switch was thrown by Ctrl-C during the run."""


class ReplayMismatch(Exception):
    """The replay of a run, made for the timing diagram, ended elsewhere than the run.

    The engine is deterministic, so this is a bug, never bad input; the
    machine keeps the state of the run itself and the diagram is left empty.
    """


@dataclass
class _Checkpoint:
    cycles: int
    state: dict
    condition: object


def run_clock(emu: Emulator, recorder: Recorder, *, condition=None, breakpoints=(),
              max_cycles: int | None = None, interrupted=lambda: False) -> ClockRun:
    """Run the generator until it freezes, a breakpoint, ``condition`` or the limit.

    ``recorder`` must be attached to ``emu``; it is attached again afterwards.
    On an irregular clock the run keeps the recorder (and so steps phase by
    phase): a replay could not draw the same phase durations again.
    """
    if emu.clock_source is not None:
        flip: list[int] = []

        def watch_for_ctrl_c(e: Emulator) -> None:
            if interrupted() and e.switch_run:
                flip.append(e.cycles)
                e.set_switch_run(False)
        stop = emu.run(max_cycles=max_cycles, until=condition, breakpoints=breakpoints,
                       chunk=watch_for_ctrl_c, chunk_cycles=CHUNK_CYCLES)
        return ClockRun(stop, bool(flip))
    emu.unobserve(recorder)
    start = _Checkpoint(emu.cycles, emu.snapshot_state(), _clone(condition))
    recent: list[_Checkpoint] = []
    flip: list[int] = []
    chunks = 0

    def chunk(e: Emulator) -> None:
        nonlocal chunks
        chunks += 1
        if chunks % CHECKPOINT_EVERY == 0:
            recent[:] = recent[-1:] + [_Checkpoint(e.cycles, e.snapshot_state(), _clone(condition))]
        if interrupted() and e.switch_run:
            flip.append(e.cycles)
            e.set_switch_run(False)

    limit = None if max_cycles is None else start.cycles + max_cycles
    try:
        stop = emu.run(max_cycles=max_cycles, until=condition, breakpoints=breakpoints,
                       chunk=chunk, chunk_cycles=CHUNK_CYCLES)
    finally:
        emu.observe(recorder)
    _replay(emu, recorder, [start, *recent], stop.kind == "condition",
            breakpoints if stop.kind == "breakpoint" else (), limit, flip[0] if flip else None)
    return ClockRun(stop, bool(flip))


def _clone(condition):
    return None if condition is None else condition.clone()


def _replay(emu, recorder, checkpoints, has_condition, breakpoints, limit, flip) -> None:
    """Run the tail of the run again with the recorder attached; raise if it disagrees.

    The replay needs only what ended the run: it cannot stop earlier than the
    run did, so a run ended by a halt, the stop switch or the limit is
    replayed without its condition and breakpoints, on the unwatched fast path.
    """
    end = emu.cycles
    wanted = recorder.columns.maxlen // max(len(emu.machine.phases), 1)
    usable = [c for c in checkpoints if c.cycles <= end - wanted]
    origin = usable[-1] if usable else checkpoints[0]
    scratch = Emulator(emu.machine)
    scratch.restore_state(origin.state)
    condition = _clone(origin.condition) if has_condition else None
    tail = Recorder(emu.machine, recorder.columns.maxlen)
    attach_at = max(origin.cycles, end - wanted)
    marks = sorted({attach_at} | ({flip} if flip is not None and flip >= origin.cycles else set()))
    for mark in marks:
        stop = scratch.run(max_cycles=mark - scratch.cycles, until=condition, breakpoints=breakpoints)
        if stop.kind != "cycle_limit" or scratch.cycles != mark:
            _disagree(recorder, f"the replay stopped ({stop.kind}) at cycle {scratch.cycles:,}, "
                                f"before cycle {mark:,} that the run went through")
        if mark == attach_at:
            scratch.observe(tail)
        if mark == flip:
            scratch.set_switch_run(False)
    scratch.run(max_cycles=None if limit is None else limit - scratch.cycles,
                until=condition, breakpoints=breakpoints)
    ran, replayed = emu.snapshot_state(), scratch.snapshot_state()
    if ran != replayed:
        differ = ", ".join(key for key in ran if ran[key] != replayed.get(key))
        _disagree(recorder, f"after cycle {emu.cycles:,} the two differ in {differ}")
    if origin is checkpoints[0] and not usable:
        recorder.columns.extend(tail.columns)
    else:
        recorder.clear()
        recorder.columns.extend(tail.columns)
        recorder.gap = True


def _disagree(recorder, what: str):
    """No diagram rather than a wrong one; then the mismatch surfaces."""
    recorder.clear()
    raise ReplayMismatch(f"the replay of the last run for the timing diagram disagrees with it: {what}")
