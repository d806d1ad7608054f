"""Files the debugger writes and reads: snapshots and waveforms.

A snapshot is the emulator's own state (``Emulator.snapshot_state``) with a
``debugger`` section beside it: the fingerprint of the program image it
was taken with (``asm.image_fingerprint``), so that a snapshot of another
program is refused rather than showing one program's bytes beside another's
source, and the irregular clock ('beat'), with how many turns it had drawn,
so that a continuation from the snapshot beats exactly as the run it came
from. A waveform is a VCD recording that stays open on a context stack from
``waves FILE`` until ``waves off`` or the end of the session writes it;
``load`` restores into the same emulator, so a recording goes on through it.
"""

from __future__ import annotations

import json
from contextlib import ExitStack

from emu import MachineError
from emu.engine import read_snapshot
from emu.files import write_atomic
from emu.timing import record_vcd

from ._table import DebugError, command

__all__ = []


@command("save FILE", "Save a snapshot of the whole machine, its program's fingerprint and its beat.")
def do_save(session, args):
    if len(args) != 1:
        raise DebugError("usage: save FILE")
    e = session.emu
    state = e.snapshot_state()
    source = e.clock_source
    state["debugger"] = {"image_fingerprint": session.fingerprint, "beat_seed": session.beat_seed,
                         "beat_turns": None if source is None else source.turns_drawn}
    try:
        write_atomic(args[0], json.dumps(state, indent=1))
    except OSError as exc:
        raise DebugError(f"cannot write {args[0]}: {exc.strerror or exc}") from None
    return f"snapshot saved to {args[0]} at cycle {e.cycles:,}"


@command("load FILE", "Load a snapshot of this program saved before; breakpoints and watchpoints stay.")
def do_load(session, args):
    """The machine, its beat ('beat') and its time come back as saved; a
    waveform being recorded goes on, if the snapshot is not from an earlier
    time than the recording has reached."""
    if len(args) != 1:
        raise DebugError("usage: load FILE")
    path = args[0]
    state = read_snapshot(path)
    if not isinstance(state, dict):
        raise MachineError("not a relaybench snapshot", path=path)
    if state.get("machine") != session.machine.name:
        raise MachineError(f"the snapshot is of machine '{state.get('machine')}', "
                           f"not '{session.machine.name}'", path=path)
    extra = state.get("debugger")
    if not isinstance(extra, dict) or "image_fingerprint" not in extra:
        raise DebugError(f"{path} records no program fingerprint (not saved by the debugger's 'save'); "
                         f"not loaded")
    if extra["image_fingerprint"] != session.fingerprint:
        raise DebugError(f"{path} is a snapshot of another program (image fingerprint "
                         f"{_fingerprint_text(extra['image_fingerprint'])}, this one's is "
                         f"{_fingerprint_text(session.fingerprint)}); not loaded")
    seed, turns = extra.get("beat_seed"), extra.get("beat_turns")
    if seed is not None and not (isinstance(seed, int) and isinstance(turns, int) and seed >= 0 and turns >= 1):
        raise DebugError(f"damaged snapshot {path}: its beat is not a seed and a count of turns")
    e = session.emu
    if session.waves is not None and _time_of(state) < e.time_ns:
        raise DebugError(f"the waveform to {session.waves[0]} has reached a later time than the snapshot; "
                         f"a waveform cannot run backwards ('waves off' writes it first)")
    before = e.snapshot_state()
    try:
        e.restore_state(state, path)
        session.set_beat(seed, turns or 0)
        e.ring.restore(state["ring"])
    except MachineError:
        e.restore_state(before)
        raise
    session.recorder.clear()
    session.last_stop = f"snapshot loaded from {path}"
    beat = "the even clock" if seed is None else f"the irregular clock of seed {seed}"
    return (f"snapshot loaded: cycle {e.cycles:,}, {beat}; {session.state_text()}. "
            f"{session.here_text()}")


def _time_of(state: dict) -> int:
    ring = state.get("ring")
    time_ns = ring.get("time_ns") if isinstance(ring, dict) else None
    return time_ns if isinstance(time_ns, int) else 0


def _fingerprint_text(fingerprint) -> str:
    return "none (no program)" if fingerprint is None else f"{fingerprint:08x}" if isinstance(fingerprint, int) \
        else repr(fingerprint)


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
        recording.enter_context(record_vcd(session.emu, args[0], unit_ns=1))   # 'beat' may change the clock
    except OSError as exc:
        raise DebugError(f"cannot write {args[0]}: {exc.strerror or exc}") from None
    session.waves = (args[0], recording)
    return f"recording a waveform to {args[0]} from cycle {session.emu.cycles:,}; 'waves off' writes it"
