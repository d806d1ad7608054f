"""A machine given as a name, a path or a ``Machine``: the strategies and fixture take any."""

from __future__ import annotations

from functools import lru_cache

from ..description import Machine, load_machine

__all__ = ["machine_of"]


def machine_of(machine: Machine | str) -> Machine:
    """The machine itself, or the shipped machine or machine file it names (loaded once)."""
    return machine if isinstance(machine, Machine) else _loaded(str(machine))


@lru_cache(maxsize=None)
def _loaded(name_or_path: str) -> Machine:
    return load_machine(name_or_path)
