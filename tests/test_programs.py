"""ref8's example programs: their console output against models written in Python.

Each model below computes what a program must print from the program's data
alone, independently of the assembler and the emulator, so a wrong routine
in a program (or in the machine underneath) shows up here as well as in the
program's own ``.expect`` checks.
"""

from __future__ import annotations

import zlib

import pytest

import emu
from emu.runs import load_program, run_loaded
from emu.runs import panel_path_for, read_panel_file

from cli_support import REF8_PROGRAMS

MORSE = {  # ITU-R M.1677-1 International Morse code, letters (from memory)
    "A": ".-", "B": "-...", "C": "-.-.", "D": "-..", "E": ".", "F": "..-.", "G": "--.", "H": "....",
    "I": "..", "J": ".---", "K": "-.-", "L": ".-..", "M": "--", "N": "-.", "O": "---", "P": ".--.",
    "Q": "--.-", "R": ".-.", "S": "...", "T": "-", "U": "..-", "V": "...-", "W": ".--", "X": "-..-",
    "Y": "-.--", "Z": "--..",
}


def fares() -> str:
    crossings = [(23, 9, 4), (41, 12, 7), (17, 3, 11), (58, 21, 2), (36, 14, 9)]
    takings = [185 * a + 95 * c + 60 * b for a, c, b in crossings]
    total = sum(takings)
    share, left = divmod(total, 7)
    return ("".join(f"crossing {i}: {t}p\n" for i, t in enumerate(takings, 1))
            + f"total {total}p\nper crossing {total // 5}p\n7 crew: {share}p each, {left}p to the lifeboat box\n")


def timetable() -> str:
    departures = list(range(6 * 60 + 40, 20 * 60 + 1, 35))
    def hhmm(m):
        return f"{m // 60:02d}:{m % 60:02d}"
    cells = [f"{hhmm(d)}>{hhmm(d + 25)}" for d in departures]
    rows = ["  ".join(cells[i:i + 4]) for i in range(0, len(cells), 4)]
    tail = "  " if len(cells) % 4 else ""
    return "\n".join(rows) + tail + f"\n{len(departures)} sailings\n"


def manifest() -> str:
    weights = sorted([1250, 380, 4075, 96, 2210, 15, 760, 3300, 1250, 540, 12005, 875])
    return " ".join(map(str, weights)) + f" \ndeck load {sum(weights)} kg\n"


def berths() -> str:
    names = ["Kittiwake", "Puffin", "Sea Holly", "Marram", "Dunlin II"]
    return ("".join(f"{n.upper()} {len(n)}\n" for n in names)
            + f"longest: {max(names, key=len).upper()}\nPUFFIN is at berth {names.index('Puffin') + 1}\n")


def tickets() -> str:
    fares_by_route = [240, 310, 455, 600]
    places = ["Skerry Isle", "Holm", "Far Ness", "the lighthouse"]
    switches, groups = 0x82, [12, 7, 30]
    route, back = switches & 3, bool(switches & 0x80)
    fare = fares_by_route[route] * 2 - 50 if back else fares_by_route[route]
    lines = [f"{'return' if back else 'single'} to {places[route]}, {fare}p each"]
    lines += [f"group of {g}: {g * fare}p" for g in groups]
    lines.append(f"{len(groups)} groups, {sum(groups)} passengers, {sum(groups) * fare}p")
    return "\n".join(lines) + "\n"


def ledger() -> str:
    data, s = bytearray(), 42
    for _ in range(0xF800 - 0x0800):
        data.append(s)
        s = (5 * s + 17) % 256
    return f"ledger CRC-32 {zlib.crc32(bytes(data)):08X}\n"


def regatta() -> str:
    primes = [n for n in range(2, 1000) if all(n % d for d in range(2, int(n ** 0.5) + 1))]
    assert len(primes) == 168      # the published count of primes below 1000
    return f"first heat: {' '.join(str(p) for p in primes if p >= 900)}\n{len(primes)} prime sail numbers below 1000\n"


def beacon() -> str:
    return " ".join(MORSE[ch] for ch in "GULLHAVEN") + "\n"


def crane() -> str:
    weight, crates = 18 * 25, 4        # the answers of crane.panel.toml
    load = weight * crates
    verdict = "LIFT" if load <= 2000 else "REFUSED, OVER THE SAFE LOAD"
    return f"CRATE WEIGHT IN 25 KG STEPS?\nNUMBER OF CRATES?\nLOAD {load} KG: {verdict}\n"


def tolls() -> str:
    return f"toll {23 * 45}p\n"        # the load and rate in tolls.asm


MODELS = {"fares": fares, "timetable": timetable, "manifest": manifest, "berths": berths,
          "tickets": tickets, "ledger": ledger, "regatta": regatta, "beacon": beacon,
          "crane": crane, "tolls": tolls}


def test_every_program_has_a_model():
    assert sorted(p.stem for p in REF8_PROGRAMS.glob("*.asm")) == sorted(MODELS)


def test_crc32_reference_check_value():
    """The catalogue check value of CRC-32 (ISO/IEC 8802-3), as zlib computes it."""
    assert zlib.crc32(b"123456789") == 0xCBF43926


@pytest.mark.parametrize("name", sorted(MODELS))
def test_program_output_matches_its_model(name):
    machine = emu.load_machine("ref8")
    path = REF8_PROGRAMS / f"{name}.asm"
    program = load_program(path, machine)
    panel_path = panel_path_for(str(path))
    panel = read_panel_file(panel_path, machine) if panel_path.exists() else None
    result = run_loaded(program, machine, switches=panel.switches if panel else 0,
                        input_bytes=panel.input_bytes if panel else b"",
                        operator=panel.at_halt if panel else ())
    assert result.status == "halted" and result.answers_left == 0
    assert result.emulator.output.decode("latin-1") == MODELS[name]()
    assert program.pauses and program.expects
    if name == "ledger":
        assert result.emulator.cycles > 10_000_000     # the long one

