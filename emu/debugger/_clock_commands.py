"""The clock and the panel: switch, STEP, RESUME, RESET, toggles, runs and steps.

These commands are the panel's controls plus the ways of letting the clock
go (``go``, the instruction steps, ``live``) and of changing its beat. How
a run or a step stops is the session's ``RunPolicy``; here only what the
panel does first.
"""

from __future__ import annotations

from emu import MachineError

from ._arguments import count, no_arguments, number
from ._conditions import CallDepth, Count
from ._panel import bus_text, word_hex
from ._table import DebugError, command

__all__ = ["power_cycle"]

PULSE_REPORT = 8
"""Pulses listed one by one; beyond that only a count."""


@command("throw run|stop", "Throw the RUN/STOP switch; at run the clock starts.",
         complete=("switch",))
def do_throw(session, args):
    """At *stop* the clock carries on to the next hold point and freezes
    there. At *run* a clock frozen by the switch restarts and runs until
    something stops it (unless the halt latch still holds it)."""
    if len(args) != 1 or args[0].lower() not in ("run", "stop"):
        raise DebugError("usage: throw run|stop")
    e = session.emu
    if args[0].lower() == "stop":
        if not e.switch_run:
            return f"the switch is already at STOP; {session.state_text()}"
        e.set_switch_run(False)
        if e.frozen:
            return f"switch at STOP; {session.state_text()}"
        start = e.cycles
        session.last_stop = session.settle().describe(session.places)
        return (f"switch at STOP; the clock ran on {e.cycles - start} cycle(s) to the hold point: "
                f"{session.state_text()}. {session.here_text()}")
    if e.switch_run:
        if e.frozen:
            return "the switch is already at RUN; the halt latch holds the clock ('resume' clears it)"
        return "the switch is already at RUN; 'go' lets the clock carry on"
    was_frozen = e.frozen
    e.set_switch_run(True)
    if e.frozen:
        return "switch at RUN; the halt latch still holds the clock ('resume' clears it)"
    if not was_frozen:
        return session.let_run(prelude="switch at RUN")
    return session.released(was_frozen, "switch at RUN")


@command("pulse [N]", "Press STEP N times: each press gives what the machine's [clock] step says.",
         repeats=True)
def do_pulse(session, args):
    """Works only while the generator is frozen at a hold point, as on the
    panel. A press is one clock pulse, one micro-step, and the ring does not
    move; on a machine whose [clock] step is "hold" a press lets the ring
    run its own pulses up to the next hold point. Breakpoints are not
    checked; a halt or pause, the cycle limit and Ctrl-C stop the presses
    early. Each line shows a micro-step: the control lines driven and the
    bus (as 'help panel' defines it)."""
    n = count(args, 1, "pulse count")
    e, m = session.emu, session.machine
    if not e.frozen:
        raise DebugError("STEP has no effect while the clock runs; 'throw stop' first")
    given = session.pulses(count=n, keep=PULSE_REPORT)
    by_press = m.step_press == "hold"
    rows = []
    for k, pressed in enumerate(given.first_steps, 1):
        doing = "fetch" if pressed.instruction is None else pressed.instruction.mnemonic
        lines = ", ".join(pressed.lines) or "no lines"
        label = f"press {pressed.press}, pulse {k}" if by_press else f"pulse {k}"
        rows.append(f"{label}: {doing} step {pressed.index + 1}: {pressed.step.text}   [{lines}]   "
                    f"bus {bus_text(m, pressed.bus)}")
    if given.pulses > len(given.first_steps):
        rows.append(f"… {given.pulses - len(given.first_steps):,} more pulses")
    if given.stop is not None:
        unit = "presses" if by_press else "pulses"
        rows.append(f"{given.stop.describe(session.places)} (after {given.presses:,} of {n:,} {unit})")
    latch = "\nThe halt latch is set (STEP works all the same)." if e.halt_latch and given.stop is None else ""
    return "\n".join(rows) + f"\n{session.here_text()}{latch}"


@command("resume", "Press RESUME: clear the halt latch; at RUN the clock restarts.")
def do_resume(session, args):
    no_arguments(args, "resume")
    return _press(session, session.emu.press_resume, "halt latch clear")


@command("reset", "Press RESET: pc, sequencer, flags and halt latch to zero.")
def do_reset(session, args):
    """Registers, the stack pointer and memory are kept. At RUN, with the
    latch cleared, a frozen clock restarts from address 0."""
    no_arguments(args, "reset")
    return _press(session, session.emu.press_reset, "reset: pc 0")


def _press(session, button, done: str) -> str:
    """Press a panel button; if that lets a frozen clock go, the clock now runs."""
    was_frozen = session.emu.frozen
    button()
    return session.released(was_frozen, done)


@command("restart", "Power off and on and load the program again: start it afresh (breakpoints stay).")
def do_restart(session, args):
    """Unlike RESET, memory is loaded again from the program image, the
    input stream rewinds, console, lamps, warnings and counters clear, and
    time starts at 0; the toggles stay as they are set and the beat
    ('beat SEED') draws its turns again from the start. The switch comes
    up at STOP, so the program starts with 'go'. A waveform being recorded
    is written first (its time cannot go back)."""
    no_arguments(args, "restart")
    written = power_cycle(session, "restarted: powered on with the program loaded again")
    written = f"waveform written to {written}; " if written else ""
    return f"{written}restarted with the program loaded again; {session.state_text()}. {session.here_text()}"


def power_cycle(session, last_stop: str) -> str | None:
    """Power off and on with the session's program loaded afresh: the one way the
    debugger starts a program again ('restart', and a program burnt anew with its
    planted halts). What 'restart' documents happens; ``last_stop`` is what 'why'
    says next. Returns the file of a waveform recording that was written (its time
    cannot go back), None when none was recording."""
    written = None
    if session.waves is not None:
        written = session.waves[0]
        session.close()
    session.restart()
    session.last_stop = last_stop
    session.dump_next = 0
    return written


@command("toggles [VALUE]", "Show or set the panel's toggle switches (an input port of the machine).")
def do_toggles(session, args):
    m = session.machine
    if args:
        if len(args) > 1:
            raise DebugError("usage: toggles [VALUE]")
        value = number(args[0])
        if not 0 <= value <= m.data_mask:
            raise DebugError(f"the toggles take 0…{m.data_mask}, not {value}")
        session.emu.switches = value
    value = session.emu.switches
    return f"toggles {value:0{m.data_bits}b} = {word_hex(m, value)} = {value}"


@command("go [CYCLES]", "Let the clock run until a halt, breakpoint, watchpoint, Ctrl-C or CYCLES.")
def do_go(session, args):
    """The limit is that of 'relaybench run' unless given. A clock frozen by
    the switch is started by throwing it to RUN; one held by the halt
    latch needs 'resume'."""
    limit = count(args, session.max_cycles, "cycle limit")
    e = session.emu
    if e.frozen and e.halt_latch:
        raise DebugError(f"the halt latch holds the clock ({session.latch_origin()}); 'resume' clears it")
    if e.frozen:
        e.set_switch_run(True)
        return session.let_run(max_cycles=limit, prelude="switch at RUN")
    if not e.switch_run:
        e.set_switch_run(True)
    return session.let_run(max_cycles=limit)


@command("instr [N]", "Execute N whole instructions (STEP pulses while frozen).", repeats=True)
def do_instr(session, args):
    return session.step(Count(count(args, 1, "instruction count"), session.emu))


@command("over", "Execute one instruction; a call runs until it has returned.", repeats=True)
def do_over(session, args):
    no_arguments(args, "over")
    return session.step(CallDepth(session.machine, session.shape, session.emu.instruction_address, 1,
                                  "stepped over one instruction"))


@command("leave", "Run until the routine running now returns to its caller.", repeats=True)
def do_leave(session, args):
    no_arguments(args, "leave")
    if not session.shape.returns:
        raise DebugError(f"{session.machine.name} has no return instruction "
                         f"(none is marked 'returns = true', and none loads pc from memory at a stack register)")
    return session.step(CallDepth(session.machine, session.shape, session.emu.instruction_address, 0,
                                  "returned to the caller"))


@command("live [FACTOR]", "Run in real time, FACTOR times the nominal clock, panel updating.")
def do_live(session, args):
    """Keys in the live view: s throws the switch to stop, r to run, space
    presses RESUME, p presses STEP, q or Enter return to the prompt (the
    clock is then held between commands); Ctrl-C throws stop and returns."""
    if len(args) > 1:
        raise DebugError("usage: live [FACTOR]")
    factor = 1.0
    if args:
        try:
            factor = float(args[0])
        except ValueError:
            raise DebugError(f"factor '{args[0]}' is not a number") from None
        if not 0 < factor <= 10_000:
            raise DebugError(f"factor must be above 0 and at most 10000, not {args[0]}")
    session.live_factor = factor
    return f"live at {factor:g} × {session.machine.nominal_hz:g} Hz"


@command("beat SEED|even", "An irregular clock drawn from the machine's parts (SEED), or the even one.")
def do_beat(session, args):
    """Each turn of the ring then takes phase durations drawn from the
    machine file's [timing] tolerances for one built clock; results and
    cycle counts do not change, simulated time and the waveform do."""
    if len(args) != 1:
        raise DebugError("usage: beat SEED|even")
    if args[0].lower() == "even":
        session.set_beat(None)
        return "the clock beats evenly at its nominal phase durations"
    seed = number(args[0], "seed")
    if seed < 0:
        raise DebugError(f"a seed is 0 or more, not {seed}")
    try:
        session.set_beat(seed)
    except MachineError as exc:
        raise DebugError(f"no irregular clock for {session.machine.name}: {exc.message}") from None
    return f"irregular clock: one built from the [timing] parts with seed {seed}"
