"""Stepping and stopping: when a clock the debugger lets go must stop, and why it did.

Three things move the machine for the debugger: the engine's run (its fast
path, traced by replay in ``run_clock``), STEP pulses given one instruction
at a time while the generator is frozen, and the live view's phases paced
against the wall clock. The rules for stopping are the same for all three
and are written here once, as a ``RunPolicy``: at each instruction boundary
reached, a (watched) breakpoint at pc first (the engine's order), then a watchpoint
or the command's goal (an instruction count, a call depth); besides that
the cycle limit and Ctrl-C. Every drive returns a ``Stop`` that puts the
reason in words, so ``go``, ``pulse``, ``instr``, ``over``, ``leave`` and
``live`` say the same sentence for the same event.

A halt or pause passed while stepping stops the stepping right after the
STEP pulse that drove it, announced by ``HaltPassed``: the latch lamp has
just lit, and an operator stops pressing there. The running clock stops
at the same instruction, freezing at its next hold point (on ref8 the hold
point follows every falling edge, so both end at one place).

``STATE_TABLE`` is the operator's model of the stop states, shown by
``help``: between commands the clock is always frozen, either by the
switch (STOP) or by the halt latch (HALT); a debugger stop (breakpoint,
watchpoint, goal, cycle limit) throws the switch to STOP at the
instruction boundary where it fired, as an operator would, so STEP works
at once after it.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from emu import StopReason

from ._arguments import watched_hex
from ._conditions import AnyOf, Watch, Watches
from ._presses import PressWatch, Presses
from ._program import Places
from ._running import run_clock

__all__ = ["AtBreakpoint", "Breakpoint", "CycleLimit", "GoalReached", "HaltPassed", "HaltedByProgram", "PlantedHalt",
           "RunPolicy", "STATE_TABLE", "Stop", "SteppingInterrupted", "StoppedBySwitch", "WatchFired",
           "stop_state"]

STATE_TABLE = """\
Stop states (the panel's first line and 'why' name the one you are in):
  state   what holds the clock   go            pulse / instr / over / leave     resume               throw run | stop
  STOP    switch at STOP         runs (RUN)    STEP pulses                      nothing to clear     runs | already
  HALT    halt latch set         refused       STEP pulses (latch stays set)    clears the latch;    switch moves;
                                                                                runs if at RUN       still held
A breakpoint, watchpoint, finished step or cycle limit throws the switch to STOP where it
fired, so it leaves the clock in STOP. Any halt or pause passed while stepping stops the
steps there and is announced; 'pulse N' and steps also stop at the cycle limit and on Ctrl-C.
'reset' clears pc, flags and latch (memory kept); 'restart' powers off, reloads the program
and rewinds input, ports and counters (breakpoints stay)."""


def stop_state(emu) -> str:
    """The state of the table above: "HALT", "STOP", or "RUNNING" (only the live view leaves it so)."""
    if emu.frozen and emu.halt_latch:
        return "HALT"
    if emu.frozen:
        return "STOP"
    return "RUNNING"


@dataclass(frozen=True)
class Breakpoint:
    """A place to stop at. A *watched* one is the debugger holding the clock
    when pc reaches ``address``, memory untouched; a *planted* one is a halt
    assembled into the program at ``address``, in front of the statement at
    ``planted`` (file, line), that stops the machine by itself."""
    number: int
    address: int
    label: str
    planted: tuple[str, int] | None = None


class Stop:
    """Why the clock stopped; ``describe`` gives the sentence the debugger prints."""

    def describe(self, places: Places) -> str:
        raise NotImplementedError(type(self).__name__)


@dataclass(frozen=True)
class HaltedByProgram(Stop):
    address: int
    """The halt or pause instruction that set the latch."""
    pc: int

    def describe(self, places: Places) -> str:
        return (f"halted by the program: {places.halt_kind(self.address)} at {places.name(self.address)}; "
                f"the clock froze with pc at {places.hex(self.pc)}")


@dataclass(frozen=True)
class PlantedHalt(Stop):
    numbers: tuple[int, ...]
    address: int
    """The planted halt that set the latch; pc is past it, at its statement."""

    def describe(self, places: Places) -> str:
        return (f"breakpoint {', '.join(map(str, self.numbers))}: the planted halt at {places.name(self.address)} "
                f"set the halt latch; RESUME goes on with the statement there")


@dataclass(frozen=True)
class HaltPassed(Stop):
    address: int
    """The halt or pause instruction whose STEP pulse drove halt."""

    def describe(self, places: Places) -> str:
        return (f"passed the {places.halt_kind(self.address)} at {places.name(self.address)}: "
                f"the halt latch is set; stepping stopped there")


@dataclass(frozen=True)
class StoppedBySwitch(Stop):
    ctrl_c: bool

    def describe(self, places: Places) -> str:
        how = " (Ctrl-C)" if self.ctrl_c else ""
        return f"stopped by the stop switch{how}: the clock froze at the hold point"


@dataclass(frozen=True)
class CycleLimit(Stop):
    limit: int
    stepping: bool
    """Reached by STEP pulses (the generator stays frozen) rather than by the running clock."""

    def describe(self, places: Places) -> str:
        if self.stepping:
            return f"cycle limit of {self.limit:,} reached while stepping"
        return f"cycle limit of {self.limit:,} cycles reached; the switch is thrown to STOP there"


@dataclass(frozen=True)
class AtBreakpoint(Stop):
    numbers: tuple[int, ...]
    address: int

    def describe(self, places: Places) -> str:
        return f"breakpoint {', '.join(map(str, self.numbers))} at {places.name(self.address)}"


@dataclass(frozen=True)
class WatchFired(Stop):
    watch: Watch
    old: int
    new: int
    pc: int
    """Where the clock stopped: the instruction before it wrote the watched value."""

    def describe(self, places: Places) -> str:
        old, new = (watched_hex(places.machine, self.watch, value) for value in (self.old, self.new))
        return (f"watchpoint {self.watch.number}: {self.watch.label} changed from {old} to "
                f"{new} (the instruction before {places.name(self.pc)} wrote it)")


@dataclass(frozen=True)
class GoalReached(Stop):
    why: str
    """The goal's own words: "2 instructions done", "returned to the caller"…"""

    def describe(self, places: Places) -> str:
        return self.why


@dataclass(frozen=True)
class SteppingInterrupted(Stop):
    def describe(self, places: Places) -> str:
        return "stepping stopped by Ctrl-C"


class RunPolicy:
    """The stopping rules of one command, and the three ways of moving the machine under them.

    ``goal`` is a condition from ``_conditions`` (called at instruction
    boundaries, with a ``why``); watchpoints are watched from the values they
    have now; ``limit`` counts cycles (the pulses of a frozen clock);
    ``interrupted()`` is the Ctrl-C flag.
    """

    def __init__(self, emu, breakpoints=(), watches=(), goal=None, *, limit: int | None = None,
                 interrupted: Callable[[], bool] = lambda: False):
        self.emu = emu
        self.breakpoints = list(breakpoints)
        self.addresses = frozenset(b.address for b in self.breakpoints if b.planted is None)
        watches = list(watches)
        parts = [c for c in (Watches(watches, emu) if watches else None, goal) if c is not None]
        self.condition = AnyOf(parts) if parts else None
        self.limit = limit
        self.interrupted = interrupted

    def at_boundary(self) -> Stop | None:
        """The check at an instruction boundary: a breakpoint first, then a watchpoint or the goal."""
        e = self.emu
        if e.pc in self.addresses:
            return self._breakpoint(e.pc)
        if self.condition is not None and self.condition(e):
            return self._fired()
        return None

    # ----- the three drives ---------------------------------------------------

    def run(self, recorder) -> Stop:
        """Let the generator run: the engine checks the same rules on its fast path."""
        ended = run_clock(self.emu, recorder, condition=self.condition, breakpoints=self.addresses,
                          max_cycles=self.limit, interrupted=self.interrupted)
        return self._from_engine(ended.stop, ended.interrupted)

    def pulse(self, count: int | None = None, bus=lambda: None, keep: int = 0) -> Presses:
        """STEP presses until a rule stops them, with what they gave.

        Without ``count`` the presses go on until a rule at an instruction
        boundary fires (an instruction step); with it, ``count`` presses are
        given (``pulse N``, which checks no breakpoints) and the stop is None
        when all were. Either way a press that drives halt, the limit (it
        counts pulses and is needed: a goal may never be reached) and
        Ctrl-C stop them. A press with ``[clock] step = "hold"`` always runs
        on to its hold point; the rules look at every boundary it passed.
        The generator must be frozen (STEP does nothing otherwise).
        ``bus()`` and ``keep`` fill in the first micro-steps (``Presses``).
        """
        e = self.emu
        watch = PressWatch(self.at_boundary if count is None else None, bus, keep)
        start = e.cycles
        e.observe(watch)
        try:
            while count is None or watch.press < count:
                watch.start_press()
                if not e.press_step():
                    raise ValueError("STEP presses need a frozen generator")
                stop = self._after_press(watch, e.cycles - start)
                if stop is not None:
                    return Presses(stop, watch.press, e.cycles - start, watch.steps)
        finally:
            e.unobserve(watch)
        return Presses(None, watch.press, e.cycles - start, watch.steps)

    def _after_press(self, watch: PressWatch, pulses: int) -> Stop | None:
        if watch.halted:
            return HaltPassed(self.emu.halt_address)
        if watch.fired is not None:
            return watch.fired
        if pulses >= self.limit:
            return CycleLimit(self.limit, stepping=True)
        if self.interrupted():
            return SteppingInterrupted()
        return None

    def follow(self, target_ns: Callable[[], float], max_phases: int) -> Stop | None:
        """Phase by phase while each phase ends by ``target_ns()`` (real time); None unless a rule fired.

        Returns early, with None, when the generator freezes at a hold point.
        """
        e = self.emu
        for _ in range(max_phases):
            if e.time_ns + e.ring.turn[e.phase_index] > target_ns():
                return None
            done = e.instructions
            if not e.advance_phase():
                return None
            if e.instructions != done and (stop := self.at_boundary()) is not None:
                return stop
        return None

    # ----- naming what happened -------------------------------------------------

    def _from_engine(self, stop: StopReason, ctrl_c: bool) -> Stop:
        if stop.kind == "halted":
            planted = tuple(b.number for b in self.breakpoints if b.planted and b.address == stop.address)
            return PlantedHalt(planted, stop.address) if planted else HaltedByProgram(stop.address, stop.pc)
        if stop.kind == "stopped":
            return StoppedBySwitch(ctrl_c)
        if stop.kind == "cycle_limit":
            return CycleLimit(self.limit, stepping=False)
        if stop.kind == "breakpoint":
            return self._breakpoint(stop.pc)
        if stop.kind == "condition":
            return self._fired()
        raise ValueError(f"unknown engine stop '{stop.kind}'")

    def _breakpoint(self, address: int) -> AtBreakpoint:
        return AtBreakpoint(tuple(b.number for b in self.breakpoints if b.address == address), address)

    def _fired(self) -> Stop:
        fired = self.condition.fired
        if isinstance(fired, Watches):
            watch, old, new = fired.hit
            return WatchFired(watch, old, new, self.emu.pc)
        return GoalReached(fired.why)
