"""Files the debugger writes and reads: snapshots and waveforms.

A snapshot is the emulator's own format (``Emulator.snapshot``); a
waveform is a VCD recording that stays open on a context stack from
``waves FILE`` until ``waves off`` or the end of the session writes it.
"""

from __future__ import annotations

from contextlib import ExitStack

from emu import Emulator
from emu.timing import record_vcd

from ._table import DebugError, command

__all__ = []


@command("save FILE", "Save a snapshot of the whole machine (the emulator's snapshot format).")
def do_save(session, args):
    if len(args) != 1:
        raise DebugError("usage: save FILE")
    try:
        session.emu.snapshot(args[0])
    except OSError as exc:
        raise DebugError(f"cannot write {args[0]}: {exc.strerror or exc}") from None
    return f"snapshot saved to {args[0]} at cycle {session.emu.cycles:,}"


@command("load FILE", "Load a snapshot saved before; breakpoints and watchpoints stay.")
def do_load(session, args):
    if len(args) != 1:
        raise DebugError("usage: load FILE")
    session.attach(Emulator.restore(args[0], session.machine))
    session.last_stop = f"snapshot loaded from {args[0]}"
    return f"snapshot loaded: cycle {session.emu.cycles:,}; {session.state_text()}. {session.here_text()}"


@command("waves FILE|off", "Record a waveform (VCD) of the clock from now on; 'waves off' writes it.")
def do_waves(session, args):
    """The dump holds the clock, ring stages, hold line, halt latch, switch,
    sequencer step, control lines, pc and registers in simulated time, for
    any waveform viewer. While recording, runs step phase by phase (slower)."""
    if len(args) != 1:
        raise DebugError("usage: waves FILE|off")
    if args[0].lower() == "off":
        if session.waves is None:
            raise DebugError("no waveform is being recorded ('waves FILE' starts one)")
        path = session.waves[0]
        session.close()
        return f"waveform written to {path} (up to cycle {session.emu.cycles:,})"
    if session.waves is not None:
        raise DebugError(f"already recording to {session.waves[0]}; 'waves off' writes it first")
    recording = ExitStack()
    try:
        recording.enter_context(record_vcd(session.emu, args[0]))
    except OSError as exc:
        raise DebugError(f"cannot write {args[0]}: {exc.strerror or exc}") from None
    session.waves = (args[0], recording)
    return f"recording a waveform to {args[0]} from cycle {session.emu.cycles:,}; 'waves off' writes it"
