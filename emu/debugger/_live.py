"""Real time: the generator paced against the wall clock.

Simulated time runs at ``factor`` times the machine's own: the phase shown
is always the one whose interval holds the wall-clock instant (scaled), so
the panel is never more than one phase off as long as the computer keeps
up. While the generator is frozen simulated time stands still, so the
pacing is re-anchored whenever the clock is frozen or a panel action
restarts it; a person sees a halt freeze the ring and RESUME restart it.
"""

from __future__ import annotations

import time

from ._panel import panel_text

__all__ = ["LiveClock"]

MAX_PHASES_PER_TICK = 200_000
"""A tick that would need more than this gives up catching up (the host is too slow)."""


class LiveClock:
    def __init__(self, session, factor: float, now=time.monotonic):
        self.session = session
        self.factor = factor
        self.now = now
        self.finished: str | None = None
        """Why live mode ended on its own (a breakpoint or watchpoint), else None."""
        self.worst_lag = 0.0
        """Largest distance, in phases, between the scaled wall clock and the phase shown."""
        self.policy = session.policy()
        """The session's breakpoints and watchpoints; watched from the values they have now."""
        self.anchor()

    def anchor(self) -> None:
        self._wall = self.now()
        self._sim = self.session.emu.time_ns

    def target_ns(self) -> float:
        return self._sim + (self.now() - self._wall) * 1e9 * self.factor

    def tick(self) -> None:
        """Advance the generator to the present; stop at breakpoints and watchpoints."""
        e = self.session.emu
        if e.frozen:
            self.anchor()
            return
        stop = self.policy.follow(self.target_ns, MAX_PHASES_PER_TICK)
        if stop is not None:
            self.finished = stop.describe(self.session.places)
            return
        if e.frozen:
            self.anchor()
            return
        self.worst_lag = max(self.worst_lag, self.lag_phases())

    def lag_phases(self) -> float:
        """How many phases the shown phase is behind the scaled wall clock (0 when on time)."""
        e = self.session.emu
        if e.frozen:
            return 0.0
        end = e.time_ns + e.ring.turn[e.phase_index]
        target = self.target_ns()
        return max(0.0, (target - end) / e.ring.turn[e.phase_index])

    # ----- panel actions from the keyboard -------------------------------------

    def press(self, key: str) -> None:
        e = self.session.emu
        if key == "stop":
            e.set_switch_run(False)
        elif key == "run":
            e.set_switch_run(True)
        elif key == "resume":
            e.press_resume()
        elif key == "step":
            e.press_step()
        self.anchor()

    def screen(self) -> str:
        s = self.session
        m = s.machine
        rate = self.factor * m.nominal_hz
        keys = "s stop  r run  space resume  p step  q back to the prompt  Ctrl-C stop and back"
        state = s.state_text() if s.emu.frozen else "clock running in real time"
        return (f"{panel_text(s.emu, state, s.view, s.recorder.last_bus)}\n"
                f"  live        {rate:g} Hz ({self.factor:g} × nominal)   {keys}\n")
