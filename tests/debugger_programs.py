"""Small programs of our own for the debugger tests, and a session helper.

The scenario: a relay-driven kiln controller. ``KILN`` ramps a heater
level down from a set point, calls a routine that logs each step (which
itself calls a deeper one), pauses at the end of the ramp, writes a mark
to the console and halts. ``SOAK`` keeps the clock busy for millions of
cycles. ``GAUGE`` is the acc12 counterpart of KILN.
"""

from __future__ import annotations

import threading
import time
from contextlib import contextmanager
from pathlib import Path

from emu import load_machine
from emu.debugger import Session, load_view

ACC12 = load_machine(Path(__file__).parent / "machines" / "acc12.toml")
REF8 = load_machine("ref8")

KILN = """\
; kiln ramp: heater level from 3 down to 0, one log call per step
start:  li r0, 3
        li sp, 0x0100
ramp:   call log
        dec r0
        jnz ramp
        pause
        li r2, 'K'
        out 0, r2
        halt
log:    inc r1
        call mark
        ret
mark:   st [0x0200], r1
        inc r3
        ret
"""

SOAK = """\
; soak: a long hold at temperature, two nested 8-bit counters 200 times over
start:  li r0, 0
        li r1, 0
        li r4, 200
hold:   inc r0
        jnz hold
        inc r1
        jnz hold
        dec r4
        jnz hold
        halt
"""

GAUGE = """\
; gauge on acc12: count down from 3, pause, light the lamps, stop
start:  set 3
tick:   minus one
        gozero done
        go tick
done:   pause
        set 5
        put 1
        stop
one:    .word 1
"""


def write(tmp_path, text: str, name: str = "kiln.asm") -> Path:
    path = tmp_path / name
    path.write_text(text)
    return path


def session_for(tmp_path, text: str = KILN, machine=REF8, name: str = "kiln.asm", **options) -> Session:
    """A session on ``text`` saved as ``name``; the caller has made tmp_path the
    working folder, so places read ``kiln.asm:7``."""
    write(tmp_path, text, name)
    return Session(machine, load_view(name, machine), **options)


@contextmanager
def ctrl_c_after(session: Session, cycles: int):
    """Press Ctrl-C (the session's stop switch) from another thread once the
    machine has run ``cycles`` cycles, while the body runs a long command."""
    def press():
        while session.emu.cycles < cycles:
            time.sleep(0.001)
        session.interrupt()

    presser = threading.Thread(target=press)
    presser.start()
    try:
        yield
    finally:
        presser.join()
