"""The debugger's state and dispatch, free of any terminal.

``Session.execute(line)`` takes one command line and returns the text to
show, so the REPL, the live view and the tests drive the very same code.
The commands themselves live in their groups (``_clock_commands``,
``_point_commands``, ``_view_commands``, ``_file_commands``, and ``help``
and ``quit`` below), each one function entered in the table of ``_table``,
which drives dispatch, ``help`` and tab completion.

Between commands the generator is *frozen* at a hold point, by the
switch (state STOP) or by the halt latch (state HALT): STEP works, and
instruction steps are made of STEP pulses. A command that lets the clock
run ends frozen too: a halt freezes it, and any stop of the debugger's own
(breakpoint, watchpoint, goal, cycle limit) throws the switch to STOP where
it fired, as an operator at the panel would. Only the live view can leave
the clock running between commands. ``_stopping.STATE_TABLE`` says what
each command does in each state; ``help`` shows it.
How a run or a step stops is the ``RunPolicy`` of ``_stopping``.
"""

from __future__ import annotations

import time
from contextlib import ExitStack
from typing import Callable

from emu import Emulator
from emu.errors import RelaybenchError
import asm
from emu.description.notation import NUMBER_FORMS
from emu.runs import DEFAULT_MAX_CYCLES
from emu.timing import spread_source

from . import _clock_commands, _file_commands, _point_commands, _view_commands
from ._arguments import no_arguments
from ._calls import call_shape
from ._conditions import Watch
from ._panel import address_hex
from ._presses import Presses, press_count_text
from ._program import Places, ProgramView, empty_view
from ._running import ReplayMismatch
from ._stopping import STATE_TABLE, Breakpoint, RunPolicy, Stop, stop_state
from ._table import COMMANDS, DebugError, command, find_command, words_of
from ._trace import Recorder

__all__ = ["COMMAND_GROUPS", "Session"]

COMMAND_GROUPS = (_clock_commands, _point_commands, _view_commands, _file_commands)
"""The modules whose commands fill the table, in the order ``help`` lists them
(this module's ``help`` and ``quit`` come last)."""
ANNOUNCE_AFTER = 0.3
"""Seconds of wall time after which a run says that it is running."""


class Session:
    def __init__(self, machine, view: ProgramView | None = None, emulator: Emulator | None = None,
                 *, width: int = 96, max_cycles: int = DEFAULT_MAX_CYCLES):
        self.machine = machine
        self.max_cycles = max_cycles
        """Cycle limit of a run that names none (that of 'relaybench run')."""
        self.view = view or empty_view()
        self.places = Places(machine, self.view)
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
        self.dump_next = 0
        """Where a 'dump' without an address goes on."""
        self.waves: tuple[str, ExitStack] | None = None
        """(path, the recording's context stack) while 'waves' records."""
        self.beat_seed: int | None = None
        """The seed of the irregular clock chosen with 'beat', None for the even clock."""
        self.fingerprint = None if self.view.loaded is None else asm.image_fingerprint(self.view.loaded.segments)
        """The program image's fingerprint, recorded in snapshots (None: no program)."""
        if emulator is not None:
            self.attach(emulator)
            return
        self.attach(self.powered_on())
        self.settle()

    def set_beat(self, seed: int | None, turns_drawn: int = 0) -> None:
        """The irregular clock of ``seed`` (None: the even one), its draws advanced past
        ``turns_drawn`` turns, the last of which is the turn in progress (a snapshot's)."""
        source = None
        if seed is not None:
            source = spread_source(self.machine, seed)
            if turns_drawn > 1:
                source.turns(turns_drawn - 1)
        self.emu.clock_source = source
        self.beat_seed = seed

    def powered_on(self, like: Emulator | None = None) -> Emulator:
        """A machine just switched on with the program loaded and the switch at STOP;
        ``like`` lends it its toggles and input stream (rewound), which power leaves alone."""
        emulator = Emulator(self.machine)
        if self.view.loaded is not None:
            emulator.load(self.view.loaded.segments)
        if like is not None:
            emulator.switches = like.switches
            emulator.input_bytes = like.input_bytes
        emulator.set_switch_run(False)
        return emulator

    def restart(self) -> None:
        """Power-cycle and reload: the state of a fresh machine, the program loaded again,
        input rewound, ports and counters cleared, the beat drawn again from its seed.
        The emulator object stays, so the timing recorder stays attached. The beat is
        chosen after the clock settles, as 'beat' typed at power-on would be."""
        fresh = self.powered_on(like=self.emu)
        self.emu.clock_source = None
        self.emu.restore_state(fresh.snapshot_state(), "<power-on>")
        self.recorder.clear()
        self.settle()
        self.set_beat(self.beat_seed)

    def attach(self, emulator: Emulator) -> None:
        """Work on ``emulator`` from now on (power-on, or a snapshot loaded)."""
        self.close()
        self.emu = emulator
        self.recorder.clear()
        emulator.observe(self.recorder)

    def close(self) -> None:
        """Finish what is open: a waveform being recorded is written."""
        if self.waves is not None:
            _path, recording = self.waves
            self.waves = None
            recording.close()

    def next_number(self) -> int:
        """Breakpoints and watchpoints share one numbering."""
        self._numbers += 1
        return self._numbers

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
        words = words_of(line)
        try:
            cmd = find_command(words[0])
            text = cmd.function(self, words[1:])
        except ReplayMismatch as exc:
            self.last_stop = "unknown: the last run's replay disagreed with it"
            return f"internal error: {exc}; please report it. The machine is as the run left it."
        except RelaybenchError as exc:
            return exc.render()
        self.last_repeat = line if cmd.repeats else None
        return text

    def complete(self, before_cursor: str) -> list[str]:
        """Candidates for the word being typed at the end of ``before_cursor``."""
        words = words_of(before_cursor)
        if not before_cursor or before_cursor[-1].isspace():
            words.append("")
        if len(words) <= 1:
            return sorted(n for n in COMMANDS if n.startswith(words[0].lower()))
        try:
            cmd = find_command(words[0])
        except DebugError:
            return []
        position = len(words) - 2
        if position >= len(cmd.complete):
            return []
        typed = words[-1]
        return sorted(c for c in self._candidates(cmd.complete[position]) if c.startswith(typed))

    def _candidates(self, kind: str) -> list[str]:
        m = self.machine
        names = m.visible_names
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

    # ----- describing where we are ---------------------------------------------

    def latch_origin(self) -> str:
        """What set the halt latch, in words: the halt or pause instruction and its place."""
        address = self.emu.halt_address
        if address is None:
            return "set"
        return f"set by the {self.places.halt_kind(address)} at {self.places.name(address)}"

    def state_text(self) -> str:
        """The stop state of ``STATE_TABLE`` in words: the panel's first line and 'why' show it."""
        e = self.emu
        switch = "RUN" if e.switch_run else "STOP"
        state = stop_state(e)
        if state == "HALT":
            return f"frozen: the halt latch is set ({self.latch_origin()}), switch at {switch} (state HALT)"
        if state == "STOP":
            return "frozen: the switch is at STOP (state STOP)"
        return "the clock runs, as the live view left it; 'throw stop' freezes it (state RUNNING)"

    def here_text(self) -> str:
        e = self.emu
        address = e.instruction_address
        text, _length = self.instruction(address)
        place = self.view.place_text(address)
        symbol = self.view.symbol_for(address)
        at = " ".join(p for p in (address_hex(self.machine, address), symbol, place) if p)
        if e.at_instruction_boundary:
            return f"next: {text}   at {at}"
        instruction, index = e.sequencer
        if instruction is None:
            return (f"inside the fetch of: {text}   at {at}, fetch step {index + 1} of "
                    f"{len(self.machine.fetch)} next")
        return f"inside: {text}   at {at}, micro-step {index + 1} of {instruction.cycles(self.machine)} next"

    def instruction(self, address: int) -> tuple[str, int]:
        """The disassembly of the instruction at ``address`` and its length in words."""
        return asm.disassemble_at(self.machine, self.emu.word_at, address, self.view)

    # ----- running and stepping -------------------------------------------------

    def policy(self, goal=None, limit: int | None = None, interrupted=lambda: False) -> RunPolicy:
        """This session's stopping rules: its breakpoints and watchpoints, and ``goal``."""
        return RunPolicy(self.emu, self.breakpoints.values(), self.watches.values(), goal,
                         limit=limit, interrupted=interrupted)

    def settle(self) -> Stop:
        """Let a clock whose hold line is high run on to its hold point (a few cycles at most)."""
        limit = 2 * len(self.machine.phases) + 2
        return RunPolicy(self.emu, limit=limit).run(self.recorder)

    def let_run(self, goal=None, max_cycles: int | None = None, prelude: str | None = None) -> str:
        """Run the clock; ``prelude`` (what the panel action did) comes first in what is said,
        also when a long run announces itself before it ends."""
        self._interrupted = False
        start = self.emu.cycles
        watch = self._watch_for_ctrl_c(prelude)
        stop = self.policy(goal, max_cycles or self.max_cycles, watch).run(self.recorder)
        self.last_stop = stop.describe(self.places)
        if self.emu.halt_latch and not self.emu.frozen:
            also = self.last_stop
            self.last_stop = f"{self.settle().describe(self.places)} (also: {also})"
        elif not self.emu.frozen:
            self.hold_at_stop()
        ran = self.emu.cycles - start
        head = f"{prelude}\n" if prelude and not watch.told else ""
        return f"{head}{self.last_stop}\n{ran:,} cycles run. {self.here_text()}"

    def hold_at_stop(self) -> None:
        """A debugger stop of a running clock: the switch thrown to STOP where it fired, and
        the clock carried on to its hold point (none on ref8, whose hold point is every cycle's
        start), so the machine is as the hardware would be and STEP works."""
        self.emu.set_switch_run(False)
        self.settle()

    def step(self, goal) -> str:
        """An instruction step: STEP presses while frozen, else the running clock."""
        if not self.emu.frozen:
            return self.let_run(goal)
        given = self.pulses(goal)
        return f"{given.stop.describe(self.places)} ({press_count_text(self.machine, given)}). {self.here_text()}"

    def pulses(self, goal=None, count: int | None = None, keep: int = 0) -> Presses:
        """STEP presses under this session's rules (see ``RunPolicy.pulse``), the first ``keep``
        micro-steps listed with their bus; a stop becomes 'why'."""
        self._interrupted = False
        given = self.policy(goal, self.max_cycles, self._watch_for_ctrl_c()).pulse(
            count, bus=lambda: self.recorder.last_bus, keep=keep)
        if given.stop is not None:
            self.last_stop = given.stop.describe(self.places)
        return given

    def released(self, was_frozen: bool, done: str) -> str:
        """After a panel action: if it let a frozen generator go, the clock now runs."""
        if was_frozen and not self.emu.frozen:
            return self.let_run(prelude=f"{done}; the clock runs")
        return f"{done}; {self.state_text()}"

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


# ----- the rest: after the groups, so that help lists them last -------------------

@command("help [COMMAND]", "List the commands, or explain one.", complete=("command",))
def do_help(session, args):
    if args:
        cmd = find_command(args[0])
        text = f"{cmd.usage}\n  {cmd.summary}"
        if cmd.details:
            text += "\n  " + " ".join(cmd.details.split())
        if cmd.repeats:
            text += "\n  An empty line repeats it."
        return text
    groups = [group.__name__ for group in COMMAND_GROUPS] + [__name__]
    listed = sorted(COMMANDS.values(), key=lambda c: groups.index(c.function.__module__))
    width = max(len(c.usage) for c in listed)
    rows = [f"  {c.usage:<{width}}  {c.summary}" for c in listed]
    return ("Commands (any unambiguous start of a name will do):\n" + "\n".join(rows) +
            f"\nNumbers: {NUMBER_FORMS}. An empty line repeats pulse, instr, over or leave. "
            "Ctrl-C during a run throws the stop switch.\n" + STATE_TABLE)


@command("quit", "Leave the debugger.")
def do_quit(session, args):
    no_arguments(args, "quit")
    session.close()
    session.finished = True
    return ""
