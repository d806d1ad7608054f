"""What a sweep varies and what it collects, resolved against the machine and the program.

``relaybench sweep`` names its inputs and outputs as a person would: ``toggles``,
``input``, a register, group or flag, a label of the program (a memory word, or
``label:N`` for N words read as one number, first word least significant as
``.word`` lays them down), and for outputs also ``console``, ``lamps``,
``cycles``, ``instructions`` and ``status``. Everything is looked up here, once,
so a misspelt name is one clear error before any run starts.
"""

from __future__ import annotations

import random
import re
from dataclasses import dataclass

from ..description import Machine
from ..description.notation import decode_escapes, parse_number
from ..errors import RelaybenchError
from ._loading import LoadedProgram

__all__ = ["RUN_FACTS", "SweepInput", "SweepOutput", "SweepSpecError", "parse_input", "parse_output"]

RUN_FACTS = ("console", "lamps", "cycles", "instructions", "status")
"""Outputs that are facts of the run rather than registers or memory."""

_RANGE = re.compile(r"^(?P<low>[^.~]+)\.\.(?P<high>[^~]+?)(?:~(?P<draws>.+))?$")


class SweepSpecError(RelaybenchError):
    """A sweep input, output or check that cannot be used; the command turns it into a usage error."""


@dataclass(frozen=True)
class SweepInput:
    """One thing a sweep varies: ``kind`` is toggles, input, register or memory."""
    name: str
    kind: str
    target: str | int | None
    """The register's name or the label's address; None for toggles and input."""
    words: int
    """Memory words the value spreads over (memory inputs)."""
    values: tuple | range

    @property
    def column(self) -> str:
        return _identifier(self.name)


@dataclass(frozen=True)
class SweepOutput:
    """One thing a sweep collects after each run; ``kind`` is register, memory or a run fact."""
    name: str
    kind: str
    target: str | int | None
    words: int
    column: str


def parse_input(text: str, machine: Machine, program: LoadedProgram, seed: int) -> SweepInput:
    """``NAME=VALUES`` (see the module) with VALUES a list of numbers and ``LOW..HIGH``
    ranges, where ``LOW..HIGH~N`` stands for N values drawn from the range (seeded);
    for ``input``, texts separated by ``|`` with the assembler's escapes."""
    name, equals, values_text = text.partition("=")
    name = name.strip()
    if not equals or not name or not values_text.strip():
        raise SweepSpecError(f"'{text}' is not NAME=VALUES (for example r0=0..255 or toggles=1,2,4)")
    if name == "input":
        return SweepInput(name, "input", None, 0, _texts(values_text))
    kind, target, words, top = _place(name, machine, program, "input")
    values = _numbers(values_text, top, name, random.Random(f"{seed}:{name}"))
    return SweepInput(name, kind, target, words, values)


def parse_output(name: str, machine: Machine, program: LoadedProgram, taken: set[str]) -> SweepOutput:
    """An output by name; its column gets ``_after`` when an input already has that name."""
    name = name.strip()
    if name in RUN_FACTS:
        kind, target, words = name, None, 0
    else:
        kind, target, words, _top = _place(name, machine, program, "output")
    column = _identifier(name)
    if column in taken:
        column += "_after"
    return SweepOutput(name, kind, target, words, column)


def _place(name: str, machine: Machine, program: LoadedProgram, role: str) -> tuple[str, object, int, int]:
    """(kind, target, words, largest value) of a toggles, register or label name."""
    if name == "toggles":
        return "toggles", None, 0, machine.data_mask
    if name in machine.registers or name in machine.flags or name in machine.groups:
        return "register", name, 0, _register_top(machine, name)
    label, colon, count_text = name.partition(":")
    words = 1
    if colon:
        try:
            words = parse_number(count_text)
        except ValueError as exc:
            raise SweepSpecError(f"'{name}': the word count {exc}") from None
        if not 1 <= words <= 8:
            raise SweepSpecError(f"'{name}': a label's value spans 1 to 8 words, not {words}")
    address = program.labels.get(label)
    if address is None:
        if label in program.symbols:
            raise SweepSpecError(f"'{label}' is a constant of the program (= {program.symbols[label]}), "
                                 f"not a label of a memory word")
        known = ", ".join(sorted(program.labels)[:12]) or \
            ("none" if program.kind == "source" or program.debug_path else "none: the image has no debug file beside it")
        facts = f", {', '.join(RUN_FACTS)}" if role == "output" else ""
        raise SweepSpecError(f"'{label}' is no {role} of this sweep: not toggles{', input' if role == 'input' else ''}"
                             f"{facts}, a register or flag of {machine.name}, nor a label of the program "
                             f"(labels: {known}{', …' if len(program.labels) > 12 else ''})")
    if address + words > machine.memory_words:
        raise SweepSpecError(f"'{name}' reaches past the end of memory ({machine.memory_words} words)")
    return "memory", address, words, (1 << machine.data_bits * words) - 1


def _register_top(machine: Machine, name: str) -> int:
    if name in machine.flags:
        return 1
    if name in machine.groups:
        return (1 << sum(machine.registers[p].width for p in machine.groups[name].parts)) - 1
    return (1 << machine.registers[name].width) - 1


def _numbers(text: str, top: int, name: str, draw: random.Random) -> tuple | range:
    """The values of a list of numbers and ranges; a lone range stays a ``range`` (no copy)."""
    parts = []
    for item in text.split(","):
        item = item.strip()
        match = _RANGE.match(item)
        if match is None:
            value = _number(item, top, name)
            parts.append((value,))
            continue
        low, high = _number(match["low"], top, name), _number(match["high"], top, name)
        if high < low:
            raise SweepSpecError(f"'{name}': the range {item} runs backwards ({high} is below {low})")
        span = range(low, high + 1)
        if match["draws"] is None:
            parts.append(span)
            continue
        count = _number(match["draws"], None, name)
        if not 1 <= count <= len(span):
            raise SweepSpecError(f"'{name}': {item} draws {count} values from a range of {len(span)}")
        parts.append(tuple(draw.sample(span, count)))
    if len(parts) == 1 and isinstance(parts[0], range):
        return parts[0]
    return tuple(value for part in parts for value in part)


def _number(text: str, top: int | None, name: str) -> int:
    try:
        value = parse_number(text)
    except ValueError as exc:
        raise SweepSpecError(f"'{name}': {exc}") from None
    if value < 0 or (top is not None and value > top):
        limit = f"0…{top}" if top is not None else "1 or more"
        raise SweepSpecError(f"'{name}': {value} is out of range ({limit})")
    return value


def _texts(text: str) -> tuple[bytes, ...]:
    """``input=`` texts: ``|`` between them, the assembler's escapes inside; ``\\|`` is a bar."""
    texts = []
    for raw in re.split(r"(?<!\\)\|", text):
        value, problem = decode_escapes(raw.replace("\\|", "|"))
        if problem is not None:
            raise SweepSpecError(f"'input': {problem}")
        texts.append(value.encode("utf-8"))
    return tuple(texts)


def _identifier(name: str) -> str:
    """The name a column has in a check expression: ``label:2`` → ``label``, dots → ``_``."""
    plain = re.sub(r"\W", "_", name.partition(":")[0])
    return plain if not plain[:1].isdigit() else f"_{plain}"
