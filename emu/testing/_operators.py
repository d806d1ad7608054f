"""Hypothesis strategies for what an operator does at the panel.

An operator script (``emu.runs.HaltAnswer``, one per halt in the order a run
reaches them) is what ``run_loaded(operator=...)`` and a panel file's
``[[at_halt]]`` tables give a run. Scripts drawn here press RESUME at each
halt, throw STOP some cycles later, press STEP a few times and throw RUN
again; with ``panel=True`` they also set the toggles and feed input, which
changes what a program that reads them computes.
"""

from __future__ import annotations

from hypothesis import strategies as st

from ..description import Machine
from ..runs import HaltAnswer
from ._machines import machine_of

__all__ = ["operator_scripts"]


def operator_scripts(machine: Machine | str, answers: int = 3, *, panel: bool = False,
                     most_steps: int = 60) -> st.SearchStrategy[tuple[HaltAnswer, ...]]:
    """Scripts of at most ``answers`` answers (give one fewer than the halts a run reaches,
    so that its final halt ends it). Short waits before STOP are drawn often, so that the
    STEP pulses reach the next halt as well as the middle of an instruction."""
    machine = machine_of(machine)
    toggles = st.none() | st.integers(0, machine.data_mask) if panel else st.none()
    more_input = st.binary(max_size=3) if panel else st.just(b"")
    one = st.builds(
        lambda switches, data, stop, steps: HaltAnswer(switches, data, True, stop, steps if stop else 0),
        toggles, more_input, st.none() | st.integers(1, 12) | st.integers(1, 400), st.integers(0, most_steps))
    return st.lists(one, max_size=answers).map(tuple)
