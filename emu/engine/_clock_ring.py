"""The clock generator's ring: where it stands in the phase table, and the time.

Kept apart from the control unit because it is pure bookkeeping: which
phase comes next, how long it lasts, and how to jump ahead by whole cycles
in O(1) when the fast path has run a thousand instructions at once. The
hold line and the freeze live in the control unit (``_emulator``), which
asks this ring to run one phase or to skip whole cycles.
"""

from __future__ import annotations

from ..description import Machine

__all__ = ["Ring"]


class Ring:
    """Phase position and simulated time of one clock generator.

    ``index`` is the phase the generator enters next. A *cycle boundary* is
    the position just after a falling edge; the fast path only starts from
    one, so skipping ``n`` cycles is arithmetic over the table.

    ``source``, when set, supplies each turn's phase durations (an irregular
    clock); it is asked for one turn each time the ring wraps to phase 0.
    """

    def __init__(self, machine: Machine):
        phases = machine.phases
        self.phases = phases
        self.count = len(phases)
        self.nominal = tuple(p.duration_ns for p in phases)
        self._turn_ns = sum(self.nominal)
        self._nominal_turn = list(self.nominal)
        """The turn of a regular clock; ``skip_cycles`` takes its shortcut while ``turn`` is this list."""
        self.source = None
        self.power_on_phase = machine.power_on_phase
        """The phase the ring stands in at power-on (the machine's ``[clock] power_on``)."""
        starts = [i for i in range(self.count)
                  if phases[i - 1].level == 1 and phases[i].level == 0]
        self.boundaries = tuple(starts)
        self.boundary_slot = {index: k for k, index in enumerate(starts)}
        self.phases_per_cycle = tuple(
            (starts[(k + 1) % len(starts)] - start) % self.count or self.count
            for k, start in enumerate(starts))
        self._nominal_steps = tuple(tuple(self._nominal_span(start, rest) for rest in range(len(starts)))
                                    for start in starts)
        """Per boundary and number of cycles short of a whole turn: (phases, ns) on the nominal clock."""
        high_run, i = 0, self.power_on_phase
        while phases[i].level == 0:
            i = (i + 1) % self.count
        while phases[i].level == 1:
            high_run += phases[i].duration_ns
            i = (i + 1) % self.count
        self.manual_pulse_ns = high_run
        """A STEP pulse from the panel lasts as long as the generator's first high pulse after power-on."""
        self.power_on()

    def power_on(self) -> None:
        """At the power-on phase, time 0, no phase run yet; an irregular clock (kept) gives the turn
        from here on."""
        self.index = self.power_on_phase
        self.time_ns = 0
        self.phases_run = 0
        """Phases run since power-on, whichever path ran them (wear counts ring stages from it)."""
        self.set_source(self.source)

    @property
    def at_boundary(self) -> bool:
        return self.index in self.boundary_slot

    def set_source(self, source) -> None:
        """Take phase durations from ``source`` from now on, the turn in progress included."""
        self.source = source
        self.turn = self._nominal_turn if source is None else [int(d) for d in source.turns(1)[0]]

    def run_phase(self) -> None:
        """The generator spends the current phase's duration, then moves on."""
        self.time_ns += self.turn[self.index]
        self.phases_run += 1
        self.index += 1
        if self.index == self.count:
            self.index = 0
            self._new_turn()

    def _new_turn(self) -> None:
        if self.source is not None:
            self.turn = [int(d) for d in self.source.turns(1)[0]]

    def _nominal_span(self, start: int, rest: int) -> tuple[int, int]:
        k = self.boundaries.index(start)
        per_turn = len(self.boundaries)
        phases = sum(self.phases_per_cycle[(k + j) % per_turn] for j in range(rest))
        return phases, sum(self.nominal[(start + p) % self.count] for p in range(phases))

    def skip_cycles(self, cycles: int) -> None:
        """Advance by whole cycles from a cycle boundary, as the fast path just ran them."""
        if cycles <= 0:
            return
        k = self.boundary_slot[self.index]
        per_turn = len(self.boundaries)
        turns, rest = divmod(cycles, per_turn)
        if self.turn is self._nominal_turn and self.source is None:
            phases, ns = self._nominal_steps[k][rest]
            self.time_ns += turns * self._turn_ns + ns
            self.phases_run += turns * self.count + phases
            self.index = (self.index + phases) % self.count
            return
        phases = turns * self.count + sum(self.phases_per_cycle[(k + j) % per_turn] for j in range(rest))
        self._consume(phases)

    def _consume(self, phases: int) -> None:
        self.phases_run += phases
        left_in_turn = self.count - self.index
        if phases < left_in_turn:
            self.time_ns += sum(self.turn[self.index:self.index + phases])
            self.index += phases
            return
        self.time_ns += sum(self.turn[self.index:])
        phases -= left_in_turn
        full, part = divmod(phases, self.count)
        if self.source is None:
            self.time_ns += full * sum(self.nominal)
        else:
            rows = self.source.turns(full + 1)
            self.time_ns += int(rows[:full].sum())
            self.turn = [int(d) for d in rows[full]]
        self.time_ns += sum(self.turn[:part])
        self.index = part

    def state(self) -> dict:
        return {"index": self.index, "time_ns": self.time_ns, "turn": list(self.turn)}

    def restore(self, state: dict) -> None:
        self.index = state["index"]
        self.time_ns = state["time_ns"]
        turn = list(state["turn"])
        self.turn = self._nominal_turn if turn == self._nominal_turn else turn
