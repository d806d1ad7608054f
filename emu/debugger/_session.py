"""The debugger's commands and state, free of any terminal.

``Session.execute(line)`` takes one command line and returns the text to
show, so the REPL, the live view and the tests drive the very same code.
Each command is one method with its usage and help beside it; the table
built by ``@command`` drives dispatch, ``help`` and tab completion.

Two states matter for what a command may do. The generator is *frozen*
at a hold point (switch at stop, or halt latch set): then STEP works and
instruction steps are made of STEP pulses. Or the clock is *running* and
the debugger merely holds simulated time between commands (after a
breakpoint, a watchpoint or a cycle limit): then STEP is refused, as the
hardware would ignore it, and instruction steps let the generator run.
"""

from __future__ import annotations

import difflib
import inspect
import re
import time
from dataclasses import dataclass
from typing import Callable

from emu import Emulator, MachineError
from emu.errors import RelaybenchError
import asm
from emu.description.notation import NUMBER_FORMS, parse_number
from emu.runs import DEFAULT_MAX_CYCLES
from emu.timing import record_vcd, spread_source

from ._calls import call_shape
from ._conditions import AnyOf, CallDepth, Count, Watch, Watches
from ._panel import (address_hex, code_lines, dump_text, panel_text, registers_text,
                     scope_text, word_hex)
from ._program import ProgramView, empty_view
from ._running import run_clock
from ._trace import Recorder

__all__ = ["Command", "COMMANDS", "DebugError", "Session"]


class DebugError(RelaybenchError):
    """A command that cannot be carried out; the message says why, in one line."""


@dataclass(frozen=True)
class Command:
    name: str
    usage: str
    summary: str
    details: str
    function: Callable
    repeats: bool
    """An empty line repeats this command (the step-like ones)."""
    complete: tuple[str, ...]
    """What each argument position completes to (see ``Session.complete``)."""


COMMANDS: dict[str, Command] = {}


def command(usage: str, summary: str, *, repeats: bool = False, complete: tuple[str, ...] = ()):
    def register(function):
        name = function.__name__.removeprefix("do_")
        COMMANDS[name] = Command(name, usage, summary, inspect.getdoc(function) or "",
                                 function, repeats, complete)
        return function
    return register


_TOKEN = re.compile(r"'(?:\\.|[^'\\])+'|\S+")
_FILE_LINE = re.compile(r"(.+):(\d+)")
_MEMORY = re.compile(r"\[(.+)\]")
ANNOUNCE_AFTER = 0.3
"""Seconds of wall time after which a run says that it is running."""
_PULSE_REPORT = 8
"""Pulses listed one by one; beyond that only a count."""


@dataclass(frozen=True)
class Breakpoint:
    number: int
    address: int
    label: str


class Session:
    def __init__(self, machine, view: ProgramView | None = None, emulator: Emulator | None = None,
                 *, width: int = 96, max_cycles: int = DEFAULT_MAX_CYCLES):
        self.machine = machine
        self.max_cycles = max_cycles
        """Cycle limit of a run that names none (that of 'relaybench run')."""
        self.view = view or empty_view()
        self.width = width
        self.shape = call_shape(machine)
        self.recorder = Recorder(machine)
        self.breakpoints: dict[int, Breakpoint] = {}
        self.watches: dict[int, Watch] = {}
        self._numbers = 0
        self.last_stop = "the clock has not run yet"
        self.last_repeat: str | None = None
        self.live_factor: float | None = None
        """Set by ``live``; the terminal takes it and runs the live view."""
        self.finished = False
        self.announce: Callable[[str], None] | None = None
        """Told once when a run goes on for a while (the terminal prints it)."""
        self._interrupted = False
        self._dump_next = 0
        self._waves = None
        """(path, open recording context) while 'waves' records."""
        if emulator is not None:
            self._attach(emulator)
            return
        emulator = Emulator(machine)
        if self.view.loaded is not None:
            emulator.load(self.view.loaded.segments)
        self._attach(emulator)
        emulator.set_switch_run(False)
        run_clock(emulator, self.recorder, max_cycles=self._settle_cycles())

    def _attach(self, emulator: Emulator) -> None:
        self.close()
        self.emu = emulator
        self.recorder.clear()
        emulator.observe(self.recorder)

    def _settle_cycles(self) -> int:
        """Enough cycles for a stopped clock to reach a hold point, on any phase table."""
        return 2 * len(self.machine.phases) + 2

    # ----- dispatch -------------------------------------------------------------

    def interrupt(self) -> None:
        """Ctrl-C: called from the signal handler; the run in progress throws the stop switch."""
        self._interrupted = True

    def execute(self, line: str) -> str:
        line = line.strip()
        if not line:
            if self.last_repeat is None:
                return ""
            line = self.last_repeat
        words = _TOKEN.findall(line)
        try:
            cmd = self.find_command(words[0])
            text = cmd.function(self, words[1:])
        except RelaybenchError as exc:
            return exc.render()
        self.last_repeat = line if cmd.repeats else None
        return text

    def find_command(self, word: str) -> Command:
        word = word.lower()
        if word in COMMANDS:
            return COMMANDS[word]
        starting = [name for name in COMMANDS if name.startswith(word)]
        if len(starting) == 1:
            return COMMANDS[starting[0]]
        if starting:
            raise DebugError(f"'{word}' could be {', '.join(sorted(starting))}")
        close = difflib.get_close_matches(word, list(COMMANDS), n=3, cutoff=0.5)
        hint = f" (did you mean {' or '.join(repr(c) for c in close)}?)" if close else ""
        raise DebugError(f"unknown command '{word}'{hint}; 'help' lists the commands")

    def complete(self, before_cursor: str) -> list[str]:
        """Candidates for the word being typed at the end of ``before_cursor``."""
        words = _TOKEN.findall(before_cursor)
        if not before_cursor or before_cursor[-1].isspace():
            words.append("")
        if len(words) <= 1:
            return sorted(n for n in COMMANDS if n.startswith(words[0].lower()))
        try:
            cmd = self.find_command(words[0])
        except DebugError:
            return []
        position = len(words) - 2
        if position >= len(cmd.complete):
            return []
        typed = words[-1]
        return sorted(c for c in self._candidates(cmd.complete[position]) if c.startswith(typed))

    def _candidates(self, kind: str) -> list[str]:
        m = self.machine
        names = [r.name for r in m.visible_registers] + list(m.pairs) + list(m.flags)
        labels = list(self.view.labels)
        return {
            "command": list(COMMANDS),
            "register": names,
            "target": names + [f"[{label}]" for label in labels],
            "label": labels,
            "where": labels + [f"{f}:" for f in self.view.files()],
            "switch": ["run", "stop"],
            "point": [str(n) for n in sorted({**self.breakpoints, **self.watches})] + ["all"],
        }.get(kind, [])

    # ----- argument reading -----------------------------------------------------

    def number(self, text: str, what: str = "value") -> int:
        try:
            return parse_number(text)
        except ValueError:
            raise DebugError(f"{what} '{text}' is not a number (write it as {NUMBER_FORMS})") from None

    def count(self, args: list[str], default: int, what: str = "count") -> int:
        if not args:
            return default
        if len(args) > 1:
            raise DebugError(f"one {what} expected, not {len(args)} words")
        value = self.number(args[0], what)
        if value < 1:
            raise DebugError(f"{what} must be at least 1, not {value}")
        return value

    def address(self, text: str) -> int:
        """A number, a label, or label+k / label-k."""
        match = re.fullmatch(r"([A-Za-z_]\w*)\s*([+-])\s*(.+)", text)
        if match and match[1] in self.view.symbols:
            offset = self.number(match[3], "offset")
            value = self.view.symbols[match[1]] + (offset if match[2] == "+" else -offset)
        elif text in self.view.symbols:
            value = self.view.symbols[text]
        elif re.fullmatch(r"[A-Za-z_]\w*", text):
            close = difflib.get_close_matches(text, list(self.view.symbols), n=1)
            hint = f" (did you mean '{close[0]}'?)" if close else ""
            raise DebugError(f"no label '{text}' in the program{hint}")
        else:
            value = self.number(text, "address")
        if not 0 <= value < self.machine.memory_words:
            raise DebugError(f"address {value} is outside memory (0…{self.machine.memory_words - 1})")
        return value

    def where(self, text: str) -> tuple[int, str]:
        """A breakpoint place: FILE:LINE, a label or an address; also how to name it."""
        match = _FILE_LINE.fullmatch(text)
        if match and not match[1].startswith("'"):
            found = self.view.address_of_line(match[1], int(match[2]))
            if found is None:
                files = ", ".join(self.view.files()) or "none (no debug information)"
                raise DebugError(f"no code at or after {text} (source files: {files})")
            address, file, line = found
            return address, f"{file}:{line}"
        address = self.address(text)
        return address, self.describe_address(address)

    def _latch_origin(self) -> str:
        """What set the halt latch, in words: the halt or pause instruction and its place."""
        address = self.emu.halt_address
        if address is None:
            return "set"
        kind = "pause" if address in self.view.pauses else "halt"
        return f"set by the {kind} at {self.describe_address(address)}"

    def describe_address(self, address: int) -> str:
        parts = [address_hex(self.machine, address)]
        if symbol := self.view.symbol_for(address):
            parts.append(symbol)
        if place := self.view.place_text(address):
            parts.append(place)
        return " ".join(parts)

    def target(self, text: str) -> Watch:
        """A register, pair or flag name, or [address]."""
        match = _MEMORY.fullmatch(text)
        if match:
            address = self.address(match[1].strip())
            return Watch(0, address=address, label=f"[{address_hex(self.machine, address)}]")
        m = self.machine
        names = [r.name for r in m.visible_registers] + list(m.pairs) + list(m.flags)
        if text.lower() in names:
            return Watch(0, name=text.lower(), label=text.lower())
        raise DebugError(f"'{text}' is not a register or flag of {m.name} "
                         f"({', '.join(names)}), nor a memory word [ADDRESS]")

    def _value_for(self, target: Watch, text: str) -> int:
        bits = self.machine.data_bits
        if target.name is not None:
            bits = 1 if target.name in self.machine.flags else self.machine.register_width(target.name)
        value = self.number(text)
        low = 0 if bits == 1 else -(1 << (bits - 1))
        if not low <= value < 1 << bits:
            raise DebugError(f"{value} does not fit {target.label} ({low}…{(1 << bits) - 1})")
        return value & ((1 << bits) - 1)

    # ----- describing where we are ---------------------------------------------

    def state_text(self) -> str:
        e = self.emu
        if e.frozen:
            return "frozen: the halt latch is set" if e.halt_latch else "frozen: the switch is at STOP"
        return "clock running, held by the debugger between commands"

    def here_text(self) -> str:
        e = self.emu
        address = e.instruction_address
        text, _length = self._instruction(address)
        place = self.view.place_text(address)
        symbol = self.view.symbol_for(address)
        at = " ".join(p for p in (address_hex(self.machine, address), symbol, place) if p)
        if e.at_instruction_boundary:
            return f"next: {text}   at {at}"
        instruction, index = e.sequencer
        total = instruction.cycles(self.machine) if instruction else len(self.machine.fetch)
        return f"inside: {text}   at {at}, micro-step {index + 1} of {total} next"

    def _instruction(self, address: int) -> tuple[str, int]:
        return asm.disassemble_at(self.machine, lambda a: self.emu.memory[a], address, self.view)

    def _stop_text(self, result, condition, limit: int | None = None) -> str:
        stop = result.stop
        m = self.machine
        if stop.kind == "halted":
            what = "pause" if stop.address in self.view.pauses else "halt"
            return (f"halted by the program: {what} at {self.describe_address(stop.address)}; "
                    f"the clock froze with pc at {address_hex(m, stop.pc)}")
        if stop.kind == "stopped":
            how = " (Ctrl-C)" if result.interrupted else ""
            return f"stopped by the stop switch{how}: the clock froze at the hold point"
        if stop.kind == "cycle_limit":
            return f"cycle limit of {limit:,} cycles reached; the clock is held between two commands"
        if stop.kind == "breakpoint":
            numbers = [str(b.number) for b in self.breakpoints.values() if b.address == stop.pc]
            return f"breakpoint {', '.join(numbers)} at {self.describe_address(stop.pc)}"
        return self._condition_text(condition)

    def _condition_text(self, condition) -> str:
        fired = condition.fired if isinstance(condition, AnyOf) else condition
        if isinstance(fired, Watches) and fired.hit:
            watch, old, new = fired.hit
            return (f"watchpoint {watch.number}: {watch.label} changed from {old:#x} to {new:#x} "
                    f"(the instruction before {self.describe_address(self.emu.pc)} wrote it)")
        return getattr(fired, "why", "stopped")

    # ----- running and stepping -------------------------------------------------

    def _conditions(self, extra=None):
        parts = [Watches(self.watches.values(), self.emu) if self.watches else None, extra]
        parts = [p for p in parts if p is not None]
        return AnyOf(parts) if parts else None

    def _let_run(self, extra=None, max_cycles: int | None = None, prelude: str | None = None) -> str:
        """Run the clock; ``prelude`` (what the panel action did) comes first in what is said,
        also when a long run announces itself before it ends."""
        self._interrupted = False
        max_cycles = max_cycles or self.max_cycles
        condition = self._conditions(extra)
        start = self.emu.cycles
        watch = self._watch_for_ctrl_c(prelude)
        result = run_clock(self.emu, self.recorder, condition=condition,
                           breakpoints=[b.address for b in self.breakpoints.values()],
                           max_cycles=max_cycles, interrupted=watch)
        self.last_stop = self._stop_text(result, condition, max_cycles)
        if self.emu.halt_latch and not self.emu.frozen:
            also = self.last_stop
            result = run_clock(self.emu, self.recorder, max_cycles=self._settle_cycles())
            self.last_stop = f"{self._stop_text(result, None)} (also: {also})"
        ran = self.emu.cycles - start
        head = f"{prelude}\n" if prelude and not watch.told else ""
        return f"{head}{self.last_stop}\n{ran:,} cycles run. {self.here_text()}"

    def _watch_for_ctrl_c(self, prelude: str | None = None):
        """The run's look at the Ctrl-C flag; a run that lasts says so once (after ``prelude``)."""
        started = time.monotonic()

        def interrupted() -> bool:
            if not interrupted.told and self.announce is not None and time.monotonic() - started > ANNOUNCE_AFTER:
                interrupted.told = True
                running = "the clock is running; Ctrl-C throws the stop switch"
                self.announce(f"{prelude}\n{running}" if prelude else running)
            return self._interrupted
        interrupted.told = False
        return interrupted

    def _pulse_until(self, condition) -> str:
        """STEP pulses until ``condition`` holds at an instruction boundary, a breakpoint or Ctrl-C."""
        self._interrupted = False
        e = self.emu
        condition = self._conditions(condition)
        breakpoints = {b.address for b in self.breakpoints.values()}
        pulses = 0
        why = ""
        interrupted = self._watch_for_ctrl_c()
        while e.press_step():
            pulses += 1
            if pulses >= self.max_cycles:
                why = f"cycle limit of {self.max_cycles:,} reached while stepping"
                break
            if e.at_instruction_boundary:
                if condition(e):
                    why = self._condition_text(condition)
                    break
                if e.pc in breakpoints:
                    numbers = [str(b.number) for b in self.breakpoints.values() if b.address == e.pc]
                    why = f"breakpoint {', '.join(numbers)} at {self.describe_address(e.pc)}"
                    break
            if pulses % 4096 == 0 and interrupted():
                why = "stepping stopped by Ctrl-C"
                break
        self.last_stop = why
        return f"{why} ({pulses:,} STEP pulse{'s' if pulses != 1 else ''}). {self.here_text()}"

    def _released(self, was_frozen: bool, done: str) -> str:
        """After a panel action: if it let a frozen generator go, the clock now runs."""
        if was_frozen and not self.emu.frozen:
            return self._let_run(prelude=f"{done}; the clock runs")
        return f"{done}; {self.state_text()}"

    @command("throw run|stop", "Throw the RUN/STOP switch; at run the clock starts.",
             complete=("switch",))
    def do_throw(self, args):
        """At *stop* the clock carries on to the next hold point and freezes
        there. At *run* a clock frozen by the switch restarts and runs until
        something stops it (unless the halt latch still holds it)."""
        if len(args) != 1 or args[0].lower() not in ("run", "stop"):
            raise DebugError("usage: throw run|stop")
        e = self.emu
        if args[0].lower() == "stop":
            if not e.switch_run:
                return f"the switch is already at STOP; {self.state_text()}"
            e.set_switch_run(False)
            if e.frozen:
                return f"switch at STOP; {self.state_text()}"
            start = e.cycles
            result = run_clock(e, self.recorder, max_cycles=self._settle_cycles())
            self.last_stop = self._stop_text(result, None)
            return (f"switch at STOP; the clock ran on {e.cycles - start} cycle(s) to the hold point: "
                    f"{self.state_text()}. {self.here_text()}")
        if e.switch_run:
            if e.frozen:
                return "the switch is already at RUN; the halt latch holds the clock ('resume' clears it)"
            return "the switch is already at RUN; 'go' lets the clock carry on"
        was_frozen = e.frozen
        e.set_switch_run(True)
        if e.frozen:
            return "switch at RUN; the halt latch still holds the clock ('resume' clears it)"
        if not was_frozen:
            return self._let_run(prelude="switch at RUN")
        return self._released(was_frozen, "switch at RUN")

    @command("pulse [N]", "Press STEP N times: N clock pulses, one micro-step each.",
             repeats=True)
    def do_pulse(self, args):
        """Works only while the generator is frozen at a hold point, as on the
        panel; the ring does not move. Breakpoints are not checked."""
        n = self.count(args, 1, "pulse count")
        e = self.emu
        if not e.frozen:
            raise DebugError("STEP has no effect while the clock runs; 'throw stop' first")
        rows = []
        for k in range(n):
            step, (instruction, index) = e.current_step, e.sequencer
            e.press_step()
            if k < _PULSE_REPORT:
                doing = "fetch" if instruction is None else instruction.mnemonic
                lines = ", ".join(step.control_lines) or "no lines"
                rows.append(f"pulse {k + 1}: {doing} step {index + 1}: {step.text}   [{lines}]")
        if n > _PULSE_REPORT:
            rows.append(f"… {n - _PULSE_REPORT:,} more pulses")
        latch = "\nThe halt latch is set (STEP works all the same)." if e.halt_latch else ""
        return "\n".join(rows) + f"\n{self.here_text()}{latch}"

    @command("resume", "Press RESUME: clear the halt latch; at RUN the clock restarts.")
    def do_resume(self, args):
        self._no_arguments(args, "resume")
        was_frozen = self.emu.frozen
        self.emu.press_resume()
        return self._released(was_frozen, "halt latch clear")

    @command("reset", "Press RESET: pc, sequencer, flags and halt latch to zero.")
    def do_reset(self, args):
        """Registers, the stack pointer and memory are kept. At RUN, with the
        latch cleared, a frozen clock restarts from address 0."""
        self._no_arguments(args, "reset")
        was_frozen = self.emu.frozen
        self.emu.press_reset()
        return self._released(was_frozen, "reset: pc 0")

    @command("toggles [VALUE]", "Show or set the panel's toggle switches (an input port of the machine).")
    def do_toggles(self, args):
        m = self.machine
        if args:
            if len(args) > 1:
                raise DebugError("usage: toggles [VALUE]")
            value = self.number(args[0])
            if not 0 <= value <= m.data_mask:
                raise DebugError(f"the toggles take 0…{m.data_mask}, not {value}")
            self.emu.switches = value
        value = self.emu.switches
        return f"toggles {value:0{m.data_bits}b} = {word_hex(m, value)} = {value}"

    @command("go [CYCLES]", "Let the clock run until a halt, breakpoint, watchpoint, Ctrl-C or CYCLES.")
    def do_go(self, args):
        """The limit is that of 'relaybench run' unless given. A clock frozen by
        the switch is started by throwing it to RUN; one held by the halt
        latch needs 'resume'."""
        limit = self.count(args, self.max_cycles, "cycle limit")
        e = self.emu
        if e.frozen and e.halt_latch:
            raise DebugError(f"the halt latch holds the clock ({self._latch_origin()}); 'resume' clears it")
        if e.frozen:
            e.set_switch_run(True)
            return self._let_run(max_cycles=limit, prelude="switch at RUN")
        if not e.switch_run:
            e.set_switch_run(True)
        return self._let_run(max_cycles=limit)

    @command("instr [N]", "Execute N whole instructions (STEP pulses while frozen).", repeats=True)
    def do_instr(self, args):
        n = self.count(args, 1, "instruction count")
        return self._step(Count(n))

    @command("over", "Execute one instruction; a call runs until it has returned.", repeats=True)
    def do_over(self, args):
        self._no_arguments(args, "over")
        e = self.emu
        return self._step(CallDepth(self.machine, self.shape, e.instruction_address, 1,
                                    "stepped over one instruction"))

    @command("leave", "Run until the routine running now returns to its caller.", repeats=True)
    def do_leave(self, args):
        self._no_arguments(args, "leave")
        if not self.shape.returns:
            raise DebugError(f"{self.machine.name} has no return instruction "
                             f"(none loads pc from memory at a stack register)")
        e = self.emu
        return self._step(CallDepth(self.machine, self.shape, e.instruction_address, 0,
                                    "returned to the caller"))

    def _step(self, condition) -> str:
        e = self.emu
        if e.frozen:
            return self._pulse_until(condition)
        return self._let_run(condition)

    @command("live [FACTOR]", "Run in real time, FACTOR times the nominal clock, panel updating.")
    def do_live(self, args):
        """Keys in the live view: s or Ctrl-C throw the switch to stop, r to
        run, space presses RESUME, p presses STEP, q or Enter return to
        the prompt (the clock is then held between commands)."""
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
        self.live_factor = factor
        return f"live at {factor:g} × {self.machine.nominal_hz:g} Hz"

    # ----- breakpoints and watchpoints -----------------------------------------

    def _next_number(self) -> int:
        self._numbers += 1
        return self._numbers

    @command("break WHERE", "Breakpoint at an address, a label or FILE:LINE.", complete=("where",))
    def do_break(self, args):
        """Held by the emulator at instruction boundaries; memory is not
        touched. Addresses take the assembler's numbers, labels and label+k."""
        if len(args) != 1:
            raise DebugError("usage: break ADDRESS|LABEL|FILE:LINE")
        address, name = self.where(args[0])
        for b in self.breakpoints.values():
            if b.address == address:
                return f"breakpoint {b.number} is already at {b.label}"
        number = self._next_number()
        self.breakpoints[number] = Breakpoint(number, address, self.describe_address(address))
        return f"breakpoint {number} at {self.describe_address(address)}"

    @command("watch NAME|[ADDRESS]", "Watchpoint: stop when a register, flag or memory word changes.",
             complete=("target",))
    def do_watch(self, args):
        """Checked after every instruction while the clock runs."""
        if len(args) != 1:
            raise DebugError("usage: watch NAME|[ADDRESS]")
        target = self.target(args[0])
        for w in self.watches.values():
            if (w.name, w.address) == (target.name, target.address):
                return f"watchpoint {w.number} already watches {w.label}"
        number = self._next_number()
        watch = Watch(number, target.name, target.address, target.label)
        self.watches[number] = watch
        return f"watchpoint {number} on {watch.label} (now {watch.read(self.emu):#x})"

    @command("points", "List the breakpoints and watchpoints.")
    def do_points(self, args):
        self._no_arguments(args, "points")
        rows = [f"{b.number:>3}  break  {b.label}" for b in self.breakpoints.values()]
        rows += [f"{w.number:>3}  watch  {w.label} (now {w.read(self.emu):#x})" for w in self.watches.values()]
        return "\n".join(sorted(rows, key=lambda r: int(r.split()[0]))) or "no breakpoints or watchpoints"

    @command("drop N|all", "Delete breakpoint or watchpoint N, or all of them.", complete=("point",))
    def do_drop(self, args):
        if len(args) != 1:
            raise DebugError("usage: drop N|all")
        if args[0].lower() == "all":
            count = len(self.breakpoints) + len(self.watches)
            self.breakpoints.clear()
            self.watches.clear()
            return f"dropped {count} point(s)"
        number = self.number(args[0], "point number")
        if self.breakpoints.pop(number, None) is None and self.watches.pop(number, None) is None:
            raise DebugError(f"there is no point {number} ('points' lists them)")
        return f"dropped point {number}"

    # ----- looking ----------------------------------------------------------------

    @command("registers", "Registers and flags.")
    def do_registers(self, args):
        self._no_arguments(args, "registers")
        return registers_text(self.emu)

    @command("dump [ADDRESS] [COUNT]", "Memory words in hex with characters (goes on from the last dump).",
             complete=("label",))
    def do_dump(self, args):
        if len(args) > 2:
            raise DebugError("usage: dump [ADDRESS] [COUNT]")
        start = self.address(args[0]) if args else self._dump_next
        count = self.count(args[1:], 64 if self.machine.data_bits <= 8 else 32, "word count")
        self._dump_next = min(start + count, self.machine.memory_words - 1)
        return dump_text(self.emu, start, count)

    @command("code [WHERE] [COUNT]", "Disassembly around pc (or WHERE) with labels and source lines.",
             complete=("where",))
    def do_code(self, args):
        if len(args) > 2:
            raise DebugError("usage: code [WHERE] [COUNT]")
        count = self.count(args[1:], 10, "instruction count")
        if args:
            first, _name = self.where(args[0])
            before = []
        else:
            first = self.emu.instruction_address
            before = self.view.instruction_starts_before(first, 3)
        addresses, address = list(before), first
        while len(addresses) < count and address < self.machine.memory_words:
            addresses.append(address)
            address += self._instruction(address)[1]
        return "\n".join(code_lines(self.emu, self.view, addresses,
                                    {b.address for b in self.breakpoints.values()}))

    @command("panel", "The panel: ring lamps, clock, hold line, latch, switch, sequencer, lamps, time.")
    def do_panel(self, args):
        self._no_arguments(args, "panel")
        return panel_text(self.emu, self.state_text(), self.view)

    @command("scope [CYCLES]", "Timing diagram of the last CYCLES clock cycles (default 16).")
    def do_scope(self, args):
        """Rows: clock, ring stages, hold line, halt latch, each control line
        driven, and panel events; one column per phase, STEP pulse or freeze."""
        cycles = self.count(args, 16, "cycle count")
        return scope_text(self.recorder.last_cycles(cycles), self.machine, self.width, self.recorder.gap)

    @command("why", "Why the clock last stopped.")
    def do_why(self, args):
        self._no_arguments(args, "why")
        return f"{self.last_stop}\n{self.state_text()}. {self.here_text()}"

    @command("console", "The console output the program has written so far.")
    def do_console(self, args):
        self._no_arguments(args, "console")
        data = bytes(self.emu.output)
        if not data:
            return "no console output yet"
        text = "".join(chr(b) if 32 <= b < 127 or b == 10 else f"\\x{b:02x}" for b in data)
        return f"{len(data)} byte(s):\n{text}"

    # ----- changing -----------------------------------------------------------------

    @command("put NAME|[ADDRESS] VALUE", "Set a register, flag or memory word.", complete=("target",))
    def do_put(self, args):
        if len(args) != 2:
            raise DebugError("usage: put NAME|[ADDRESS] VALUE")
        target = self.target(args[0])
        value = self._value_for(target, args[1])
        if target.name is not None:
            self.emu.set(target.name, value)
        else:
            self.emu.memory[target.address] = value
        return f"{target.label} = {value:#x} ({value})"

    @command("save FILE", "Save a snapshot of the whole machine (the emulator's snapshot format).")
    def do_save(self, args):
        if len(args) != 1:
            raise DebugError("usage: save FILE")
        try:
            self.emu.snapshot(args[0])
        except OSError as exc:
            raise DebugError(f"cannot write {args[0]}: {exc.strerror or exc}") from None
        return f"snapshot saved to {args[0]} at cycle {self.emu.cycles:,}"

    @command("load FILE", "Load a snapshot saved before; breakpoints and watchpoints stay.")
    def do_load(self, args):
        if len(args) != 1:
            raise DebugError("usage: load FILE")
        self._attach(Emulator.restore(args[0], self.machine))
        self.last_stop = f"snapshot loaded from {args[0]}"
        return f"snapshot loaded: cycle {self.emu.cycles:,}; {self.state_text()}. {self.here_text()}"

    # ----- timing ----------------------------------------------------------------------

    @command("waves FILE|off", "Record a waveform (VCD) of the clock from now on; 'waves off' writes it.")
    def do_waves(self, args):
        """The dump holds the clock, ring stages, hold line, halt latch, switch,
        sequencer step, control lines, pc and registers in simulated time, for
        any waveform viewer. While recording, runs step phase by phase (slower)."""
        if len(args) != 1:
            raise DebugError("usage: waves FILE|off")
        if args[0].lower() == "off":
            if self._waves is None:
                raise DebugError("no waveform is being recorded ('waves FILE' starts one)")
            path = self._waves[0]
            self.close()
            return f"waveform written to {path} (up to cycle {self.emu.cycles:,})"
        if self._waves is not None:
            raise DebugError(f"already recording to {self._waves[0]}; 'waves off' writes it first")
        try:
            recording = record_vcd(self.emu, args[0])
            recording.__enter__()
        except OSError as exc:
            raise DebugError(f"cannot write {args[0]}: {exc.strerror or exc}") from None
        self._waves = (args[0], recording)
        return f"recording a waveform to {args[0]} from cycle {self.emu.cycles:,}; 'waves off' writes it"

    @command("beat SEED|even", "An irregular clock drawn from the machine's parts (SEED), or the even one.")
    def do_beat(self, args):
        """Each turn of the ring then takes phase durations drawn from the
        machine file's [timing] tolerances for one built clock; results and
        cycle counts do not change, simulated time and the waveform do."""
        if len(args) != 1:
            raise DebugError("usage: beat SEED|even")
        if args[0].lower() == "even":
            self.emu.clock_source = None
            return "the clock beats evenly at its nominal phase durations"
        seed = self.number(args[0], "seed")
        if seed < 0:
            raise DebugError(f"a seed is 0 or more, not {seed}")
        try:
            self.emu.clock_source = spread_source(self.machine, seed)
        except MachineError as exc:
            raise DebugError(f"no irregular clock for {self.machine.name}: {exc.message}") from None
        return f"irregular clock: one built from the [timing] parts with seed {seed}"

    def close(self) -> None:
        """Finish what is open: a waveform being recorded is written."""
        if self._waves is not None:
            _path, recording = self._waves
            self._waves = None
            recording.__exit__(None, None, None)

    # ----- the rest -------------------------------------------------------------------

    @command("help [COMMAND]", "List the commands, or explain one.", complete=("command",))
    def do_help(self, args):
        if args:
            cmd = self.find_command(args[0])
            text = f"{cmd.usage}\n  {cmd.summary}"
            if cmd.details:
                text += "\n  " + " ".join(cmd.details.split())
            if cmd.repeats:
                text += "\n  An empty line repeats it."
            return text
        width = max(len(c.usage) for c in COMMANDS.values())
        rows = [f"  {c.usage:<{width}}  {c.summary}" for c in COMMANDS.values()]
        return ("Commands (any unambiguous start of a name will do):\n" + "\n".join(rows) +
                f"\nNumbers: {NUMBER_FORMS}. An empty line repeats pulse, instr, over or leave. "
                "Ctrl-C during a run throws the stop switch.")

    @command("quit", "Leave the debugger.")
    def do_quit(self, args):
        self._no_arguments(args, "quit")
        self.close()
        self.finished = True
        return ""

    def _no_arguments(self, args, name: str) -> None:
        if args:
            raise DebugError(f"'{name}' takes no arguments")
