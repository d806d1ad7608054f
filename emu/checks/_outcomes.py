"""What a program computed, in a form two runs can be compared by.

The program checks ask one question three ways (an operator stopping and
stepping, a halt planted in front of a statement, an irregular clock): is
the result the same as the free run's? "The result" is what a builder
would look at afterwards: how the run ended and where, the registers but
the pc, the flags, the lamps, the console, the memory the program's
``.expect`` checks name or ``--dump`` asks for, and the value every check
saw each time its halt was reached.
"""

from __future__ import annotations

from dataclasses import dataclass

import asm

from ..runs import LoadedProgram, RunResult, actual_value

__all__ = ["CheckRecorder", "Outcome", "Watched", "data_tables", "difference_text", "first_difference", "labelled_data", "outcome_of", "watched_memory"]


@dataclass(frozen=True)
class Watched:
    """A memory word the outcome includes: its name in messages and its address in this run."""
    name: str
    address: int


@dataclass(frozen=True)
class Outcome:
    status: str
    stop: tuple[str, int] | int | None
    """The source line (file, line) of the halt the run ended at; its address without one; None at the limit."""
    registers: dict[str, int]
    groups: dict[str, int]
    """Register groups (a pointer made of two registers, say), as one value each."""
    group_parts: dict[str, tuple[str, ...]]
    address_registers: frozenset[str]
    """The plain registers at least as wide as an address: each may hold one (a pointer)."""
    address_words: tuple[int, int]
    """(bits of a data word, data words an address takes): how an address is kept in memory."""
    flags: dict[str, int]
    lamps: int
    output: bytes
    memory: dict[str, int]
    checks_seen: tuple[tuple[str, object, bool], ...]
    """(``FILE:LINE check``, value, whether it held) for every check at every visit, in the order
    the run made them."""


def watched_memory(program: LoadedProgram, dumps=(), relocate=lambda address: address, *,
                   checks: bool = True) -> list[Watched]:
    """The words the checks name (at their own addresses; ``checks=False`` leaves them to the
    checks' verdicts) and the ``--dump`` ranges (``relocate`` maps an address as written to where
    it is in this program)."""
    words = [] if not checks else [Watched(f"{expect.file}:{expect.line} {expect.text.split(expect.op)[0].strip()}",
                     expect.memory_address)
             for expect in program.expects if expect.item == "mem"]
    for text, start, length in dumps:
        words.extend(Watched(f"{text}+{i}" if i else text, relocate(start + i)) for i in range(length))
    return words


def data_tables(program: asm.Program) -> dict[str, int]:
    """Each label on data, with the number of data words from it to the next label or code."""
    labels_at = {}
    for name, address in program.labels.items():
        labels_at.setdefault(address, name)
    tables: dict[str, int] = {}
    current, end = None, None
    for entry in sorted((e for e in program.lines if e.length), key=lambda e: e.address):
        if entry.kind != "data" or (current is not None and (entry.address != end or entry.address in labels_at)):
            current = None
        if entry.kind == "data" and current is None and entry.address in labels_at:
            current = labels_at[entry.address]
            tables[current] = 0
        if current is not None:
            tables[current] += entry.length
            end = entry.address + entry.length
    return tables


def labelled_data(program: asm.Program, relocate=lambda address: address) -> list[Watched]:
    """Every word of the data the program's labels name, at its address in this run."""
    return [Watched(f"{name}+{i}" if i else name, relocate(program.labels[name] + i))
            for name, length in data_tables(program).items() for i in range(length)]


class CheckRecorder:
    """An ``on_halt`` for ``run_loaded`` that writes down what every check sees."""

    def __init__(self, program: LoadedProgram):
        self.checks = {}
        for expect in program.expects:
            self.checks.setdefault(expect.address, []).append(expect)
        self.seen: list[tuple[str, object]] = []

    def __call__(self, emu, address: int) -> None:
        for expect in self.checks.get(address, ()):
            actual = actual_value(emu, expect)
            self.seen.append((f"{expect.file}:{expect.line} {expect.text}", actual,
                              (actual == expect.value) == (expect.op == "==")))


def outcome_of(result: RunResult, watched: list[Watched], recorder: CheckRecorder) -> Outcome:
    emu = result.emulator
    machine = emu.machine
    program = result.program
    stop = None
    if result.halt_address is not None:
        stop = program.source_map.get(result.halt_address, result.halt_address)
    return Outcome(
        result.status, stop,
        {reg.name: emu.get(reg.name) for reg in machine.visible_registers if reg.name != machine.program_counter},
        {name: emu.get(name) for name in machine.groups},
        {name: tuple(group.parts) for name, group in machine.groups.items()},
        frozenset(reg.name for reg in machine.visible_registers
                  if reg.width >= machine.address_bits and reg.name != machine.program_counter),
        (machine.data_bits, -(-machine.address_bits // machine.data_bits)),
        {name: emu.get(name) for name in machine.flags},
        emu.lamps, bytes(emu.output),
        {word.name: emu.memory[word.address] for word in watched},
        tuple(recorder.seen))


def first_difference(expected: Outcome, got: Outcome, moved=None) -> tuple[str, object, object] | None:
    """(what, value in ``expected``, value in ``got``) for the first item that differs, in the
    order a builder reads them: ending, stop, registers, flags, lamps, console, memory, checks.

    ``moved(address)`` (where an address of the expected run's program is in the other's)
    lets a register as wide as an address, a register group or a run of memory words that
    holds an address differ by exactly that move: a pointer left on a string that moved
    with the code is the same pointer.
    """
    excused = set() if moved is None else _moved_addresses(expected, got, moved)
    pairs = [("status", expected.status, got.status), ("stop", expected.stop, got.stop)]
    pairs += [(f"register {name}", value, got.registers.get(name)) for name, value in expected.registers.items()]
    pairs += [(f"register {name}", value, got.groups.get(name)) for name, value in expected.groups.items()]
    pairs += [(f"flag {name}", value, got.flags.get(name)) for name, value in expected.flags.items()]
    pairs += [("lamps", expected.lamps, got.lamps), ("console", expected.output, got.output)]
    pairs += [(f"memory {name}", value, got.memory.get(name)) for name, value in expected.memory.items()]
    checked = 2 if moved is not None else 1     # with moved addresses, a check's value may move too
    pairs += [(f"check {seen[0]}", seen[checked], other[checked])
              for seen, other in zip(expected.checks_seen, got.checks_seen)]
    pairs.append(("checks made", len(expected.checks_seen), len(got.checks_seen)))
    return next(((what, a, b) for what, a, b in pairs if a != b and what not in excused), None)


def _moved_addresses(expected: Outcome, got: Outcome, moved) -> set[str]:
    """The items (``register x``, ``memory NAME``) that hold an address, moved as the program moved."""
    excused = {f"register {name}" for name in expected.address_registers
               if _holds_moved(expected.registers[name], got.registers.get(name), moved)}
    for name, value in expected.groups.items():
        if _holds_moved(value, got.groups.get(name), moved):
            excused |= {f"register {part}" for part in (name, *got.group_parts.get(name, ()))}
    bits, count = expected.address_words
    names = list(expected.memory)
    for start in range(len(names) - count + 1):
        span = names[start:start + count]
        if any(name not in got.memory for name in span):
            continue
        plain = sum(expected.memory[name] << (bits * i) for i, name in enumerate(span))
        now = sum(got.memory[name] << (bits * i) for i, name in enumerate(span))
        if _holds_moved(plain, now, moved):
            excused |= {f"memory {name}" for name in span}
    return excused


def _holds_moved(plain: int, now: int | None, moved) -> bool:
    """Whether ``now`` is the address ``plain`` was, moved as the program moved."""
    return plain != now and moved(plain) == now


def difference_text(difference: tuple[str, object, object], expected_run: str, other_run: str) -> str:
    """``register r1 is 0x3 as written, 0x4 with the halt planted``."""
    what, expected, got = difference
    if what == "status":
        return f"the run ended at {_ENDINGS[expected]} {expected_run}, at {_ENDINGS[got]} {other_run}"
    return f"{what} is {_shown(expected)} {expected_run}, {_shown(got)} {other_run}"


_ENDINGS = {"halted": "a halt", "cycle_limit": "the cycle limit"}


def _shown(value) -> str:
    if isinstance(value, tuple) and len(value) == 2 and isinstance(value[0], str):
        return f"{value[0]}:{value[1]}"
    return f"{value:#x}" if isinstance(value, int) and not isinstance(value, bool) else repr(value)
