"""The properties every machine description must have, as checks on one drawn example.

Each property draws what it needs (a program from the machine's own
instruction table, a schedule of panel actions at random cycles and
phases, a number of cycles) and raises ``PropertyFailed`` when the machine
breaks it. P1–P5 watch a run under a panel schedule; P4 compares it with a
free-running twin; P6 compares the fused and the stepping path; P7 a run
with one restored from a snapshot halfway; the round trip the assembler
with the disassembler.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field

from hypothesis import strategies as st

import asm

from ..engine import Emulator, Observer
from ..errors import RelaybenchError
from ..testing import PANEL_ACTIONS, panel_schedules, play_schedule, programs, run_resuming
from ._machine_state import PropertyFailed, datapath_state, differences, machine_state
from ._watchers import HoldWatch, LatchWatch, MicrostepCount, PulseWatch

__all__ = ["Example", "MachineProperty", "MACHINE_PROPERTIES"]

TAIL_CYCLES = 300
"""Cycles run after the last panel action (RESUME at every halt), so its effects are seen."""


@dataclass(frozen=True)
class Example:
    """One drawn case: a program (words from address 0), panel actions, and named counts."""
    words: tuple[int, ...]
    schedule: tuple = ()
    counts: dict = field(default_factory=dict)
    trail: list = field(default_factory=list, compare=False)
    """Where each panel action was applied, filled in as the example runs."""


@dataclass(frozen=True)
class MachineProperty:
    key: str
    title: str
    examples: object
    """machine → a strategy of ``Example``."""
    check: object
    """(machine, example) → None, or raises ``PropertyFailed``."""
    procedure: object
    """example → what was done after the panel actions, in words, for a counterexample."""
    needs: object = None
    """machine → why the property cannot apply to it, or None."""

    def not_applicable(self, machine) -> str | None:
        return self.needs(machine) if self.needs is not None else None


def _boot(machine, example: Example) -> Emulator:
    emu = Emulator(machine)
    emu.load([(0, list(example.words))])
    return emu


def _panel_examples(actions=PANEL_ACTIONS):
    def strategy(machine):
        return st.builds(lambda words, schedule: Example(tuple(words), tuple(schedule), {"tail": TAIL_CYCLES}),
                         programs(machine), panel_schedules(machine, actions=actions))
    return strategy


def _play(emu, example: Example, before=None, after=None, until=None) -> None:
    """The schedule, then the switch to run, RESUME, and the tail (RESUME at every halt).

    ``until`` (a check at each instruction boundary) watches the tail.
    """
    trail = example.trail
    trail.clear()

    def noting(planned):
        trail.append((planned.action, emu.cycles, emu.machine.phases[emu.phase_index].name, emu.frozen))
        if before is not None:
            before(planned)

    play_schedule(emu, example.schedule, noting, after)
    emu.set_switch_run(True)
    emu.press_resume()
    target = emu.cycles + example.counts["tail"]
    while emu.cycles < target:
        if emu.run(max_cycles=target - emu.cycles, until=until).kind == "halted":
            emu.press_resume()
        if emu.frozen:
            raise PropertyFailed("the clock to run with the switch at run after RESUME", "it stays frozen", emu)


# ----- P1, P2, P3, P5: rules watched while the panel is used ----------------------------

def _pulses(machine, example):
    emu = _boot(machine, example)
    emu.observe(PulseWatch(machine))
    _play(emu, example)


def _stop_freezes(machine, example):
    emu = _boot(machine, example)
    watch = HoldWatch(machine)
    emu.observe(watch)
    _play(emu, example, after=lambda planned: watch.still_frozen(emu))


def _one_microstep(machine, example):
    emu, counter = _boot(machine, example), MicrostepCount()
    emu.observe(counter)
    seen = {}

    def before(planned):
        seen.update(count=counter.count, frozen=emu.frozen, index=emu.phase_index, state=machine_state(emu))

    def after(planned):
        if planned.action != "step":
            return
        ran = counter.count - seen["count"]
        if not seen["frozen"]:
            if ran or machine_state(emu) != seen["state"]:
                raise PropertyFailed("STEP to do nothing while the clock runs",
                                     f"it ran {ran} micro-step(s) and changed "
                                     f"{differences(machine, machine_state(emu), seen['state'])}", emu)
            return
        wanted, index = machine.after_step_press(seen["index"])
        if ran != wanted:
            exactly = "exactly one micro-step" if wanted == 1 else f"{wanted} micro-steps"
            raise PropertyFailed(f"one STEP press to give {exactly}", f"it gave {ran}", emu)
        if emu.phase_index != index or not emu.frozen:
            where = "where it stood" if index == seen["index"] else f"at the next hold point {machine.phases[index].name}"
            raise PropertyFailed(f"STEP to leave the clock frozen {where}",
                                 f"it stands in phase {machine.phases[emu.phase_index].name}, "
                                 f"{'frozen' if emu.frozen else 'running'}", emu)
    _play(emu, example, before, after)


def _latch(machine, example):
    emu, watch = _boot(machine, example), LatchWatch(machine)
    emu.observe(watch)
    seen = {}

    def before(planned):
        seen.update(frozen=emu.frozen, latched=emu.halt_latch)

    _play(emu, example, before, lambda planned: watch.after_panel(emu, planned.action, seen["frozen"],
                                                                   seen["latched"]))


# ----- P4: panel actions change nothing the program computes ------------------------------

class _FreeTwin:
    """The same program running free, RESUME at every halt: its state after each instruction."""

    def __init__(self, machine, example):
        self.machine, self.example = machine, example
        self.emu = _boot(machine, example)
        self.states = [self._fingerprint(self.emu)]

    @staticmethod
    def _fingerprint(emu) -> tuple:
        state = datapath_state(emu)
        state["memory"] = hash(state["memory"])
        return tuple(state.items())

    def _record(self, emu) -> bool:
        self.states.append(self._fingerprint(emu))
        return len(self.states) > self.wanted

    def after(self, count: int) -> tuple:
        self.wanted = count
        while len(self.states) <= count:
            if self.emu.run(max_cycles=100_000, until=self._record).kind == "halted":
                self.emu.press_resume()
        return self.states[count]

    def full_state_after(self, count: int) -> dict:
        emu = _boot(self.machine, self.example)
        while emu.instructions < count:
            if emu.run(max_cycles=100_000, until=lambda e: e.instructions >= count).kind == "halted":
                emu.press_resume()
        return datapath_state(emu)


def _same_as_free_running(machine, example):
    emu, twin = _boot(machine, example), _FreeTwin(machine, example)

    def compare(_emu=None) -> bool:
        if emu.at_instruction_boundary and _FreeTwin._fingerprint(emu) != twin.after(emu.instructions):
            theirs = twin.full_state_after(emu.instructions)
            raise PropertyFailed(f"after {emu.instructions} instructions the state of the free run",
                                 f"it differs (here vs free run): "
                                 f"{differences(machine, datapath_state(emu), theirs)}", emu)
        return False
    _play(emu, example, after=lambda planned: compare(), until=compare)


# ----- P6, P7: the two paths, snapshots --------------------------------------------------

def _cycles_examples(machine):
    return st.builds(lambda words, cycles: Example(tuple(words), counts={"cycles": cycles}),
                     programs(machine), st.integers(1, 3000))


def _paths_agree(machine, example):
    fused, stepping = _boot(machine, example), _boot(machine, example)
    stepping.observe(Observer())
    cycles = example.counts["cycles"]
    if run_resuming(fused, cycles) != run_resuming(stepping, cycles) or \
            machine_state(fused) != machine_state(stepping):
        raise PropertyFailed(f"the fused and the stepping path to agree after {cycles} cycles",
                             f"they differ (fused vs stepping): "
                             f"{differences(machine, machine_state(fused), machine_state(stepping))}", stepping)


def _snapshot_examples(machine):
    return st.builds(lambda words, before, after, stop: Example(
        tuple(words), counts={"before": before, "after": after, "stop": int(stop)}),
        programs(machine), st.integers(0, 1500), st.integers(1, 1500), st.booleans())


def _snapshot_continues(machine, example):
    counts = example.counts
    whole, first = _boot(machine, example), _boot(machine, example)
    for emu in (whole, first):
        run_resuming(emu, counts["before"])
        if counts["stop"]:
            emu.set_switch_run(False)
            emu.run(max_cycles=50)
    restored = Emulator(machine)
    try:
        restored.restore_state(json.loads(json.dumps(first.snapshot_state())))
    except RelaybenchError as exc:
        raise PropertyFailed("the snapshot to restore", f"it was refused: {exc}", first) from None
    for emu in (whole, restored):
        if counts["stop"]:
            emu.press_step()
            emu.set_switch_run(True)
        run_resuming(emu, counts["after"])
    if machine_state(restored) != machine_state(whole):
        raise PropertyFailed("a run restored from the snapshot to end like the uninterrupted run",
                             f"they differ (restored vs uninterrupted): "
                             f"{differences(machine, machine_state(restored), machine_state(whole))}", restored)


# ----- the assembler round trip -----------------------------------------------------------

def _program_examples(machine):
    return programs(machine).map(lambda words: Example(tuple(words)))


def _round_trip(machine, example):
    """The disassembly of the words is a source text: assemble it, disassemble, assemble again."""
    words = list(example.words)
    text = "\n".join(asm.disassemble(machine, words, 0))
    try:
        first = asm.assemble_text(text, machine, "disassembly.asm")
        again_text = "\n".join(asm.disassemble(machine, first.flat(), 0))
        again = asm.assemble_text(again_text, machine, "disassembly-again.asm")
    except RelaybenchError as exc:
        raise PropertyFailed("the disassembly to assemble", f"it did not: {exc}") from None
    if first.flat() != words:
        raise PropertyFailed(f"the source to assemble to {_words(words, machine)}",
                             f"it gave {_words(first.flat(), machine)}")
    if again.flat() != first.flat() or again_text != text:
        raise PropertyFailed("assembling the disassembly again to give the same words and text",
                             f"it gave {_words(again.flat(), machine)}")


def _words(words, machine) -> str:
    digits = (machine.data_bits + 3) // 4
    return " ".join(f"{w:0{digits}X}" for w in words)


def _after_panel(example) -> str:
    return (f"then the switch to run, RESUME, and {example.counts['tail']} more cycles "
            f"(RESUME at every halt)")


def _both_paths(example) -> str:
    return (f"run {example.counts['cycles']} cycles from power-on (RESUME at every halt), "
            f"once fused and once stepping")


def _snapshot_steps(example) -> str:
    counts = example.counts
    stopping = ", STOP and let the clock freeze" if counts["stop"] else ""
    restarting = ", STEP, the switch to run" if counts["stop"] else ""
    return (f"run {counts['before']} cycles from power-on (RESUME at every halt){stopping}; snapshot, "
            f"restore into a fresh machine{restarting}; {counts['after']} more cycles on both")


def _disassembly(example) -> str:
    return "assemble the listing, disassemble the result, assemble that again"


def _needs_hold_point(machine) -> str | None:
    return None if any(p.hold for p in machine.phases) else "the phase table has no hold point"


def _needs_halt(machine) -> str | None:
    if not any(i.drives_halt for i in machine.instructions):
        return "no instruction drives halt"
    return _needs_hold_point(machine)


MACHINE_PROPERTIES = (
    MachineProperty("P1", "no clipped or stretched pulse", _panel_examples(), _pulses, _after_panel),
    MachineProperty("P2", "STOP freezes the clock at the first hold point", _panel_examples(), _stop_freezes,
                    _after_panel, _needs_hold_point),
    MachineProperty("P3", "one STEP press gives what the description says", _panel_examples(), _one_microstep,
                    _after_panel, _needs_hold_point),
    MachineProperty("P4", "stop, step, run and resume change nothing the program computes",
                    _panel_examples(PANEL_ACTIONS[:4]), _same_as_free_running, _after_panel),
    MachineProperty("P5", "halt and RESUME behave as the latch does", _panel_examples(), _latch, _after_panel,
                    _needs_halt),
    MachineProperty("P6", "the fused and the stepping path agree", _cycles_examples, _paths_agree, _both_paths),
    MachineProperty("P7", "a snapshot continues exactly", _snapshot_examples, _snapshot_continues,
                    _snapshot_steps),
    MachineProperty("round trip", "assemble, disassemble, assemble again", _program_examples, _round_trip,
                    _disassembly),
)
