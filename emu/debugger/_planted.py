"""Planted halts in the debugger: burn a new program and start it again.

A planted breakpoint is a halt assembled into the program (``asm.plant_halts``),
as on a relay machine whose only breakpoint is a halt in its memory. Planting
or dropping one makes a new image, so the honest analogue is what the
builder does: burn the new program and restart. Memory is reloaded from the
new image and the machine powers on again exactly as 'restart' does
(``power_cycle``: registers, flags, counters and console cleared, the input
stream rewound, the toggles and the beat kept, the switch at STOP). Every
other breakpoint and memory watchpoint follows its statement to the address
it has now; what moved is said.
"""

from __future__ import annotations

import asm
from emu import Emulator, MachineError
from emu.runs import loaded_from_program

from ._clock_commands import power_cycle
from ._conditions import Watch
from ._program import Places, ProgramView
from ._stopping import Breakpoint
from ._table import DebugError

__all__ = ["moved_text", "replant", "statement_at"]


def original_program(session) -> asm.Program:
    """The program as written: kept from the first planting, else assembled again from its file."""
    view = session.view
    if view.planting is not None:
        return view.planting.original
    loaded = view.loaded
    if loaded is None:
        raise DebugError("no program is loaded, so there is nothing to plant a halt in")
    if loaded.kind != "source":
        raise DebugError(f"a planted halt needs the assembly source: {loaded.path} is an image "
                         f"({loaded.kind}) and cannot be assembled again; debug its .asm file instead, "
                         f"or use a watched breakpoint ('break WHERE')")
    try:
        program = asm.assemble_file(loaded.path, session.machine)
    except asm.AsmError as exc:
        raise DebugError(f"{loaded.path} no longer assembles: {exc.diagnostics[0].render().splitlines()[0]}") \
            from None
    if program.segments != loaded.segments:
        raise DebugError(f"{loaded.path} changed since it was loaded; start the debugger on it again "
                         f"before planting halts")
    return program


def statement_at(session, address: int) -> tuple[str, int]:
    """(file, line) of the instruction at ``address`` of the image loaded now."""
    place = session.view.place(address)
    code = {(e.file, e.line) for e in original_program(session).lines if e.kind == "code"}
    if place is None or place not in code:
        where = f" ({place[0]}:{place[1]})" if place else ""
        raise DebugError(f"a halt can be planted only in front of an instruction of the program; "
                         f"{session.places.hex(address)}{where} holds none")
    return place


def replant(session, breakpoints: dict[int, Breakpoint]) -> str:
    """Assemble the program with a halt at every planted breakpoint of ``breakpoints``,
    load it into a machine powered on afresh, and put ``breakpoints`` in place; the
    report of what moved and that the program starts again."""
    original = original_program(session)
    old_view = session.view
    places = {b.planted for b in breakpoints.values() if b.planted}
    try:
        planting = asm.plant_halts(original, places)
    except asm.AsmError as exc:
        raise DebugError(exc.diagnostics[0].render().splitlines()[0]) from None
    loaded = loaded_from_program(old_view.path, planting.program)
    view = ProgramView(old_view.path, loaded, dict(loaded.labels), dict(loaded.symbols), list(loaded.lines),
                       loaded.pauses, dict(loaded.source_map), dict(loaded.sources), planting=planting)
    places_now = Places(session.machine, view)
    _check_fits(session, view)

    def follow(address: int) -> int:
        before = old_view.planting.original_address(address) if old_view.planting else address
        return address if before is None else planting.relocate(before)

    session.breakpoints.clear()
    for number, b in sorted(breakpoints.items()):
        if b.planted:
            address = planting.halts[b.planted][0]
        else:
            address = follow(b.address)
        session.breakpoints[number] = Breakpoint(number, address, places_now.name(address), b.planted)
    for number, w in list(session.watches.items()):
        if w.address is not None:
            session.watches[number] = Watch(number, address=follow(w.address),
                                            label=f"[{places_now.hex(follow(w.address))}]")
    session.view, session.places = view, places_now
    waves = power_cycle(session, "the program was burnt again with its planted halts and started from the beginning")
    kept = f"; the waveform recording was written to {waves}" if waves else ""
    return (f"the program was assembled again with {_halts(len(planting.halt_places))} and burnt into memory; "
            f"it starts again from the beginning: registers, flags, counters and console cleared, "
            f"input rewound, toggles and beat kept, switch at STOP{kept}.\n"
            f"{moved_text(session, planting, SHOWN_MOVES)}")


SHOWN_MOVES = 8
"""Moves listed when planting; 'points' lists them all."""


def moved_text(session, planting: asm.Planting, limit: int | None = None) -> str:
    """Which labels and data stand elsewhere than the program as written puts them."""
    if not planting.moved:
        return "no label or data moved" if planting.halts else \
            "every label and data word is back where the program as written puts it"
    hex_of = session.places.hex
    rows = []
    width = max(16, *(len(m.name) for m in planting.moved[:limit]))
    for m in planting.moved[:limit]:
        kind = {"code": "code label", "data": "data", "constant": "constant"}[m.kind]
        old, new = (hex_of(m.old), hex_of(m.new)) if m.kind != "constant" else (str(m.old), str(m.new))
        rows.append(f"  {m.name:<{width}} {old} → {new}  ({m.shift:+d}, {kind})")
    more = len(planting.moved) - len(rows)
    if more:
        rows.append(f"  … and {more} more ('points' lists them all)")
    return "moved from where the program as written puts them:\n" + "\n".join(rows)


def _halts(count: int) -> str:
    return "no planted halt" if count == 0 else f"{count} planted halt{'s' if count != 1 else ''}"


def _check_fits(session, view: ProgramView) -> None:
    """Refuse a planted program that memory cannot hold, before anything changes."""
    try:
        Emulator(session.machine).load(view.loaded.segments)
    except MachineError as exc:
        raise DebugError(f"the planted program does not fit: {exc.message}") from None
