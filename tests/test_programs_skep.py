"""skep's example programs: their console output against models written in Python.

As for ref8's programs (tests/test_programs.py), each model computes what a
program must print from its data alone, with outside references beside it:
the Luhn check digit against the algorithm's usual worked example, the
rounds against ``math.gcd`` and ``math.lcm`` of the standard library.
"""

from __future__ import annotations

import math
import tomllib

import pytest

import emu
from emu.runs import load_program, panel_path_for, program_warnings, read_panel_file, run_loaded

from cli_support import PROGRAMS, REF8_PROGRAMS, cli

SKEP_PROGRAMS = PROGRAMS / "skep"


def luhn_check_digit(payload: str) -> int:
    """The digit that makes ``payload`` + digit pass the Luhn test."""
    total = 0
    for place, char in enumerate(reversed(payload)):
        digit = int(char) * (2 if place % 2 == 0 else 1)
        total += digit - 9 if digit > 9 else digit
    return (10 - total % 10) % 10


def test_luhn_against_its_worked_example():
    """79927398713 is the worked example of the Luhn algorithm (ISO/IEC 7812-1, Annex B;
    the number is the one its common descriptions use, from memory)."""
    assert luhn_check_digit("7992739871") == 3
    assert luhn_check_digit("7992739872") != 3


def harvest() -> str:
    weights = [23, 41, 17, 0, 35, 28, 52, 9, 31, 44]
    total = sum(weights)
    best = max(weights)
    givers = sum(1 for w in weights if w)
    each, left = divmod(total, givers)
    return ("".join(f"HIVE {i}: {w} KG\n" for i, w in enumerate(weights, 1))
            + f"TOTAL {total} KG\nHEAVIEST HIVE {weights.index(best) + 1}: {best} KG\n"
            + f"{givers} HIVES GAVE {each} KG EACH, {left} KG OVER\n")


def tags() -> str:
    panel = tomllib.loads((SKEP_PROGRAMS / "tags.panel.toml").read_text(encoding="utf-8"))
    numbers = panel["input"].split()
    lines, bad = [], 0
    for number in numbers:
        wanted = luhn_check_digit(number[:-1])
        if int(number[-1]) == wanted:
            lines.append(f"{number} GOOD")
        else:
            bad += 1
            lines.append(f"{number} BAD, WANTS {wanted}")
    lines.append(f"{len(numbers)} TAGS, {bad} BAD")
    return "\n".join(lines) + "\n"


def rounds() -> str:
    every, lines = 1, []
    for name, days in [("INSPECT", 9), ("FEED", 12), ("MITES", 14), ("WATER", 7)]:
        every = every // math.gcd(every, days) * days
        assert every == math.lcm(*[9, 12, 14, 7][:len(lines) + 1])
        lines.append(f"{name} {days} -> {every}")
    return "\n".join(lines) + f"\nALL MEET EVERY {every} DAYS\n"


MODELS = {"harvest": harvest, "tags": tags, "rounds": rounds}


def test_every_program_has_a_model():
    assert sorted(p.stem for p in SKEP_PROGRAMS.glob("*.asm")) == sorted(MODELS)


@pytest.mark.parametrize("name", sorted(MODELS))
def test_program_output_matches_its_model(name):
    path = SKEP_PROGRAMS / f"{name}.asm"
    machine = emu.load_machine("skep")
    program = load_program(path, machine)
    panel_path = panel_path_for(str(path))
    panel = read_panel_file(panel_path, machine) if panel_path.exists() else None
    result = run_loaded(program, machine, input_bytes=panel.input_bytes if panel else b"")
    assert result.status == "halted"
    assert program_warnings(result) + list(result.emulator.warnings) == []
    assert result.emulator.output.decode("latin-1") == MODELS[name]()
    assert program.expects


def test_harvest_pauses_for_the_operator_with_the_total_in_a():
    machine = emu.load_machine("skep")
    program = load_program(SKEP_PROGRAMS / "harvest.asm", machine)
    result = run_loaded(program, machine, stop_at_pause=True)
    assert result.status == "paused"
    assert result.emulator.get("a") == sum([23, 41, 17, 0, 35, 28, 52, 9, 31, 44]) == 280
    assert result.emulator.output.decode("latin-1") == harvest().split("TOTAL")[0]


def test_every_skep_program_names_its_machine_first():
    for path in SKEP_PROGRAMS.glob("*.asm"):
        first = next(line for line in path.read_text(encoding="utf-8").splitlines()
                     if line.strip() and not line.strip().startswith(";"))
        assert first.split() == [".machine", '"skep"'], path


def test_relaybench_test_programs_runs_both_machines_without_an_option(capsys):
    """The folder per machine is searched at any depth; each program names its machine."""
    code, out, _err = cli(capsys, "test", PROGRAMS)
    assert code == 0, out
    lines = out.splitlines()
    ref8_count = len(list(REF8_PROGRAMS.glob("*.asm")))
    assert sum(" on ref8 " in line for line in lines) == ref8_count
    assert sum(" on skep " in line for line in lines) == len(MODELS)
    total = ref8_count + len(MODELS)
    assert lines[-1] == f"{total} programs: {total} passed, 0 failed"
