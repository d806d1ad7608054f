"""Looking at the machine, and changing a word of it.

Each command turns a view of ``_panel`` (registers, memory, code, the
panel, the timing diagram) or the console output into text; ``put`` is the
one that writes, a register, flag or memory word.
"""

from __future__ import annotations

import re

from ._arguments import address, count, no_arguments, target, value_for, watched_hex, where
from ._panel import code_lines, dump_text, dump_words_per_row, panel_text, registers_text, scope_text
from ._table import DebugError, command

__all__ = []

_HELD = re.compile(r"\[(.+)\]")


@command("registers", "Registers and flags.")
def do_registers(session, args):
    no_arguments(args, "registers")
    return registers_text(session.emu)


@command("dump [ADDRESS|[REGISTER]] [COUNT]", "Memory words in hex and binary, rows headed by labels.",
         complete=("label",))
def do_dump(session, args):
    """Words of 8 bits or fewer show hex, bits and character, four to a
    row; wider words hex only, eight to a row. [REGISTER] starts at the
    address a register or pair holds ([x] is where x points). Without an
    address the dump goes on from the last one."""
    if len(args) > 2:
        raise DebugError("usage: dump [ADDRESS|[REGISTER]] [COUNT]")
    m = session.machine
    start = _dump_start(session, args[0]) if args else session.dump_next
    words = count(args[1:], 8 * dump_words_per_row(m), "word count")
    session.dump_next = min(start + words, m.memory_words - 1)
    return dump_text(session.emu, start, words, session.view)


def _dump_start(session, text: str) -> int:
    """An address, or [NAME]: the address held by a register or pair (wrapped to memory)."""
    match = _HELD.fullmatch(text)
    if match is None:
        return address(session.places, text)
    m = session.machine
    name = match[1].strip().lower()
    if name in m.registers or name in m.groups:
        return session.emu.get(name) & m.memory_words - 1
    return address(session.places, match[1].strip())


@command("code [WHERE] [COUNT]", "Disassembly around pc (or WHERE) with labels and source lines.",
         complete=("where",))
def do_code(session, args):
    if len(args) > 2:
        raise DebugError("usage: code [WHERE] [COUNT]")
    wanted = count(args[1:], 10, "instruction count")
    if args:
        first, _name = where(session.places, args[0])
        before = []
    else:
        first = session.emu.instruction_address
        before = session.view.instruction_starts_before(first, 3)
    addresses, at = list(before), first
    while len(addresses) < wanted and at < session.machine.memory_words:
        addresses.append(at)
        at += session.instruction(at)[1]
    return "\n".join(code_lines(session.emu, session.view, addresses,
                                {b.address for b in session.breakpoints.values()}))


@command("panel", "The panel: ring, clock, hold line, latch, switch, sequencer, register and bus lamps.")
def do_panel(session, args):
    """Every register is a row of lamps (lit ● is a 1, most significant bit
    first, in groups of four) with its value in hex. The bus row is what the
    last micro-step carried: the value of its transfer (the first
    'dst <- value', 'mem[a] <- value' or 'out(port, value)', not counting
    the incrementer 'e + 1' when there is another), as the destination
    latched it, and where it went; a step with no transfer leaves it dark."""
    no_arguments(args, "panel")
    return panel_text(session.emu, session.state_text(), session.view, session.recorder.last_bus)


@command("scope [CYCLES]", "Timing diagram of the last CYCLES clock cycles (default 16).")
def do_scope(session, args):
    """Rows: clock, ring stages, hold line, halt latch, each control line
    driven, and panel events; one column per phase, STEP pulse or freeze.
    The diagram is cut into blocks as wide as the terminal (80 when piped)."""
    cycles = count(args, 16, "cycle count")
    recorder = session.recorder
    return scope_text(recorder.last_cycles(cycles), session.machine, session.width, recorder.gap)


@command("why", "Why the clock last stopped.")
def do_why(session, args):
    no_arguments(args, "why")
    return f"{session.last_stop}\n{session.state_text()}. {session.here_text()}"


@command("console", "The console output the program has written so far.")
def do_console(session, args):
    no_arguments(args, "console")
    data = bytes(session.emu.output)
    if not data:
        return "no console output yet"
    text = "".join(chr(b) if 32 <= b < 127 or b == 10 else f"\\x{b:02x}" for b in data)
    return f"{len(data)} byte(s):\n{text}"


@command("put NAME|[ADDRESS] VALUE", "Set a register, flag or memory word.", complete=("target",))
def do_put(session, args):
    if len(args) != 2:
        raise DebugError("usage: put NAME|[ADDRESS] VALUE")
    written = target(session.places, args[0])
    value = value_for(session.machine, written, args[1])
    if written.name is not None:
        session.emu.set(written.name, value)
    else:
        session.emu.memory[written.address] = value
    return f"{written.label} = {watched_hex(session.machine, written, value)} ({value})"
