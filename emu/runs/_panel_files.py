"""Panel files: the toggles and input a program expects, kept beside it.

A program that reads the panel switches or the input stream gets them from
an optional *panel file* beside it, ``prog.asm`` → ``prog.panel.toml``::

    switches = 0x2A          # the panel toggles (default 0)
    input = "12,7\\n"        # the input stream as text, or
    input_file = "prog.in"   # its bytes from a file (relative to the panel file)
    max_cycles = 20_000_000  # a tighter (or looser) limit for this program
    machine = "ref8"         # the machine it runs on: a shipped name or a machine file
                             # (relative to the panel file); see ``emu.runs.MachineChooser``

It may also hold an *operator script*: what the operator does each time the
clock freezes on a halt or a pause, one ``[[at_halt]]`` table per halt in the
order the run reaches them::

    [[at_halt]]              # the first halt or pause
    switches = 0x05          # set the toggles
    input = "7\n"           # feed more input (after what is still unread)
    resume = true            # press RESUME (the default); false ends the run here
    stop_after = 120         # throw STOP 120 cycles after RESUME,
    steps = 3                # press STEP 3 times, then throw RUN again

Every key is optional and they act in the order shown: toggles, input,
RESUME, then (with ``stop_after``) STOP, ``steps`` STEP presses and RUN;
each press gives what the machine's ``[clock] step`` says (one pulse, or
every pulse up to the next hold point).
The operator stops pressing STEP when the halt lamp lights; that halt, like
one reached before ``stop_after`` cycles have run, is answered by the next
table (an answer at the final halt resumes past it, as the operator would).
When the script runs out, the run goes on as without one: a pause is
resumed, a halt ends the run. Answers left over when the run ends (at the
cycle limit) are a warning, and so fail ``relaybench test``: the run did not
go as the script expected. ``.expect`` checks are judged at every halt, before the
operator acts.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from pathlib import Path

import asm

from ..description import Machine, Table, key_line, toml_syntax_error
from ._loading import ProgramError

__all__ = ["PANEL_SUFFIX", "HaltAnswer", "PanelMachine", "PanelSettings", "operator_script_for", "panel_machine",
           "panel_path_for", "read_panel_file"]

PANEL_SUFFIX = ".panel.toml"


@dataclass(frozen=True)
class HaltAnswer:
    """What the operator does at one halt, in this order (one ``[[at_halt]]`` table)."""
    switches: int | None = None
    """The toggles set; None leaves them as they are."""
    more_input: bytes = b""
    """Bytes fed after what is still unread of the input stream."""
    resume: bool = True
    stop_after: int | None = None
    """Cycles after RESUME at which the switch is thrown to STOP; None: it stays at RUN."""
    steps: int = 0
    """STEP presses given at that stop before the switch goes back to RUN."""

@dataclass(frozen=True)
class PanelSettings:
    switches: int = 0
    input_bytes: bytes = b""
    max_cycles: int | None = None
    at_halt: tuple[HaltAnswer, ...] = ()


def operator_script_for(program_path: str, machine: Machine) -> tuple[HaltAnswer, ...]:
    """The operator script of a program's panel file; none without one."""
    panel_path = panel_path_for(program_path)
    return read_panel_file(panel_path, machine).at_halt if panel_path.exists() else ()

def panel_path_for(program_path: str) -> Path:
    path = Path(program_path)
    return path.with_name(path.stem + PANEL_SUFFIX)


@dataclass(frozen=True)
class PanelMachine:
    """The machine a panel file names, and where it says so."""
    name: str
    panel_path: Path
    line: int | None


def panel_machine(path: Path) -> PanelMachine | None:
    """The ``machine`` key of a panel file (None without one), read before the machine is known."""
    panel, text = _panel_table(path)
    name = panel.string("machine", default=None, expected="a machine name or the path of a machine file")
    if name is None:
        return None
    if not name.strip():
        panel.fail("'machine' must name a machine, not an empty string", "machine")
    return PanelMachine(name, path, key_line(text, ("machine",)))


def read_panel_file(path: Path, machine: Machine) -> PanelSettings:
    """Read and check a panel file; problems raise ProgramError naming the key and its line."""
    panel, _text = _panel_table(path)
    panel.known_keys(("switches", "input", "input_file", "max_cycles", "machine", "at_halt"))
    panel.string("machine", default=None, expected="a machine name or the path of a machine file")
    switches = panel.integer("switches", low=0, high=machine.data_mask, default=0,
                             expected=f"an integer 0…{machine.data_mask} (the {machine.data_bits} toggles "
                                      f"of {machine.name})")
    if "input" in panel and "input_file" in panel:
        panel.fail("give 'input' or 'input_file', not both", "input_file")
    stream = b""
    if "input" in panel:
        stream = panel.string("input", expected="a string").encode("utf-8")
    if "input_file" in panel:
        name = panel.string("input_file", expected="a file name")
        try:
            stream = (path.parent / name).read_bytes()
        except OSError as exc:
            panel.fail(f"'input_file': cannot read '{name}' ({exc.strerror})", "input_file")
    limit = panel.integer("max_cycles", low=1, default=None, expected="a positive integer")
    return PanelSettings(switches, stream, limit, _operator_script(panel, machine))


def _panel_table(path: Path) -> tuple[Table, str]:
    """The panel file as a checked-getter table, and its text (for key lines)."""
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ProgramError(f"cannot read the panel file ({exc})", file=str(path)) from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message, line, column, source = toml_syntax_error(exc, text)
        raise ProgramError(message, diagnostics=[asm.Diagnostic(str(path), line, column,
                                                                f"not valid TOML: {message}", source)]) from None
    except RecursionError:
        raise ProgramError("not a panel file (nested too deeply)", file=str(path)) from None

    def fail(_where, key, message):
        line = key_line(text, key)
        raise ProgramError(message, diagnostics=[asm.Diagnostic(str(path), line, None, message)])

    return Table(data, "panel file", fail), text


def _operator_script(panel: Table, machine: Machine) -> tuple[HaltAnswer, ...]:
    if "at_halt" not in panel:
        return ()
    tables = panel.tables("at_halt", lambda n: f"operator answer {n}",
                          expected="'at_halt' must be tables written [[at_halt]], one per halt")
    answers = []
    for number, table in enumerate(tables, 1):
        table.known_keys(("switches", "input", "resume", "stop_after", "steps"))
        switches = table.integer("switches", low=0, high=machine.data_mask, default=None,
                                 expected=f"an integer 0…{machine.data_mask} (the {machine.data_bits} "
                                          f"toggles of {machine.name})")
        more = table.string("input", default="", expected="a string").encode("utf-8")
        resume = table.boolean("resume", default=True)
        stop_after = table.integer("stop_after", low=1, default=None, expected="a positive number of cycles")
        steps = table.integer("steps", low=0, default=0, expected="a number of STEP presses (0 or more)")
        if stop_after is not None and not resume:
            table.fail("'stop_after' needs 'resume = true': the clock must run before STOP is thrown",
                       "stop_after")
        if steps and stop_after is None:
            table.fail("'steps' needs 'stop_after': STEP is pressed at the stop it makes", "steps")
        if not resume and number < len(tables):
            table.fail(f"'resume = false' ends the run, so the {len(tables) - number} answer(s) after it "
                       f"would never be used", "resume")
        answers.append(HaltAnswer(switches, more, resume, stop_after, steps))
    return tuple(answers)
