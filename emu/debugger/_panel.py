"""The debugger's views: registers, memory, code, the panel and the scope.

Every view is a function from machine state to text, so the same text
appears in the terminal, in the live view and in tests. Word and address
widths come from the machine description.
"""

from __future__ import annotations

import textwrap

import asm

from .. import formatting
from ..formatting import hex_digits

from ._trace import Column

__all__ = ["registers_text", "dump_text", "code_lines", "panel_text", "scope_text", "bus_text",
           "duration_text", "word_hex", "address_hex", "lamp_row", "SCOPE_LABEL_ROOM"]

LIT, DARK = "●", "○"
HIGH, LOW = "‾", "_"
BAR = "█"
IDLE = "·"


def word_hex(machine, value: int) -> str:
    return hex_digits(value, machine.data_bits)


def address_hex(machine, value: int) -> str:
    return hex_digits(value, machine.address_bits)


def _hex(value: int, bits: int) -> str:
    return hex_digits(value, bits)


def duration_text(ns: int) -> str:
    return formatting.duration_text(ns / 1e9)


def _in_fours(symbols: str) -> str:
    """Groups of four from the right: a person reads ○○●○ ●○○● faster than eight in a row."""
    head = len(symbols) % 4
    groups = ([symbols[:head]] if head else []) + [symbols[i:i + 4] for i in range(head, len(symbols), 4)]
    return " ".join(groups)


def lamp_row(value: int, bits: int) -> str:
    """``bits`` lamps, most significant first, in groups of four."""
    return _in_fours("".join(LIT if value >> b & 1 else DARK for b in reversed(range(bits))))


def _bits(value: int, bits: int) -> str:
    """Binary digits grouped as ``lamp_row`` groups its lamps."""
    return _in_fours(f"{value:0{bits}b}")


def bus_text(machine, bus) -> str:
    """``bus`` (a ``Bus`` of ``_trace``) in words: its value in hex and where it went."""
    if bus is None:
        return "dark"
    if bus.register is not None:
        into = f"into {bus.register}"
    elif bus.address is not None:
        into = f"into [{address_hex(machine, bus.address)}]"
    else:
        into = f"out to port {bus.port}"
    return f"{_hex(bus.value, bus.bits)} {into}"


def registers_text(emu) -> str:
    m = emu.machine
    cells = []
    for reg in m.visible_registers:
        value = emu.get(reg.name)
        cells.append(f"{reg.name:<3} {_hex(value, reg.width):>4} {value:>6}")
    for group in m.visible_groups:
        value = emu.get(group.name)
        cells.append(f"{group.name:<3} {_hex(value, group.width):>4} {value:>6}")
    rows = ["   ".join(cells[i:i + 4]) for i in range(0, len(cells), 4)]
    flags = "  ".join(f"{name} {emu.get(name)}" for name in m.flags)
    rows.append(f"flags  {flags}")
    return "\n".join(rows)


def dump_words_per_row(machine) -> int:
    """Narrow words (8 bits or fewer) are shown in binary too, four to a row;
    wider ones in hex only, eight to a row, so a row stays within 80 columns."""
    return 4 if machine.data_bits <= 8 else 8


def dump_text(emu, start: int, count: int, view=None) -> str:
    """Memory as the builder reads it: rows of words at their addresses.

    A word of 8 bits or fewer shows its hex, its bits as the lamps of the
    memory would (in groups of four) and the character it codes, if any.
    A label of the program starts a row of its own, headed ``label:``, so
    data reads by name. Rows keep to multiples of the words per row.
    """
    m = emu.machine
    per_row = dump_words_per_row(m)
    narrow = m.data_bits <= 8
    end = min(start + count, m.memory_words)
    labels = {} if view is None else {a: view.labels_at(a) for a in range(start, end) if view.labels_at(a)}

    def cell(word: int) -> str:
        if not narrow:
            return word_hex(m, word)
        char = chr(word) if 32 < word < 127 else "·"
        return f"{word_hex(m, word)} {_bits(word, m.data_bits)} {char}"

    rows, at = [], start
    while at < end:
        for label in labels.get(at, []):
            rows.append(f"{label}:")
        row_end = min(at - at % per_row + per_row, end)
        row_end = next((a for a in range(at + 1, row_end) if a in labels), row_end)
        cells = [cell(emu.memory[a]) for a in range(at, row_end)]
        rows.append(f"  {address_hex(m, at)}   " + "   ".join(cells))
        at = row_end
    return "\n".join(rows)


def code_lines(emu, view, addresses, breakpoints) -> list[str]:
    """One row per instruction: markers, address, words, text, then its source line."""
    m = emu.machine
    here = emu.instruction_address
    word_at = emu.word_at
    rows = []
    for address in addresses:
        for label in view.labels_at(address):
            rows.append(f"{'':8}{label}:")
        text, length = asm.disassemble_at(m, word_at, address, view)
        words = " ".join(word_hex(m, word_at(a)) for a in range(address, address + length))
        mark = ("pc>" if address == here else "   ") + ("*" if address in breakpoints else " ")
        place = view.place(address)
        source = ""
        if place:
            line = view.source_text(*place)
            source = f"  {place[0]}:{place[1]}  {line.strip() if line else ''}"
        rows.append(f"{mark} {address_hex(m, address)}  {words:<9} {text:<22}{source}".rstrip())
    return rows


def _register_lamps(emu, bus) -> list[str]:
    """A lamp row per register (visible ones first, then the internal latches),
    and the bus: two to a line when they fit in 80 columns."""
    m = emu.machine
    registers = m.visible_registers + [r for r in m.registers.values() if r.internal]
    widest = max([r.width for r in registers] + [bus.bits if bus else 0])
    name_room = max([len("bus")] + [len(r.name) for r in registers])
    lamp_room = len(lamp_row(0, widest))
    hex_room = (widest + 3) // 4

    def cell(name: str, value: int | None, bits: int) -> str:
        lamps = lamp_row(value, bits) if value is not None else lamp_row(0, bits).replace(DARK, "·")
        digits = _hex(value, bits) if value is not None else "-" * ((bits + 3) // 4)
        return f"{name:<{name_room}} {lamps:>{lamp_room}} {digits:>{hex_room}}"

    cells = [cell(r.name, emu.get(r.name), r.width) for r in registers]
    width = len(cells[0])
    per_line = 2 if 2 + 2 * width + 4 <= 80 else 1
    rows = ["  " + "    ".join(cells[i:i + per_line]) for i in range(0, len(cells), per_line)]
    carried = cell("bus", bus.value if bus else None, bus.bits if bus else m.data_bits)
    rows.append(f"  {carried}   {bus_text(m, bus)}")
    rows.append("  flags " + "  ".join(f"{name} {LIT if emu.get(name) else DARK}" for name in m.flags))
    return rows


def panel_text(emu, state: str, view=None, bus=None) -> str:
    """The panel as a person would see it, plus what the control unit is doing.

    ``view`` (what is known of the program) puts labels into the instruction shown;
    ``bus`` is what the bus carried in the last micro-step (a ``Bus``, or None: dark).
    """
    m = emu.machine
    phase = m.phases[emu.phase_index]
    ring = " ".join(LIT if s + 1 in phase.ring else DARK for s in range(m.ring_stages))
    clock = "high" if phase.level else "low"
    if emu.frozen:
        clock += ", frozen at a hold point"
        if m.step_press == "hold":
            pulses = m.pulses_per_step_press()[phase.name]
            clock += f"; STEP runs {pulses} pulse{'s' if pulses != 1 else ''} to the next"
    instruction, index = emu.sequencer
    total = instruction.cycles(m) if instruction else len(m.fetch)
    if instruction is None:
        doing = "fetch"
    else:
        concrete, _length = asm.disassemble_at(m, emu.memory.__getitem__, emu.instruction_address, view)
        doing = f"{instruction.display} ({concrete} at {address_hex(m, emu.instruction_address)})"
    step = emu.current_step
    lines = ", ".join(emu.driven_lines()) or "none"
    data_bits = m.data_bits
    rows = [
        f"{m.name} panel — {state}",
        f"  ring        {ring}    phase {phase.name}, clock {clock}",
        f"  RUN/STOP    {'RUN ' if emu.switch_run else 'STOP'}      hold line {'HIGH' if emu.hold_line else 'low '}"
        f"   halt latch {'SET' if emu.halt_latch else 'clear'}",
        f"  sequencer   {doing}, step {index + 1} of {total or 1} next: {step.text}",
        f"  next drives {lines}",
        f"  lamps       {lamp_row(emu.lamps, data_bits)}  {word_hex(m, emu.lamps)}",
        f"  toggles     {lamp_row(emu.switches, data_bits)}  {word_hex(m, emu.switches)}",
        f"  pc {address_hex(m, emu.pc)}   cycles {emu.cycles:,}   instructions {emu.instructions:,}"
        f"   time {duration_text(emu.time_ns)}",
        *_register_lamps(emu, bus),
    ]
    return "\n".join(rows)


_EVENT_MARKS = {"stop": "s", "run": "r", "resume": "R", "reset": "Z", "switches": "t",
                "latch set": "L", "latch clear": "l"}
_LEGEND = ("clock: ‾ high, _ low; █ a lit ring stage or a control line driven; hold, latch: levels\n"
           "generator: F frozen at a hold point, P a STEP pulse\n"
           "panel: s stop, r run, R resume, Z reset, t toggles, L latch set, l latch cleared")


SCOPE_LABEL_ROOM = 10
"""Least room for the row names at the left of the scope."""
_SCOPE_ROWS = ("cycle", "clock", "hold", "latch", "idle", "generator", "panel")


def _row_name(name: str, kind: str) -> str:
    """A stage's or line's row name: its own, unless one of the scope's fixed rows has it."""
    return f"{kind} {name}" if name in _SCOPE_ROWS else name


def scope_text(columns: list[Column], machine, width: int = 80, gap: bool = False) -> str:
    """A logic-analyser picture of the recorded columns, every line at most ``width``
    characters (the terminal's): the columns are cut into blocks that fit beside the names."""
    if not columns:
        return "nothing recorded yet: the clock has not run since the debugger started or a snapshot was loaded"
    lines_seen: list[str] = []
    for column in columns:
        for line in sorted(column.lines):
            if line not in lines_seen:
                lines_seen.append(line)
    any_idle = any(c.idle for c in columns)
    stages = [_row_name(machine.stage_relay(s), "stage") for s in range(1, machine.ring_stages + 1)]
    label = max([SCOPE_LABEL_ROOM] + [len(_row_name(n, "line")) + 1 for n in lines_seen + stages])
    per_block = max(width - label, 8)
    blocks = []
    for begin in range(0, len(columns), per_block):
        part = columns[begin:begin + per_block]
        rows = {
            "cycle": _cycle_row(part),
            "clock": "".join(HIGH if c.level else LOW for c in part),
        }
        for stage, name in enumerate(stages, 1):
            rows[name] = "".join(BAR if stage in c.ring else " " for c in part)
        rows["hold"] = "".join(HIGH if c.hold else LOW for c in part)
        rows["latch"] = "".join(HIGH if c.latch else LOW for c in part)
        for line in lines_seen:
            rows[_row_name(line, "line")] = "".join(BAR if line in c.lines else " " for c in part)
        if any_idle:
            rows["idle"] = "".join(IDLE if c.idle else " " for c in part)
        rows["generator"] = "".join({"frozen": "F", "pulse": "P"}.get(c.kind, " ") for c in part)
        rows["panel"] = "".join(_event_mark(c) for c in part)
        blocks.append("\n".join(f"{name:<{label}}{row.rstrip() or ''}" for name, row in rows.items()))
    first, last = columns[0].cycle, columns[-1].cycle
    head = f"cycles {first:,} to {last:,}" + (" (the run before them was not traced)" if gap else "")
    legend_text = _LEGEND + ("\nidle: · a cycle whose micro-step drives no control line" if any_idle else "")
    legend = "\n".join(textwrap.fill(line, max(width, 40), subsequent_indent="  ")
                       for line in legend_text.splitlines())
    return head + "\n" + "\n\n".join(blocks) + "\n" + legend


def _cycle_row(part: list[Column]) -> str:
    """Cycle numbers written at the rising edge that starts each cycle, where they fit."""
    row = [" "] * len(part)
    free_from = 0
    for i, c in enumerate(part):
        starts = c.level and (i == 0 or not part[i - 1].level)
        if starts and i >= free_from:
            text = f"|{c.cycle}"
            for k, ch in enumerate(text[:len(part) - i]):
                row[i + k] = ch
            free_from = i + len(text) + 1
    return "".join(row)


def _event_mark(column: Column) -> str:
    marks = [_EVENT_MARKS[a] for a in column.actions if a in _EVENT_MARKS]
    return marks[-1] if marks else " "
