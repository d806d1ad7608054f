"""Running the machine properties with hypothesis, on the user's machine at run time.

Each property gets its own search with ``hypothesis.find``: it draws up to
the asked number of examples, stops at the first that breaks the property
and shrinks it to a small one. The search is seeded, with no example
database, so a seed printed with a failure gives the same search again.
"""

from __future__ import annotations

import random
from dataclasses import dataclass

from hypothesis import HealthCheck, Phase, find, settings
from hypothesis.errors import NoSuchExample

from ..errors import RelaybenchError
from ._machine_properties import Example, MachineProperty
from ._machine_state import PropertyFailed

__all__ = ["PASSED", "FAILED", "NOT_APPLICABLE", "PropertyResult", "check_property", "new_seed"]

PASSED, FAILED, NOT_APPLICABLE = "passed", "failed", "not applicable"
SHRINK_BUDGET = 300
"""Examples tried while shrinking a failure; past it the smallest failing one so far is shown.
A count, not a time, so that a seed gives the same counterexample on any computer."""


@dataclass
class PropertyResult:
    prop: MachineProperty
    status: str
    examples: int = 0
    """Examples drawn before the verdict (for a failure: up to the first failing one)."""
    reason: str | None = None
    """Why the property does not apply."""
    example: Example | None = None
    failure: PropertyFailed | None = None
    """The shrunk example and what it broke."""


def new_seed() -> int:
    return random.SystemRandom().randrange(1 << 32)


def _failure_of(prop: MachineProperty, machine, example: Example) -> PropertyFailed | None:
    """What the example breaks, or None; a crash inside the engine counts as a failure too."""
    try:
        prop.check(machine, example)
    except PropertyFailed as failure:
        return failure
    except (RelaybenchError, ArithmeticError, LookupError, TypeError, ValueError, AttributeError,
            RecursionError) as exc:
        return PropertyFailed("the machine to run the example", f"the emulator raised {type(exc).__name__}: {exc}")
    return None


def check_property(prop: MachineProperty, machine, examples: int, seed: int, progress=None) -> PropertyResult:
    """One property on ``machine``: passed with the examples drawn, failed with the shrunk example,
    or not applicable with the reason. ``progress(done)`` is told of each example drawn."""
    reason = prop.not_applicable(machine)
    if reason is not None:
        return PropertyResult(prop, NOT_APPLICABLE, reason=reason)
    drawn, first_failure, failing, shrinks = 0, None, [], 0

    def breaks(example: Example) -> bool:
        nonlocal drawn, first_failure, shrinks
        if first_failure is None:
            drawn += 1
            if progress is not None:
                progress(drawn)
        elif example in failing:
            return True
        else:
            shrinks += 1
            if shrinks > SHRINK_BUDGET:
                return False
        failed = _failure_of(prop, machine, example) is not None
        if failed:
            failing.append(example)
            if first_failure is None:
                first_failure = drawn
        return failed

    search = settings(max_examples=examples, database=None, deadline=None, phases=(Phase.generate, Phase.shrink),
                      suppress_health_check=list(HealthCheck))
    try:
        found = find(prop.examples(machine), breaks, settings=search, random=random.Random(f"{seed}:{prop.key}"))
    except NoSuchExample:
        return PropertyResult(prop, PASSED, drawn)
    return PropertyResult(prop, FAILED, first_failure, example=found, failure=_failure_of(prop, machine, found))

