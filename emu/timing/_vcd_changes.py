"""The datapath changes of a stretch of traced cycles, found at once with numpy rather than cycle by cycle.

A trace keeps, flat and in order, the values each cycle's step may write
(``StepPlaces.writes``). The stepping path writes a register or flag when
it differs from the value last written for it; within a trace that is the
value the previous write of the same signal left, so sorting the values by
signal (stably, keeping cycle order) and comparing each with its
predecessor finds every change without a Python loop per cycle. The
sequencer's count is one more signal, written by every step. The text of a
change is looked up per (signal, value), made once; the pieces of the dump
are then laid out as a table of a row a cycle (template, changes in signal
order, the count), the changes kept read off it in order and joined once.
"""

from __future__ import annotations

import numpy as np

from ..engine import StepPlaces

__all__ = ["TracedChanges"]


_TABLE_LIMIT = 1 << 21
"""At most this many possible (signal, value) texts are kept in an array indexed by both; past
it (registers wider than 16 bits) they are kept in a dict as they come."""


class _ChangeTexts:
    """The text of a change, by key ``offsets[column] + value``, made on first use.

    Columns are the recorder's registers and flags, then the sequencer's count; a ``%``
    in an identifier is doubled, since the joined text is a format string."""

    def __init__(self, codes: list[str], wide: list[bool], sizes: list[int]):
        self.suffixes = [(f" {code}\n" if is_wide else f"{code}\n").replace("%", "%%")
                         for code, is_wide in zip(codes, wide)]
        self.wide = wide
        self.offsets = np.cumsum([0, *sizes[:-1]])
        total = sum(sizes)
        self.table = np.empty(total, dtype=object) if total <= _TABLE_LIMIT else None
        self.known = np.zeros(total, dtype=bool) if self.table is not None else None
        self.made: dict[int, str] = {}

    def _make(self, key: int) -> str:
        column = int(np.searchsorted(self.offsets, key, side="right")) - 1
        value = key - int(self.offsets[column])
        return f"b{value:b}{self.suffixes[column]}" if self.wide[column] else f"{value:d}{self.suffixes[column]}"

    def of(self, columns: np.ndarray, values: np.ndarray) -> np.ndarray:
        """The texts of changes to ``values`` of ``columns``, as an array of objects."""
        keys = self.offsets[columns] + values
        table = self.table
        if table is None:
            made = self.made
            texts = np.empty(len(keys), dtype=object)
            texts[:] = [made[key] if key in made else made.setdefault(key, self._make(key)) for key in keys.tolist()]
            return texts
        new = keys[~self.known[keys]]
        if len(new):
            for key in np.unique(new).tolist():
                table[key] = self._make(key)
            self.known[new] = True
        return table[keys]


class TracedChanges:
    """For one recorder: the changes of traces, and a trace's text put together around its templates."""

    def __init__(self, recorder, places: StepPlaces):
        writer = recorder.writer
        columns = [*recorder.datapath_vars, recorder.step]
        bits = [size for _scope, _name, _kind, size, _code in writer.declared]
        step_bits = max(bits[recorder.step], max(places.shown).bit_length())
        sizes = [1 << bits[var] for var in recorder.datapath_vars] + [1 << step_bits]
        self.texts = _ChangeTexts([writer.codes[var] for var in columns], [writer.wide[var] for var in columns], sizes)
        widest = max(len(positions) for positions in places.writes)
        self.write_rows = np.full((len(places.writes), widest + 1), -1, dtype=np.int16)
        """Per step number, the columns it may write (padded with -1), then the sequencer's."""
        for n, positions in enumerate(places.writes):
            self.write_rows[n, :len(positions)] = positions
        self.write_rows[:, -1] = len(columns) - 1
        self.write_counts = np.array([len(positions) for positions in places.writes], dtype=np.intp)
        self.shown = np.array(places.shown, dtype=np.int64)
        self.pieces = np.empty((0, widest + 2), dtype=object)
        """Room for a slice's pieces, kept from slice to slice: only those a slice sets are read."""

    def text(self, values: list[int], places: np.ndarray, templates: np.ndarray, seen: tuple, step_now: int,
             after: int, last_datapath: bool) -> tuple[str, tuple, int]:
        """Cycles that ran ``places``, leaving ``values`` (``CycleTrace.values``), with the sequencer's
        count ``after`` them: each cycle's template followed by what its step changed (registers
        and flags in the recorder's order, then the count); and the values and count left after.
        ``last_datapath`` False: the last step's changes are left out."""
        count = len(places)
        values = np.fromiter(values, dtype=np.int64, count=len(values))
        rows = self.write_rows[places]
        written = rows >= 0
        if not last_datapath:
            values = values[:len(values) - self.write_counts[places[-1]]]
            written[-1, :-1] = False
        shown = self.shown[places]
        full = np.empty(rows.shape, dtype=np.int64)
        full[:-1, -1] = shown[1:]
        full[-1, -1] = after if last_datapath else shown[-1]
        datapath = written.copy()
        datapath[:, -1] = False
        full[datapath] = values
        column, value = rows[written], full[written]
        changed, final = _changed(value, column, np.array((*seen, step_now), dtype=np.int64))
        if len(self.pieces) < count:
            self.pieces = np.empty((count, rows.shape[1] + 1), dtype=object)
        pieces = self.pieces[:count]
        kept = np.zeros(pieces.shape, dtype=bool)
        kept[:, 0] = True
        changes = np.zeros(rows.shape, dtype=bool)
        changes[written] = changed
        kept[:, 1:] = changes
        pieces[:, 0] = templates
        pieces[:, 1:][changes] = self.texts.of(column[changed], value[changed])
        final = final.tolist()
        return "".join(pieces[kept].tolist()), tuple(final[:-1]), final[-1]


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
