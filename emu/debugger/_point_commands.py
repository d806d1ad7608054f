"""Breakpoints and watchpoints: set, list and drop them.

Both share one numbering (``drop N`` needs no kind). They are only kept
here; the session's ``RunPolicy`` checks them while the clock runs. A
breakpoint is *watched* (the debugger holds the clock at pc, memory
untouched) or *planted* (a halt assembled into the program, see
``_planted``), as the operator chooses for each.
"""

from __future__ import annotations

from ._arguments import no_arguments, number, target, watched_hex, where
from ._conditions import Watch
from ._planted import moved_text, replant, statement_at
from ._stopping import Breakpoint
from ._table import DebugError, command

__all__ = []


KINDS = ("watched", "planted")


@command("break WHERE [watched|planted]", "Breakpoint at an address, a label or FILE:LINE.",
         complete=("where",))
def do_break(session, args):
    """A watched breakpoint (the default) is held by the debugger at
    instruction boundaries; memory is not touched. A planted one is the
    hardware's way: a halt assembled into the program in front of the
    statement, so later addresses shift as on the machine. Planting burns
    the new program and starts it again from the beginning (registers and
    memory reloaded), and says which labels and data moved; RESUME goes on
    past the halt. It needs the assembly source. Addresses take the
    assembler's numbers, labels and label+k."""
    if len(args) not in (1, 2) or (len(args) == 2 and args[1].lower() not in KINDS):
        raise DebugError("usage: break ADDRESS|LABEL|FILE:LINE [watched|planted]")
    address, _name = where(session.places, args[0])
    if len(args) == 2 and args[1].lower() == "planted":
        return _plant(session, address)
    for b in session.breakpoints.values():
        if b.address == address and not b.planted:
            return f"breakpoint {b.number} is already at {b.label}"
    point = session.next_number()
    label = session.places.name(address)
    session.breakpoints[point] = Breakpoint(point, address, label)
    return f"breakpoint {point} at {label}"


def _plant(session, address: int) -> str:
    place = statement_at(session, address)
    for b in session.breakpoints.values():
        if b.planted == place:
            return f"breakpoint {b.number} is already a halt planted in front of {place[0]}:{place[1]}"
    point = session.next_number()
    wanted = {**session.breakpoints, point: Breakpoint(point, address, "", planted=place)}
    told = replant(session, wanted)
    return f"breakpoint {point}: a halt planted at {session.breakpoints[point].label}\n{told}"


@command("watch NAME|[ADDRESS]", "Watchpoint: stop when a register, flag or memory word changes.",
         complete=("target",))
def do_watch(session, args):
    """Stops at the instruction boundary right after the value changed. A
    running clock looks only where it can change (after a store to the
    word, after a write of the register), so the run keeps its speed."""
    if len(args) != 1:
        raise DebugError("usage: watch NAME|[ADDRESS]")
    watched = target(session.places, args[0])
    for w in session.watches.values():
        if (w.name, w.address) == (watched.name, watched.address):
            return f"watchpoint {w.number} already watches {w.label}"
    watch = Watch(session.next_number(), watched.name, watched.address, watched.label)
    session.watches[watch.number] = watch
    return f"watchpoint {watch.number} on {watch.label} (now {_now(session, watch)})"


def _now(session, watch: Watch) -> str:
    return watched_hex(session.machine, watch, watch.read(session.emu))


@command("points", "List the breakpoints and watchpoints (and what planted halts moved).")
def do_points(session, args):
    no_arguments(args, "points")
    planting = session.view.planting
    rows = [f"{b.number:>3}  break  {'planted' if b.planted else 'watched'}  {b.label}"
            for b in session.breakpoints.values()]
    rows += [f"{w.number:>3}  watch  {w.label} (now {_now(session, w)})"
             for w in session.watches.values()]
    text = "\n".join(sorted(rows, key=lambda r: int(r.split()[0]))) or "no breakpoints or watchpoints"
    if planting is not None and planting.halts:
        text += "\n" + moved_text(session, planting)
    return text


@command("drop N|all", "Delete breakpoint or watchpoint N, or all of them.", complete=("point",))
def do_drop(session, args):
    if len(args) != 1:
        raise DebugError("usage: drop N|all")
    if args[0].lower() == "all":
        dropped = len(session.breakpoints) + len(session.watches)
        planted = any(b.planted for b in session.breakpoints.values())
        told = replant(session, {}) if planted else ""
        session.breakpoints.clear()
        session.watches.clear()
        return f"dropped {dropped} point(s)" + (f"; the planted halts are taken out:\n{told}" if told else "")
    point = number(args[0], "point number")
    dropped = session.breakpoints.get(point)
    if dropped is not None and dropped.planted:
        rest = {n: b for n, b in session.breakpoints.items() if n != point}
        told = replant(session, rest)
        return f"dropped point {point}, the halt planted in front of {dropped.planted[0]}:{dropped.planted[1]}\n{told}"
    if session.breakpoints.pop(point, None) is None and session.watches.pop(point, None) is None:
        raise DebugError(f"there is no point {point} ('points' lists them)")
    return f"dropped point {point}"
