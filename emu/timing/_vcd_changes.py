"""The datapath changes of a whole trace, found at once with numpy rather than cycle by cycle.

A trace keeps, flat and in order, the values each cycle's step may write
(``StepPlaces.writes``). The stepping path writes a register or flag when
it differs from the value last written for it; within a trace that is the
value the previous write of the same signal left, so sorting the values by
signal (stably, keeping cycle order) and comparing each with its
predecessor finds every change without a Python loop per cycle. The
sequencer's count is compared the same way. The text of a change is looked
up per (signal, value), made once; the pieces of the dump are then placed
cycle by cycle (template, changes in signal order, the count) by index
arithmetic and joined once.
"""

from __future__ import annotations

import numpy as np

from ..engine import CycleTrace, StepPlaces

__all__ = ["TracedChanges"]


class _ChangeTexts(dict):
    """``value * columns + column`` → the text of that change, made on first use.

    Columns are the recorder's registers and flags, then the sequencer's count; a ``%``
    in an identifier is doubled, since the joined text is a format string."""

    def __init__(self, codes: list[str], wide: list[bool]):
        super().__init__()
        self.columns = len(codes)
        self.suffixes = [(f" {code}\n" if is_wide else f"{code}\n").replace("%", "%%") for code, is_wide in zip(codes, wide)]
        self.wide = wide

    def __missing__(self, key: int) -> str:
        value, column = divmod(key, self.columns)
        text = self[key] = f"b{value:b}{self.suffixes[column]}" if self.wide[column] else f"{value:d}{self.suffixes[column]}"
        return text

    def of(self, keys: np.ndarray) -> list[str]:
        return list(map(self.__getitem__, keys.tolist()))


class TracedChanges:
    """For one recorder: the changes of traces, and a trace's text put together around its templates."""

    def __init__(self, recorder, places: StepPlaces):
        writer = recorder.writer
        columns = [*recorder.datapath_vars, recorder.step]
        self.texts = _ChangeTexts([writer.codes[var] for var in columns], [writer.wide[var] for var in columns])
        self.step_column = len(columns) - 1
        widest = max(1, *(len(positions) for positions in places.writes))
        self.write_rows = np.full((len(places.writes), widest), -1, dtype=np.int16)
        for n, positions in enumerate(places.writes):
            self.write_rows[n, :len(positions)] = positions
        self.write_counts = np.array([len(positions) for positions in places.writes], dtype=np.intp)
        self.shown = np.array(places.shown, dtype=np.int64)

    def text(self, trace: CycleTrace, places: np.ndarray, templates: np.ndarray, seen: tuple, step_now: int,
             last_datapath: bool) -> tuple[str, tuple, int]:
        """Each cycle's template followed by what its step changed (registers and flags in the
        recorder's order, then the sequencer's count); and the values and count left after.
        ``last_datapath`` False: the last step's changes are left out."""
        count = len(places)
        columns = self.texts.columns
        values = np.array(trace.values, dtype=np.int64)
        counts = self.write_counts[places]
        if not last_datapath:
            values = values[:len(values) - counts[-1]]
            counts = counts.copy()
            counts[-1] = 0
        rows = self.write_rows[places]
        signal = rows[rows >= 0][:len(values)]
        changed, seen_after = _changed(values, signal, np.array(seen, dtype=np.int64))
        at = np.flatnonzero(changed)
        change_cycles = np.repeat(np.arange(count), counts)[at]
        change_texts = self.texts.of(values[at] * columns + signal[at])

        shown = self.shown[places]
        following = np.empty(count, dtype=np.int64)
        following[:-1] = shown[1:]
        following[-1] = trace.after if last_datapath else shown[-1]
        before = np.empty_like(following)
        before[0] = step_now
        before[1:] = following[:-1]
        step_changed = following != before
        step_cycles = np.flatnonzero(step_changed)
        step_texts = self.texts.of(following[step_cycles] * columns + self.step_column)

        per_cycle = np.bincount(change_cycles, minlength=count)
        pieces = 1 + per_cycle + step_changed
        ends = np.cumsum(pieces)
        firsts = ends - pieces
        out = np.empty(int(ends[-1]), dtype=object)
        out[firsts] = templates
        first_change = np.cumsum(per_cycle) - per_cycle
        out[firsts[change_cycles] + 1 + np.arange(len(at)) - first_change[change_cycles]] = change_texts
        out[ends[step_cycles] - 1] = step_texts
        return "".join(out.tolist()), tuple(seen_after.tolist()), int(following[-1])


def _changed(values: np.ndarray, signal: np.ndarray, seen: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Which of ``values`` (of the signals ``signal``, in time order) differ from the signal's value
    before them (``seen`` before the first); and every signal's value at the end."""
    order = np.argsort(signal, kind="stable")
    by_signal, signal_sorted = values[order], signal[order]
    opens = np.ones(len(order), dtype=bool)
    opens[1:] = signal_sorted[1:] != signal_sorted[:-1]
    before = np.empty_like(by_signal)
    before[1:] = by_signal[:-1]
    before[opens] = seen[signal_sorted[opens]]
    changed = np.empty(len(order), dtype=bool)
    changed[order] = by_signal != before
    closes = np.ones(len(order), dtype=bool)
    closes[:-1] = opens[1:]
    after = seen.copy()
    after[signal_sorted[closes]] = by_signal[closes]
    return changed, after
