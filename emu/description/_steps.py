"""A micro-step as the loader builds it, and where the sequencer goes after it.

A ``Step`` is one clock pulse of an instruction (or of the fetch): its
statements, the control lines it drives (some gated by a condition), and
its ``Jump`` when it says ``end``, ``goto`` or ``wait until``.
``step_paths`` follows those jumps to give an instruction its shortest and
longest run of cycles (``Cycles``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

from .notation import Condition, Statement

__all__ = ["Cycles", "GatedLine", "Jump", "Step", "step_paths"]


@dataclass(frozen=True)
class Jump:
    """Where the sequencer goes after a step with a sequencing statement.

    To ``target`` (an index into the instruction's own steps; the number of
    steps means "the instruction is finished") when ``condition`` is
    ``when`` — always when there is no condition — else to the next step.
    ``end if z`` is Jump(n, z, True); ``wait until rdy`` on step k is
    Jump(k, rdy, False). The condition reads the state before the step.
    """
    target: int
    condition: Condition | None
    when: bool = True

    def successors(self, step: int) -> tuple[int, ...]:
        return (self.target,) if self.condition is None else (self.target, step + 1)


@dataclass(frozen=True)
class GatedLine:
    """A control line a step drives only in a cycle where ``condition`` holds (``ld-pc if z``).

    The condition reads the state from before the step, like the step's
    own statements: it says whether the builder's wiring lets the line
    through while the pulse lasts.
    """
    name: str
    condition: Condition
    text: str
    """The condition as written in the machine file."""

    def __str__(self) -> str:
        return f"{self.name} if {self.text}"


@dataclass(frozen=True)
class Step:
    """One micro-step: its text, its IR, the control lines it drives, and where it goes next.

    ``control_lines`` are driven on every pulse of the step; ``gated_lines``
    only on a pulse where their condition holds. The names are the
    builder's (``lines = [...]`` in the file) or derived from the
    statements (``load a``, ``alu add``, ``read``).
    """
    text: str
    statements: tuple[Statement, ...]
    control_lines: tuple[str, ...]
    drives_halt: bool
    jump: Jump | None = None
    gated_lines: tuple[GatedLine, ...] = ()

    @property
    def line_names(self) -> tuple[str, ...]:
        """Every line the step may drive, gated or not."""
        return self.control_lines + tuple(line.name for line in self.gated_lines)

    @property
    def listed_lines(self) -> tuple[str, ...]:
        """The lines as ``isa`` and the debugger list them: a gated one with its condition."""
        return self.control_lines + tuple(str(line) for line in self.gated_lines)


class Cycles(NamedTuple):
    """Clock cycles of an instruction: its shortest and longest path (None: a loop, unbounded)."""
    shortest: int
    longest: int | None

    @property
    def fixed(self) -> bool:
        return self.shortest == self.longest

    def __str__(self) -> str:
        if self.fixed:
            return str(self.shortest)
        return f"{self.shortest}–{'∞' if self.longest is None else self.longest}"


def step_paths(steps: tuple[Step, ...]) -> tuple[int, int | None]:
    """Shortest and longest number of steps from the first step to the end (None: a loop can repeat)."""
    end = len(steps)

    def successors(k):
        jump = steps[k].jump
        return (k + 1,) if jump is None else jump.successors(k)

    distance, frontier = {0: 0}, [0]
    while frontier and end not in distance:
        reached = []
        for k in frontier:
            for n in successors(k):
                if n not in distance:
                    distance[n] = distance[k] + 1
                    reached.append(n)
        frontier = [n for n in reached if n != end]
    shortest = distance.get(end, 0) if steps else 0
    longest: dict[int, int | None] = {end: 0}
    visiting: set[int] = set()

    def longest_from(k) -> int | None:
        if k in longest:
            return longest[k]
        if k in visiting:
            return None
        visiting.add(k)
        rest = [longest_from(n) for n in successors(k)]
        visiting.discard(k)
        longest[k] = None if None in rest else 1 + max(rest)
        return longest[k]
    return shortest, (longest_from(0) if steps else 0)
