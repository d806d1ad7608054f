"""A Hypothesis strategy for irregular clocks: clocks built from random parts within tolerance."""

from __future__ import annotations

from hypothesis import strategies as st

from ..description import Machine
from ..errors import MachineError
from ..timing import SpreadClock, spread_source, timing_model
from ._machines import machine_of

__all__ = ["spread_clocks"]


def spread_clocks(machine: Machine | str) -> st.SearchStrategy[SpreadClock]:
    """Clocks for ``emulator.clock_source``, each one build of the machine's ``[timing]`` parts
    (``emu.timing.spread_source``); a build whose ring would never pick up is not drawn.

    A clock keeps drawing durations as it is used: give each run its own.
    Raises MachineError at once when the machine has no ``[timing]`` section.
    """
    machine = machine_of(machine)
    timing_model(machine)              # a machine with no [timing] fails here, not inside a test
    return st.integers(0, 2**32 - 1).map(lambda seed: _clock(machine, seed)).filter(lambda clock: clock is not None)


def _clock(machine: Machine, seed: int) -> SpreadClock | None:
    try:
        return spread_source(machine, seed)
    except MachineError:
        return None
