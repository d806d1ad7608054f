"""Letting the generator run: ``Emulator.run`` and its fast paths, watched or not.

A mixin of the control unit's ``Emulator``. A run takes the fast path
(fused instructions, or translated blocks) whenever nothing can happen
that the stepping path would place differently, and steps phase by phase
otherwise. A condition that only says True or False (``until``) is asked
after every instruction; one with a lookout (``_lookout``) only where it
can become true, so breakpoints, watchpoints and debugger goals keep the
run on blocks. An instruction the fast path cannot fuse (a halt among
them) runs cycle by cycle without walking the phase table while nothing
watches the phases (``_step_unwatched``).
"""

from __future__ import annotations

from dataclasses import dataclass

from ._lookout import change_test, stop_words, stores_memory, watched_slots

__all__ = ["StopReason", "_Running"]

_FETCH_START = (-1, 0)
"""The sequencer's state at an instruction boundary: the first fetch step next."""


@dataclass(frozen=True)
class StopReason:
    """Why a run ended: halted, stopped, cycle_limit, breakpoint or condition."""
    kind: str
    pc: int
    address: int | None = None
    """For ``halted``: the address of the instruction that drove halt."""


class _Running:
    """``run`` and its helpers; the ``Emulator`` supplies the state they drive."""

    def run(self, max_cycles: int | None = None, until=None, breakpoints=(), chunk=None,
            chunk_cycles: int = 100_000) -> StopReason:
        """Let the generator run until it freezes, a limit, a breakpoint or a condition.

        ``until(emu)`` and breakpoints (addresses) are checked at every
        instruction boundary reached during the run; ``until`` sees counters,
        ring and time up to date. An ``until`` with a ``lookout(emu)`` method
        (returning a ``Lookout``) is asked only where that says it can become
        true, so the run keeps block translation. ``chunk(emu)`` is called
        about every ``chunk_cycles`` cycles, with counters and time up to
        date; it may flip the run switch (the debugger's Ctrl-C does that).
        """
        target = None if max_cycles is None else self.cycles + max_cycles
        points = frozenset(breakpoints)
        if until is not None and hasattr(until, "lookout"):
            return self._run_looking(target, points, until, chunk, chunk_cycles)
        applied = [0, 0]
        watch = self._watcher(points, until, applied) if points or until is not None else None
        next_chunk = self.cycles + chunk_cycles
        while True:
            ended = self._ended(target)
            if ended is not None:
                return ended
            if chunk is not None and self.cycles >= next_chunk:
                chunk(self)
                next_chunk = self.cycles + chunk_cycles
                continue
            fast = self._fast_path_open()
            if fast:
                budget = self._budget(target, next_chunk if chunk is not None else None, chunk_cycles)
                stop_at = self.cycles + budget
                limit = budget - self._max_fused
                if limit >= 0:
                    blocks, run_free, run_free_watching, _stopping = self._paths()
                    if blocks.enabled and until is None:
                        cycles, count, hit = blocks.run(budget, points)
                    elif watch is None:
                        cycles, count, hit = run_free(limit)
                    else:
                        cycles, count, hit = run_free_watching(limit, watch)
                    self._account(cycles - applied[0], count - applied[1])
                    applied[:] = 0, 0
                    if hit:
                        return self._watch_reason(points)
                    if cycles > limit:
                        continue
            elif self._observers and watch is None and self._run_traced(
                    self._budget(target, next_chunk if chunk is not None else None, chunk_cycles)):
                continue
            done = self.instructions
            if fast:
                self._step_unwatched(stop_at)
                if watch is None and self.halt_latch and self.cycles < stop_at:
                    self._hold_if_due()     # what the next pass would do first: nothing else is due before it
            else:
                self.advance_phase()
            if self.instructions != done and watch is not None and watch():
                return self._watch_reason(points)

    def _step_unwatched(self, stop_at: int) -> None:
        """The instruction at hand, one micro-step per cycle, without walking the phase table.

        Where the fused path cannot go (a halt, an undefined word, a step that
        loops, too little budget left) and nobody watches the phases, each
        cycle is the ring skipping to its falling edge whole and one compiled
        micro-step, in the stepping path's order, so that wear (lines and ring
        phases) and an observer whose window opens on that edge see the same.
        It ends at the instruction's end, the cycle that sets the halt latch
        (from there the generator walks to its hold point as usual) or cycle
        ``stop_at`` (the end of the fast path's budget): exactly where the
        stepping path's checks, made between phases, would stop it. A halting
        instruction runs to its latch in one call where nothing counts or
        waits (``_run_halting``): what a headless run ends with.
        """
        if self._seq == _FETCH_START and self._tally is None and self._next_scheduled is None:
            if self._run_halting(stop_at) and (self.halt_latch or self._seq == _FETCH_START
                                               or self.cycles >= stop_at):
                self._released = False
                return
        ring, microstep = self.ring, self._microstep
        while True:
            ring.skip_cycles(1)
            microstep()
            if self.halt_latch or self.at_instruction_boundary or self.cycles >= stop_at:
                break
        self._released = False

    def _run_halting(self, stop_at: int) -> bool:
        """A halting instruction's fetch and steps up to the one that drives halt, in one call.

        Where nothing counts lines or waits for a cycle, nothing can tell
        those cycles run one by one from their running in one compiled call
        (the ring skips them whole, as after any fused instruction), so the
        state is the stepping path's. False, with nothing run, where the
        word does not start such an instruction or its cycles would pass
        ``stop_at``.
        """
        word = self._peek()
        halting = self._halting[word]
        if halting is None:
            return False
        index = self._decode[word]
        last = self._halting_steps[index]
        cycles = len(self._fetch_steps) + last + 1
        if self.cycles + cycles > stop_at:
            return False
        self._instruction_address = self._s[self._pc]
        halted = halting()
        self.ring.skip_cycles(cycles)
        self.cycles += cycles
        if last + 1 < len(self._instruction_steps[index]):
            self._seq = (index, last + 1)
        else:
            self.instructions += 1
        if halted:
            self.halt_address = self._instruction_address
            self._set_latch(True)
        return True

    def _ended(self, target: int | None) -> StopReason | None:
        if self.frozen:
            return self._frozen_reason()
        if target is not None and self.cycles >= target:
            return StopReason("cycle_limit", self.pc)
        return None

    def _budget(self, target: int | None, next_chunk: int | None, chunk_cycles: int) -> int:
        """Cycles the fast path may run now: to the next chunk, the limit, a scheduled observer."""
        budget = chunk_cycles if next_chunk is None else next_chunk - self.cycles
        if target is not None:
            budget = min(budget, target - self.cycles)
        if self._next_scheduled is not None:
            budget = min(budget, self._next_scheduled - self.cycles)
        return budget

    def _run_looking(self, target, points, until, chunk, chunk_cycles: int) -> StopReason:
        """``run`` with a condition that has a lookout: asked only at its stop words, its
        watched stores, its ``within`` and after each instruction of the stepping path."""
        next_chunk = self.cycles + chunk_cycles
        lookout, stops, slots, changed = self._lookout(until)
        shortest = max(len(self.machine.fetch), 1)
        unchanged = False
        while True:
            ended = self._ended(target)
            if ended is not None:
                return ended
            if chunk is not None and self.cycles >= next_chunk:
                chunk(self)
                next_chunk = self.cycles + chunk_cycles
                unchanged = False
                continue
            fast = self._fast_path_open()
            if fast:
                budget = self._budget(target, next_chunk if chunk is not None else None, chunk_cycles)
                if lookout.within is not None:
                    budget = min(budget, lookout.within * shortest)
                stop_at = self.cycles + budget
                limit = budget - self._max_fused
                if limit >= 0:
                    blocks, _free, _watching, run_free_stopping = self._paths()
                    if blocks.enabled:
                        cycles, count, hit = blocks.run(budget, points, stops, lookout.memory, unchanged, changed,
                                                        slots)
                        unchanged = True
                    else:
                        cycles, count, hit = run_free_stopping(limit, stops, points, changed)
                    self._account(cycles, count)
                    if hit or lookout.within is not None and count:
                        if self.pc in points:
                            return StopReason("breakpoint", self.pc)
                        if until(self):
                            return StopReason("condition", self.pc)
                        if lookout.within is not None:
                            lookout, stops, slots, changed = self._lookout(until)
                            unchanged = False
                    if hit or cycles > limit:
                        continue
            unchanged = False
            done = self.instructions
            if fast:
                self._step_unwatched(stop_at)
            else:
                self.advance_phase()
            if self.instructions != done:
                if self.pc in points:
                    return StopReason("breakpoint", self.pc)
                if until(self):
                    return StopReason("condition", self.pc)
                if lookout.within is not None:
                    lookout, stops, slots, changed = self._lookout(until)

    def _lookout(self, until):
        """The condition's lookout now, its stop words and watched slots (made once per
        emulator and set) and the test of those slots against their values now.

        Without blocks, stores are not watched word by word: every
        instruction that may store is a stop word when memory is watched.
        """
        lookout = until.lookout(self)
        stores = bool(lookout.memory) and not self.blocks.enabled
        key = (lookout.instructions, lookout.registers, stores)
        made = self._stop_tables.get(key)
        if made is None:
            table = stop_words(self.machine, lookout)
            if stores:
                table = bytes(a | b for a, b in zip(table, stores_memory(self.machine)))
            made = self._stop_tables[key] = (table, watched_slots(self.machine, lookout))
        table, slots = made
        return lookout, table, slots, change_test(self.machine, self._s, slots)

    def _watcher(self, points, until, applied):
        """The check made after every instruction of a watched run.

        On the fast path it is called with the run's own counts so far;
        ``applied`` remembers how much of them the counters already hold, so
        ``until`` sees cycles, ring and time up to date.
        """
        s, pc = self._s, self._pc

        def watch(cycles=0, count=0):
            if s[pc] in points:
                return True
            if until is None:
                return False
            self._account(cycles - applied[0], count - applied[1])
            applied[:] = cycles, count
            return until(self)
        return watch

    def _account(self, cycles: int, count: int) -> None:
        """Bring counters and the ring up to date with work the fast path has done."""
        if cycles:
            self.cycles += cycles
            self.instructions += count
            self.ring.skip_cycles(cycles)
            self._released = False

    def _watch_reason(self, points) -> StopReason:
        return StopReason("breakpoint" if self.pc in points else "condition", self.pc)
