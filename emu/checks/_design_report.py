"""What a machine's phase table and control unit make of halts, STOP and STEP.

Facts a builder must know before wiring, not pass/fail: where a halt
freezes the clock (how many pulses after the step that drives halt, and
where pc points then), the longest wait from throwing STOP to the freeze,
which micro-steps can be frozen in while they repeat, and what one STEP
press advances. Halt positions are found by running each halting
instruction on the engine with its halt step on every pulse of the turn;
the rest is read from the description.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..description import Machine
from ..engine import Emulator, Observer, Ring

__all__ = ["DesignReport", "HaltFreeze", "design_report", "design_report_lines"]


@dataclass(frozen=True)
class HaltFreeze:
    """One halting instruction with its halt step on one pulse of the turn."""
    instruction: str
    pulse: str
    """The high phases of the pulse whose falling edge runs the halt step, e.g. ``P2``."""
    pulses_after: int
    """Pulses the generator gives after the halt step before it freezes."""
    freezes_in: str
    """The hold point's phase."""
    steps_after: tuple[str, ...]
    """The micro-steps those pulses ran (the next instruction's fetch, as a rule)."""
    pc_past_end: int
    """How far pc points past the end of the halting instruction when frozen (0: just past it)."""
    finished: bool
    """Whether the halting instruction has run all its steps when the clock freezes."""


@dataclass(frozen=True)
class DesignReport:
    halts: tuple[HaltFreeze, ...]
    hold_points: tuple[str, ...]
    pulses_per_turn: int
    stop_worst_ns: int
    stop_worst_pulses: int
    stop_worst_after: str
    """The hold point the generator has just passed when STOP is thrown at the worst moment."""
    repeating_steps: tuple[str, ...]
    """Micro-steps that can take more than one pulse (they repeat), as ``instruction: step``."""
    step_press: str
    """What one STEP press gives, in words."""
    step_press_kind: str
    """``"pulse"`` (one micro-step, the ring standing still) or ``"hold"`` (the ring runs to the next hold point)."""
    instruction_presses: tuple[int, int | None]
    """Micro-steps of one instruction, fewest and most (None: a step can repeat without end): with
    ``"pulse"`` presses, the STEP presses it takes."""


def design_report(machine: Machine) -> DesignReport:
    worst_ns, worst_pulses, worst_after = _longest_stop(machine)
    cycles = [ins.cycles(machine) for ins in machine.instructions]
    most = None if any(c.longest is None for c in cycles) else max(c.longest for c in cycles)
    return DesignReport(
        halts=tuple(_halt_freezes(machine)),
        hold_points=tuple(p.name for p in machine.phases if p.hold),
        pulses_per_turn=machine.pulses_per_turn,
        stop_worst_ns=worst_ns, stop_worst_pulses=worst_pulses, stop_worst_after=worst_after,
        repeating_steps=tuple(_repeating_steps(machine)),
        step_press=_step_press(machine), step_press_kind=machine.step_press,
        instruction_presses=(min(c.shortest for c in cycles), most))


def _falling_edges(machine: Machine) -> list[int]:
    """Index of each phase that starts right after a falling edge, in ring order."""
    phases = machine.phases
    return [i for i in range(len(phases)) if phases[i - 1].level == 1 and phases[i].level == 0]


def _pulse_name(machine: Machine, after_edge: int) -> str:
    """The high phases before the falling edge that ends at phase ``after_edge``."""
    phases, names, i = machine.phases, [], after_edge - 1
    while phases[i % len(phases)].level == 1 and len(names) < len(phases):
        names.insert(0, phases[i % len(phases)].name)
        i -= 1
    return "+".join(names)


def _longest_stop(machine: Machine) -> tuple[int, int, str]:
    """Worst case of STOP thrown the moment the generator has passed a hold point: the time and
    pulses until it enters the next one (nothing when there is no hold point)."""
    phases, worst = machine.phases, (0, 0, "")
    for start, phase in enumerate(phases):
        if not phase.hold:
            continue
        ns, pulses, i = 0, 0, start
        while True:
            ns += phases[i].duration_ns
            nxt = (i + 1) % len(phases)
            if phases[i].level == 1 and phases[nxt].level == 0:
                pulses += 1
            i = nxt
            if phases[i].hold:
                break
        worst = max(worst, (ns, pulses, phase.name))
    return worst


def _plain_words(ins) -> list[int]:
    return ins.encode({name: 0 if fld.kind.low <= 0 <= fld.kind.high else fld.kind.low
                       for name, fld in ins.fields.items()})


class _AfterLatch(Observer):
    def __init__(self):
        self.latched_at, self.edge_index, self.steps, self.instructions = None, None, [], None

    def latch(self, emu, is_set):
        if is_set and self.latched_at is None:
            self.latched_at, self.edge_index, self.instructions = emu.cycles, emu.phase_index, emu.instructions

    def microstep(self, emu, step, lines):
        if self.latched_at is not None and emu.cycles > self.latched_at:
            self.steps.append(step.text)


def _halt_freezes(machine: Machine):
    """Each halting instruction run with its halt step on each pulse of the turn."""
    edges = _falling_edges(machine)
    filler = next((i for i in machine.instructions if not i.drives_halt and not i.has_jumps), None)
    seen = set()
    for ins in machine.instructions:
        if not ins.drives_halt:
            continue
        halt_step = next(k for k, step in enumerate(ins.steps) if step.drives_halt)
        before = len(machine.fetch) + halt_step
        words = _plain_words(ins) + (_plain_words(filler) * 4 if filler is not None else [])
        for j in range(len(edges)):
            emu, watch = Emulator(machine), _AfterLatch()
            emu.load([(0, words[:machine.memory_words])])
            emu.ring.index = edges[(j - before - 1) % len(edges)]
            emu.observe(watch)
            emu.run(max_cycles=before + 4 * len(machine.phases) + 8)
            if watch.latched_at is None or not emu.frozen:
                continue
            pulse = _pulse_name(machine, watch.edge_index)
            if (ins.display, pulse) in seen:
                continue
            seen.add((ins.display, pulse))
            yield HaltFreeze(ins.display, pulse, emu.cycles - watch.latched_at,
                             machine.phases[emu.phase_index].name, tuple(watch.steps),
                             (emu.pc - ins.word_count) % machine.memory_words,
                             emu.instructions > watch.instructions)


def _repeating_steps(machine: Machine):
    for ins in machine.instructions:
        for k, step in enumerate(ins.steps):
            if step.jump is not None and step.jump.target == k:
                yield f"{ins.display}: step {len(machine.fetch) + k} '{step.text}'"


def _step_press(machine: Machine) -> str:
    if machine.step_press == "pulse":
        pulse_ms = Ring(machine).manual_pulse_ns / 1e6
        return f"gives one micro-step (a panel pulse of {pulse_ms:g} ms) and leaves the ring in the phase it froze in"
    runs = []
    for index, phase in enumerate(machine.phases):
        if phase.hold:
            pulses, after = machine.after_step_press(index)
            runs.append(f"from {phase.name} {_count(pulses, 'micro-step')} to {machine.phases[after].name}")
    return f"lets the ring run its own pulses to the next hold point ({', '.join(runs)})"


# ----- in words ----------------------------------------------------------------------------

def _count(n: int, what: str) -> str:
    return f"{n} {what}{'' if n == 1 else 's'}"


def _halt_line(halt: HaltFreeze) -> str:
    where = f"`{halt.instruction}` with its halt step on pulse {halt.pulse}: freezes in {halt.freezes_in} "
    if halt.pulses_after == 0:
        where += "right after that pulse"
    else:
        where += f"{_count(halt.pulses_after, 'pulse')} later (ran: {'; '.join(halt.steps_after)})"
    if not halt.finished:
        return where + "; the halting instruction has NOT finished: the rest of it runs after RESUME"
    if halt.pc_past_end == 0:
        return where + "; pc points just past the halt instruction"
    return (where + f"; pc points {_count(halt.pc_past_end, 'word')} past the halt instruction "
                    f"(the next instruction has begun)")


def design_report_lines(report: DesignReport) -> list[str]:
    plural = "s" if len(report.hold_points) > 1 else ""
    holds = f"hold point{plural} at {', '.join(report.hold_points)}" if report.hold_points else "no hold point"
    lines = [f"clock: {_count(report.pulses_per_turn, 'pulse')} a turn, {holds}"]
    if report.halts:
        lines.append("where a halt freezes the clock:")
        lines += [f"  {_halt_line(halt)}" for halt in report.halts]
    else:
        lines.append("where a halt freezes the clock: no instruction drives halt")
    if report.hold_points:
        lines.append(f"longest from throwing STOP to the freeze: {report.stop_worst_ns / 1e6:g} ms, "
                     f"{_count(report.stop_worst_pulses, 'pulse')} (STOP thrown just as the generator passes "
                     f"{report.stop_worst_after})")
    else:
        lines.append("STOP never freezes the clock: the phase table has no hold point")
    if report.repeating_steps:
        lines.append("micro-steps that take more than one pulse (they repeat; a hold point can fall inside, "
                     "so STOP can freeze the clock while one waits):")
        lines += [f"  {step}" for step in report.repeating_steps]
    else:
        lines.append("micro-steps that take more than one pulse: none, so no hold point falls inside one")
    if report.step_press_kind != "pulse":
        lines.append(f"one STEP press {report.step_press}")
        return lines
    fewest, most = report.instruction_presses
    if most is None:
        span = f"{fewest} or more presses (a repeating step has no limit)"
    else:
        span = f"{fewest} presses" if fewest == most else f"{fewest} to {most} presses"
    lines.append(f"one STEP press {report.step_press}; an instruction takes {span}")
    return lines
