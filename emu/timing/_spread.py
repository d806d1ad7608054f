"""An irregular clock for the emulator: one built clock, beating unevenly.

The seed picks one set of parts within tolerance (so the whole run is a
little faster or slower than nominal, as a real build is), and every turn
of the ring draws fresh armature times around them (so consecutive cycles
differ). The engine asks for turns in order as its ring wraps; the draws
come from one generator in a fixed order, so the durations depend only on
the seed and how many turns were asked for, never on how they were asked.
"""

from __future__ import annotations

import numpy as np

from ..description import Machine
from ..errors import MachineError
from ._model import TimingModel, timing_model

__all__ = ["SpreadClock", "spread_source"]


class SpreadClock:
    """A clock source: ``turns(k)`` gives the phase durations (ns) of the next k turns."""

    def __init__(self, model: TimingModel, seed: int):
        self.model = model
        self.seed = seed
        self._rng = np.random.default_rng(seed)
        supply, values = model.draw_parts(self._rng, 1)
        self._electrical = model.electrical_times(supply, values)[0]
        self._mechanical = model.mechanical_times(values)[0]
        if not np.all(np.isfinite(self._electrical)):
            raise MachineError(f"with seed {seed} a ring stage never picks up, so the clock would stop "
                               f"(try another seed)", path=model.machine.path, where="[timing]")
        self.turns_drawn = 0

    @property
    def built_phase_ns(self) -> np.ndarray:
        """This build's phase durations without armature jitter."""
        return np.rint((self._electrical + self._mechanical) * 1e9).astype(np.int64)

    def turns(self, k: int) -> np.ndarray:
        seconds = self.model.jittered(self._rng, self._electrical, self._mechanical, k)
        self.turns_drawn += k
        return np.maximum(np.rint(seconds * 1e9), 1).astype(np.int64)


def spread_source(machine: Machine, seed: int) -> SpreadClock:
    """The irregular clock of ``machine`` for ``emulator.clock_source``.

    Raises MachineError when the machine has no usable ``[timing]`` section,
    or when the parts drawn for this seed would stop the clock.
    """
    return SpreadClock(timing_model(machine), seed)
