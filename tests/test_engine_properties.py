"""Properties of the clock, the control unit and the two execution paths (P1–P7).

Each runs on every machine file under emu/machines/ and tests/machines/
(engine_support discovers them): among them ref8 (a hold point after every
pulse) and acc12 (a hold point after every other pulse), so nothing here
holds by accident of one phase table.

The reference for "what the program does" is a second emulator running free
on the fast path, resuming by itself at every halt and recording the state
at each instruction boundary. Whatever panel actions the machine under test
receives, whenever it stands at an instruction boundary its state must be
the reference's state after the same number of instructions (P4, and P6
since one side steps phase by phase and the other runs fused).
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, settings
from hypothesis import strategies as st
from hypothesis.stateful import RuleBasedStateMachine, initialize, invariant, precondition, rule

from emu import Emulator
from emu.checks import PulseWatch
from emu.testing import programs

from engine_support import MACHINES, after_step_press, boot, datapath_state, skip_unless_properties_run

SETTINGS = settings(max_examples=40, stateful_step_count=40, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


def _fingerprint(emu: Emulator) -> tuple:
    regs, memory, output, lamps, position = datapath_state(emu)
    return regs, hash(memory), output, lamps, position


class _Reference:
    """Free-running twin: the state after each instruction, computed on demand."""

    def __init__(self, machine, words):
        self.emu = boot(machine, words)
        self.states = [_fingerprint(self.emu)]

    def _record(self, emu):
        self.states.append(_fingerprint(emu))
        return len(self.states) > self.wanted

    def after(self, count: int) -> tuple:
        self.wanted = count
        while len(self.states) <= count:
            reason = self.emu.run(max_cycles=100_000, until=self._record)
            if reason.kind == "halted":
                self.emu.press_resume()
        return self.states[count]


class _PulseWatch(PulseWatch):
    """P1 as it happens (the watch ``relaybench check`` uses): every generator pulse lasts
    its nominal time. Also counts the generator's pulses since the halt latch was set, for P5."""

    def __init__(self, machine):
        super().__init__(machine)
        self.pulses_since_latch = None

    def edge(self, emu, level):
        super().edge(emu, level)
        if level == 0 and not emu.frozen and self.pulses_since_latch is not None:
            self.pulses_since_latch += 1

    def latch(self, emu, is_set):
        self.pulses_since_latch = 0 if is_set else None

    def panel(self, emu, action):
        if action == "step" and emu.frozen:
            self.pulses_since_latch = None     # the panel moved the machine on: no claim


def _phases_to_hold(machine, index: int, released: bool) -> int:
    """How many phases the generator runs from ``index`` before it enters a hold point."""
    phases, count = machine.phases, 0
    if released:
        index, count = (index + 1) % len(phases), 1
    while not phases[index].hold:
        index, count = (index + 1) % len(phases), count + 1
    return count


def _nominal_time_to_hold(machine, index: int) -> int:
    """The nominal time from entering ``index`` to entering the next hold point."""
    phases, total = machine.phases, 0
    while True:
        total += phases[index].duration_ns
        index = (index + 1) % len(phases)
        if phases[index].hold:
            return total


def _cycles_after_latch_bound(machine) -> int:
    """Most pulses that can follow a falling edge before the next hold point."""
    phases, worst = machine.phases, 0
    for i in range(len(phases)):
        if phases[i - 1].level == 1 and phases[i].level == 0:
            pulses, j = 0, i
            while not phases[j].hold:
                nxt = (j + 1) % len(phases)
                if phases[j].level == 1 and phases[nxt].level == 0:
                    pulses += 1
                j = nxt
            worst = max(worst, pulses)
    return worst


class PanelMachine(RuleBasedStateMachine):
    """Random programs and random panel actions at random phases and times."""

    machine_name = "ref8"
    observed = True

    @initialize(data=st.data())
    def power_on(self, data):
        self.machine = MACHINES[self.machine_name]
        words = data.draw(programs(self.machine))
        self.reference = _Reference(self.machine, words)
        self.emu = boot(self.machine, words)
        self.released = False       # let go from a hold point, no phase run since
        self.watch = None
        if self.observed:
            self.watch = _PulseWatch(self.machine)
            self.emu.observe(self.watch)

    # ----- panel actions

    @rule()
    def throw_to_stop(self):
        self.emu.set_switch_run(False)

    @rule()
    def throw_to_run(self):
        was_frozen = self.emu.frozen
        self.emu.set_switch_run(True)
        self._note_release(was_frozen)

    def _note_release(self, was_frozen):
        if was_frozen and not self.emu.frozen:
            self.released = True

    def _note_time(self, before_ns):
        if self.emu.time_ns != before_ns:
            self.released = False

    @rule()
    def press_step(self):
        """P3: one STEP press gives what the description says, and the latch part of P5."""
        emu = self.emu
        before = (_fingerprint(emu), emu.cycles, emu.phase_index, emu.time_ns, emu._seq)
        was_frozen, latch = emu.frozen, emu.halt_latch
        pulsed = emu.press_step()
        assert pulsed == was_frozen
        if not was_frozen:
            assert (_fingerprint(emu), emu.cycles, emu.phase_index, emu.time_ns, emu._seq) == before
            return
        assert emu.frozen
        if latch:
            assert emu.halt_latch, "the latch stays set through steps"
        pulses, index = after_step_press(self.machine, before[2])
        assert emu.cycles == before[1] + pulses
        assert emu.phase_index == index, "the ring stands still, or runs to the next hold point"
        if self.machine.step_press == "hold":
            assert emu.time_ns - before[3] == _nominal_time_to_hold(self.machine, before[2])
            return
        assert emu._seq != before[4] or self._single_step_instruction(before[4])

    def _single_step_instruction(self, seq) -> bool:
        """Whether a STEP may leave the sequencer where it was: a one-step fetch with no
        instruction steps, or a step that repeats itself (``wait until``, ``goto`` to itself)."""
        index, step = seq
        if index >= 0:
            jump = self.machine.instructions[index].steps[step].jump
            return jump is not None and jump.target == step
        return len(self.machine.fetch) == 1 and step == 0

    @rule()
    def press_resume(self):
        """P5: RESUME at run carries on; at stop the clock stays frozen."""
        emu = self.emu
        was_frozen = emu.frozen
        emu.press_resume()
        self._note_release(was_frozen)
        assert not emu.halt_latch
        if emu.switch_run:
            assert not emu.frozen
        else:
            assert emu.frozen == was_frozen

    # ----- letting time pass

    @rule(count=st.integers(1, 12))
    def let_phases_pass(self, count):
        before = self.emu.time_ns
        for _ in range(count):
            self.emu.advance_phase()
        self._note_time(before)

    @rule(count=st.integers(1, 60))
    def let_cycles_pass(self, count):
        before = self.emu.time_ns
        self.emu.run(max_cycles=count)
        self._note_time(before)

    @rule(limit=st.integers(1, 400))
    def run_until_frozen(self, limit):
        before = self.emu.time_ns
        self.emu.run(max_cycles=limit)
        self._note_time(before)

    @rule(count=st.integers(1, 30))
    def run_some_instructions(self, count):
        """A condition checked at instruction boundaries, as the debugger's watchpoints are."""
        emu, before = self.emu, self.emu.time_ns
        target = emu.instructions + count
        reason = emu.run(max_cycles=5_000, until=lambda e: e.instructions >= target)
        if reason.kind == "condition":
            assert emu.instructions == target and emu.at_instruction_boundary
        self._note_time(before)

    @precondition(lambda self: not self.emu.frozen)
    @rule()
    def stop_and_watch_it_freeze(self):
        """P2: after stop, the generator freezes at the first hold point it reaches."""
        emu, machine = self.emu, self.machine
        emu.set_switch_run(False)
        bound = _phases_to_hold(machine, emu.phase_index, self.released)
        ran = 0
        while emu.advance_phase():
            ran += 1
            assert ran <= bound, "ran past a hold point with the hold line up"
        assert emu.frozen
        assert machine.phases[emu.phase_index].hold
        assert ran == bound
        self.released = False

    # ----- invariants

    @invariant()
    def same_states_as_free_running(self):
        """P4/P6: at every instruction boundary, the free-running twin's state."""
        emu = self.emu
        if emu.at_instruction_boundary:
            assert _fingerprint(emu) == self.reference.after(emu.instructions)

    @invariant()
    def frozen_only_at_hold_points(self):
        emu = self.emu
        if emu.frozen:
            assert self.machine.phases[emu.phase_index].hold
            assert emu.hold_line, "frozen with the hold line down"

    @invariant()
    def halt_freezes_where_the_table_says(self):
        """P5: after halt, the generator freezes within the table's pulses, pc past it."""
        emu, watch = self.emu, self.watch
        if watch is None or not (emu.frozen and emu.halt_latch) or watch.pulses_since_latch is None:
            return
        bound = _cycles_after_latch_bound(self.machine)
        assert watch.pulses_since_latch <= bound
        # The halt is the last step of its instruction, so each later pulse is a step of
        # the next fetch; pc has moved past the halt and once more for each of those fetch
        # steps that advances it (one fetch step on most machines, "pc <- pc + 1" alone on
        # nib2, whose fetch takes two pulses).
        assert bound <= len(self.machine.fetch)
        halt = self.machine.instructions[self.machine.decode_table[emu.memory[emu.halt_address]]]
        advancing = sum(f"{self.machine.program_counter} <-" in step.text
                        for step in self.machine.fetch[:watch.pulses_since_latch])
        past = emu.halt_address + halt.word_count + advancing
        assert emu.pc == past % self.machine.memory_words, "pc is not just past the halt (and the fetches after it)"


def _panel_machine(name: str, observed: bool) -> type[PanelMachine]:
    """The panel state machine on one machine file, stepping (observed) or fused."""
    return type(f"{name}_{'stepping' if observed else 'fast'}", (PanelMachine,),
                {"machine_name": name, "observed": observed})


@pytest.mark.parametrize("machine_name", MACHINES)
@pytest.mark.parametrize("observed", [True, False], ids=["stepping", "fast"])
def test_panel_actions_keep_the_program_semantics(machine_name, observed):
    skip_unless_properties_run(MACHINES[machine_name])
    case = _panel_machine(machine_name, observed).TestCase
    case.settings = SETTINGS
    case("runTest").runTest()
