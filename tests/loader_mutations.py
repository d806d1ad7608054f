"""Seeded mutations of machine files, and the only two outcomes a mutation may have.

A mutation is one edit a person could make by mistake: delete, duplicate or
swap lines, cut the file short, put a strange value where a number stood,
misspell a key, or change one token of a micro-step. Whatever the edit,
the loader must either refuse the file with a MachineError that names it,
or give a machine that runs a trivial program on both engine paths.
"""

from __future__ import annotations

import random
import re
import traceback
from dataclasses import dataclass

from emu import Emulator, MachineError, Observer
from emu.description import machine_from_text

from engine_support import trivial_program

ODD_NUMBERS = ("0", "-1", "1" + "0" * 40, "9" * 5000, "inf", "-inf", "nan", "1e-300", '"a string"', "0.5", "65536")
STEP_TOKENS = ("<-", ";", "mem[pc]", "pc", "+ 1", "- 1", "?", ":", "!", "{", "}", "(", ")", ",", "sets",
               "halt", "in(0)", "out(0, t)", "add(", "z", "x", "t", "ir", "hi(", "lo(", "0", "255", "")
_NUMBER = re.compile(r"(?<![\w.\"])-?\d[\d_]*(?:\.\d+)?(?:e-?\d+)?(?![\w\"])")
_KEY = re.compile(r"^(\s*)([A-Za-z_][\w.]*|\"[^\"]*\")(\s*=)")
_STEP_PIECE = re.compile(r"<-|;|\?|:|!|[{}(),\[\]]|[A-Za-z_]\w*|\d+|[+-]")
_OTHER_KEYS = ("name", "bits", "ms", "level", "ring", "hold", "steps", "syntax", "encoding", "stages",
               "data_bits", "registers", "min", "max", "mode", "r_ohm", "pc", "flags", "zero")


def _delete(rng, lines):
    del lines[rng.randrange(len(lines))]


def _duplicate(rng, lines):
    i = rng.randrange(len(lines))
    lines.insert(i, lines[i])


def _swap(rng, lines):
    i, j = rng.randrange(len(lines)), rng.randrange(len(lines))
    lines[i], lines[j] = lines[j], lines[i]


def _truncate(rng, lines):
    text = "\n".join(lines)
    cut = text[: rng.randrange(len(text))]
    lines[:] = cut.split("\n")


def _odd_number(rng, lines):
    candidates = [i for i, line in enumerate(lines) if _NUMBER.search(line.split("#")[0])]
    i = rng.choice(candidates)
    matches = list(_NUMBER.finditer(lines[i].split("#")[0]))
    m = rng.choice(matches)
    lines[i] = lines[i][:m.start()] + rng.choice([n for n in ODD_NUMBERS if n != m[0]]) + lines[i][m.end():]


def _rename_key(rng, lines):
    candidates = [i for i, line in enumerate(lines) if _KEY.match(line)]
    i = rng.choice(candidates)
    m = _KEY.match(lines[i])
    new = rng.choice([k for k in _OTHER_KEYS + (m[2] + "x", m[2][:-1] or "k") if k != m[2]])
    lines[i] = m[1] + new + m[3] + lines[i][m.end():]


def _step_token(rng, lines):
    candidates = [i for i, line in enumerate(lines) if "<-" in line or "halt" in line or "out(" in line]
    i = rng.choice(candidates)
    pieces = list(_STEP_PIECE.finditer(lines[i]))
    m = rng.choice(pieces)
    lines[i] = lines[i][:m.start()] + rng.choice([t for t in STEP_TOKENS if t != m[0]]) + lines[i][m.end():]


MUTATIONS = {"delete a line": _delete, "duplicate a line": _duplicate, "swap two lines": _swap,
             "truncate": _truncate, "odd number": _odd_number, "rename a key": _rename_key,
             "micro-step token": _step_token}


def mutate(text: str, seed: int) -> tuple[str, str]:
    """(mutated text, what was done); the same seed always gives the same edit."""
    rng = random.Random(seed)
    name = rng.choice(list(MUTATIONS))
    lines = text.split("\n")
    MUTATIONS[name](rng, lines)
    return "\n".join(lines), name


@dataclass
class Outcome:
    kind: str           # "refused", "runs" or "traceback"
    detail: str = ""


def run_briefly(machine, cycles: int = 300) -> None:
    """A trivial program on the fused and on the stepping path, pressing RESUME at each halt."""
    words = trivial_program(machine)[: machine.memory_words]
    for observed in (False, True):
        emu = Emulator(machine)
        if observed:
            emu.observe(Observer())
        emu.load([(0, words)])
        while emu.cycles < cycles:
            reason = emu.run(max_cycles=cycles - emu.cycles)
            if reason.kind == "halted":
                emu.press_resume()
            elif reason.kind != "cycle_limit":
                break


def outcome(text: str, path: str, cycles: int = 300) -> Outcome:
    """How the loader and the engine take one (mutated) machine file."""
    try:
        machine = machine_from_text(text, path)
    except MachineError as exc:
        rendered = exc.render()
        if not rendered.startswith(path):
            return Outcome("traceback", f"message does not name the file: {rendered}")
        return Outcome("refused", rendered)
    except Exception:
        return Outcome("traceback", "loading: " + traceback.format_exc())
    try:
        run_briefly(machine, cycles)
    except Exception:
        return Outcome("traceback", "running: " + traceback.format_exc())
    return Outcome("runs")
