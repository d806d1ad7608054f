"""Breakpoints and watchpoints: set, list and drop them.

Both share one numbering (``drop N`` needs no kind). They are only kept
here; the session's ``RunPolicy`` checks them while the clock runs.
"""

from __future__ import annotations

from ._arguments import no_arguments, number, target, where
from ._conditions import Watch
from ._stopping import Breakpoint
from ._table import DebugError, command

__all__ = []


@command("break WHERE", "Breakpoint at an address, a label or FILE:LINE.", complete=("where",))
def do_break(session, args):
    """Held by the emulator at instruction boundaries; memory is not
    touched. Addresses take the assembler's numbers, labels and label+k."""
    if len(args) != 1:
        raise DebugError("usage: break ADDRESS|LABEL|FILE:LINE")
    address, _name = where(session.places, args[0])
    for b in session.breakpoints.values():
        if b.address == address:
            return f"breakpoint {b.number} is already at {b.label}"
    point = session.next_number()
    label = session.places.name(address)
    session.breakpoints[point] = Breakpoint(point, address, label)
    return f"breakpoint {point} at {label}"


@command("watch NAME|[ADDRESS]", "Watchpoint: stop when a register, flag or memory word changes.",
         complete=("target",))
def do_watch(session, args):
    """Checked after every instruction while the clock runs."""
    if len(args) != 1:
        raise DebugError("usage: watch NAME|[ADDRESS]")
    watched = target(session.places, args[0])
    for w in session.watches.values():
        if (w.name, w.address) == (watched.name, watched.address):
            return f"watchpoint {w.number} already watches {w.label}"
    watch = Watch(session.next_number(), watched.name, watched.address, watched.label)
    session.watches[watch.number] = watch
    return f"watchpoint {watch.number} on {watch.label} (now {watch.read(session.emu):#x})"


@command("points", "List the breakpoints and watchpoints.")
def do_points(session, args):
    no_arguments(args, "points")
    rows = [f"{b.number:>3}  break  {b.label}" for b in session.breakpoints.values()]
    rows += [f"{w.number:>3}  watch  {w.label} (now {w.read(session.emu):#x})"
             for w in session.watches.values()]
    return "\n".join(sorted(rows, key=lambda r: int(r.split()[0]))) or "no breakpoints or watchpoints"


@command("drop N|all", "Delete breakpoint or watchpoint N, or all of them.", complete=("point",))
def do_drop(session, args):
    if len(args) != 1:
        raise DebugError("usage: drop N|all")
    if args[0].lower() == "all":
        dropped = len(session.breakpoints) + len(session.watches)
        session.breakpoints.clear()
        session.watches.clear()
        return f"dropped {dropped} point(s)"
    point = number(args[0], "point number")
    if session.breakpoints.pop(point, None) is None and session.watches.pop(point, None) is None:
        raise DebugError(f"there is no point {point} ('points' lists them)")
    return f"dropped point {point}"
