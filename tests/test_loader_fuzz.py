"""Fuzzing the loader: seeded mutations of every machine file in the project.

The only outcomes allowed are a MachineError whose message names the file,
or a machine that loads and runs a trivial program on both engine paths
(tests/loader_mutations.py). A small fixed share runs by default; the full
run (5,000 mutations of each file) is marked slow: ``pytest -m slow``.
"""

from __future__ import annotations

import collections

import pytest

from engine_support import MACHINE_FILES
from loader_mutations import MUTATIONS, mutate, outcome

FAST_MUTATIONS = 300
"""Shared among the machine files in the default run."""
SLOW_MUTATIONS_PER_FILE = 5_000


def _fuzz(path, seeds) -> collections.Counter:
    text = path.read_text(encoding="utf-8")
    counts, tracebacks = collections.Counter(), []
    for seed in seeds:
        mutated, what = mutate(text, seed)
        result = outcome(mutated, str(path))
        counts[result.kind] += 1
        if result.kind == "traceback":
            tracebacks.append(f"seed {seed} ({what}):\n{result.detail}")
    assert not tracebacks, f"{len(tracebacks)} mutations of {path.name} gave a traceback; first:\n{tracebacks[0]}"
    # A mutator that only ever broke the file (or never did) would test nothing.
    assert counts["refused"] and counts["runs"], counts
    return counts


@pytest.mark.parametrize("name", MACHINE_FILES)
def test_a_few_mutations_of_each_machine_file_are_refused_with_a_message_or_run(name):
    share = max(20, FAST_MUTATIONS // len(MACHINE_FILES))
    _fuzz(MACHINE_FILES[name], range(share))


@pytest.mark.slow
@pytest.mark.parametrize("name", MACHINE_FILES)
def test_thousands_of_mutations_of_each_machine_file_are_refused_with_a_message_or_run(name):
    _fuzz(MACHINE_FILES[name], range(SLOW_MUTATIONS_PER_FILE))


def test_every_kind_of_mutation_is_drawn_and_each_changes_the_file():
    text = MACHINE_FILES["ref8"].read_text(encoding="utf-8")
    drawn = collections.Counter()
    for seed in range(200):
        mutated, what = mutate(text, seed)
        drawn[what] += 1
        assert mutated != text or what == "swap two lines", (seed, what)   # a line swapped with itself
    assert set(drawn) == set(MUTATIONS)
