"""Block translation against the fused path and a plain interpreter, in one run, interleaved.

Run:  python tests/bench/bench_blocks.py [--repeat N] [--only NAME]

Three ways to run a ref8 program from power-on to its last halt (pressing
RESUME at each ``pause``):

* **plain** — an if/elif interpreter of ref8 written here from the spec
  (/work/shared/spec/ref8.md) and the encodings of emu/machines/ref8.toml:
  locals, no dispatch table, fields decoded by shifts and masks;
* **fused** — relaybench's fast path with block translation off;
* **blocks** — block translation on (the default).

Before any timing, all three must agree on registers, flags, output, lamps,
cycles, instructions and the CRC-32 of all memory (zlib.crc32). Timings are
the best of N CPU times, the three taken in turn each round; the first run
with blocks, which compiles them, is reported on its own. Targets: blocks
at least 4× plain on ledger.asm, and on every short example never slower
than fused (end to end in-process: a new Emulator, load, run).
"""

from __future__ import annotations

import argparse
import sys
import time
import tomllib
import zlib
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import asm  # noqa: E402
from emu import Emulator, load_machine  # noqa: E402

MACHINE = load_machine("ref8")
LOOP_TARGET = 4.0
SHORT_NOISE = 0.03
"""How far below the fused path a short program may time and still count as not slower: runs
of a few milliseconds, best of a dozen, still differ by a per cent or two from round to round
(and a short program never leaves its warm-up, so both columns time the same path)."""
CYCLE_CAP = 50_000_000


@dataclass(frozen=True)
class Outcome:
    registers: tuple
    flags: tuple
    output: bytes
    lamps: int
    cycles: int
    instructions: int
    memory_crc: int


@dataclass(frozen=True)
class Program:
    name: str
    segments: list
    pauses: frozenset
    switches: int
    input_bytes: bytes


def load_program(path: Path) -> Program:
    program = asm.assemble_file(path, MACHINE)
    panel = path.with_suffix(".panel.toml")
    settings = tomllib.loads(panel.read_text()) if panel.exists() else {}
    return Program(path.name, program.segments, frozenset(program.pauses), settings.get("switches", 0),
                   settings.get("input", "").encode())


# ----- (a) the plain interpreter ------------------------------------------------------

def plain_interpreter(program: Program) -> Outcome:
    """ref8 by hand: one if/elif chain on the opcode, registers in locals and one list."""
    mem = bytearray(65536)
    for start, words in program.segments:
        mem[start:start + len(words)] = bytes(words)
    r = [0] * 8
    pc = sp = 0
    z = n = c = v = 0
    t = u = ir = 0
    out, lamps, data, position = bytearray(), 0, program.input_bytes, 0
    switches, pauses = program.switches, program.pauses
    cycles = instructions = 0
    while cycles < CYCLE_CAP:
        ir = op = mem[pc]
        pc = (pc + 1) & 0xFFFF
        instructions += 1
        group = op >> 3
        if op >= 0xC0:                                   # alu rd, imm8
            d = op & 7
            a, b = r[d], mem[pc]
            pc = (pc + 1) & 0xFFFF
            kind = group & 7
            cycles += 2
            if kind == 0 or kind == 1:                   # add, adc
                res = a + b + (c if kind == 1 else 0)
                c, v = res >> 8 & 1, ((a ^ res) & (b ^ res)) >> 7 & 1
            elif kind <= 4:                              # sub, sbc, cmp
                res = a - b - (c if kind == 3 else 0)
                c, v = res >> 8 & 1, ((a ^ b) & (a ^ res)) >> 7 & 1
            else:
                res = a & b if kind == 5 else a | b if kind == 6 else a ^ b
                c = v = 0
            res &= 0xFF
            z, n = int(res == 0), res >> 7
            if kind != 4:
                r[d] = res
        elif op >= 0xA0:                                 # alu rd, rs (second byte 00 rd rs)
            if op > 0xA7:
                cycles += 1
                continue
            t = mem[pc]
            pc = (pc + 1) & 0xFFFF
            d, s_ = t >> 3 & 7, t & 7
            a, b = r[d], r[s_]
            kind = op & 7
            cycles += 3
            if kind == 0 or kind == 1:
                res = a + b + (c if kind == 1 else 0)
                c, v = res >> 8 & 1, ((a ^ res) & (b ^ res)) >> 7 & 1
            elif kind <= 4:
                res = a - b - (c if kind == 3 else 0)
                c, v = res >> 8 & 1, ((a ^ b) & (a ^ res)) >> 7 & 1
            else:
                res = a & b if kind == 5 else a | b if kind == 6 else a ^ b
                c = v = 0
            res &= 0xFF
            z, n = int(res == 0), res >> 7
            if kind != 4:
                r[d] = res
        elif op >= 0x60:                                 # one-register ALU forms
            d = op & 7
            a = r[d]
            cycles += 2
            if group == 0x0C:                            # not
                res, c, v = ~a & 0xFF, 0, 0
            elif group == 0x0D:                          # inc
                res = (a + 1) & 0xFF
            elif group == 0x0E:                          # dec
                res = (a - 1) & 0xFF
            elif group == 0x0F:                          # shl
                res, c = (a << 1) & 0xFF, a >> 7
            elif group == 0x10:                          # shr
                res, c = a >> 1, a & 1
            elif group == 0x11:                          # rol
                res, c = ((a << 1) | c) & 0xFF, a >> 7
            elif group == 0x12:                          # ror
                res, c = (a >> 1) | (c << 7), a & 1
            else:
                cycles -= 1
                continue
            r[d] = res
            z, n = int(res == 0), res >> 7
        elif op >= 0x18:                                 # register forms with the register in the opcode
            d = op & 7
            if group == 0x03:                            # li rd, imm8
                r[d] = mem[pc]
                pc = (pc + 1) & 0xFFFF
                cycles += 2
            elif group == 0x04 or group == 0x05:         # ld rd, [addr] / st [addr], rs
                t, u = mem[pc], mem[(pc + 1) & 0xFFFF]
                pc = (pc + 2) & 0xFFFF
                if group == 0x04:
                    r[d] = mem[u << 8 | t]
                else:
                    mem[u << 8 | t] = r[d]
                cycles += 4
            elif group == 0x06:                          # ld rd, [x]
                r[d] = mem[r[6] << 8 | r[7]]
                cycles += 2
            elif group == 0x07:                          # st [x], rs
                mem[r[6] << 8 | r[7]] = r[d]
                cycles += 2
            elif group == 0x08:                          # push
                sp = (sp - 1) & 0xFFFF
                mem[sp] = r[d]
                cycles += 2
            elif group == 0x09:                          # pop
                r[d] = mem[sp]
                sp = (sp + 1) & 0xFFFF
                cycles += 2
            elif group == 0x0A:                          # in rd, port
                t = mem[pc]
                pc = (pc + 1) & 0xFFFF
                if t == 0:
                    r[d] = switches
                elif t == 1:
                    r[d] = data[position] if position < len(data) else 0
                    position += position < len(data)
                else:
                    r[d] = int(position < len(data)) if t == 2 else 0
                cycles += 3
            else:                                        # out port, rs
                t = mem[pc]
                pc = (pc + 1) & 0xFFFF
                if t == 0:
                    out.append(r[d])
                elif t == 1:
                    lamps = r[d]
                cycles += 3
        elif op >= 0x0A:                                 # conditional jumps, mov, undefined
            if op <= 0x11:
                t = mem[pc]
                pc = (pc + 1) & 0xFFFF
                flag = (z, c, n, v)[(op - 0x0A) >> 1]
                if flag != (op & 1):
                    pc = mem[pc] << 8 | t
                else:
                    pc = (pc + 1) & 0xFFFF
                cycles += 3
            elif op == 0x12:                             # mov rd, rs
                t = mem[pc]
                pc = (pc + 1) & 0xFFFF
                r[t >> 3 & 7] = r[t & 7]
                cycles += 3
            else:
                cycles += 1
        elif op >= 0x06:
            if op == 0x06:                               # li x, addr
                r[7] = mem[pc]
                r[6] = mem[(pc + 1) & 0xFFFF]
                pc = (pc + 2) & 0xFFFF
                cycles += 3
            elif op == 0x07:                             # li sp, addr
                t = mem[pc]
                sp = mem[(pc + 1) & 0xFFFF] << 8 | t
                pc = (pc + 2) & 0xFFFF
                cycles += 3
            elif op == 0x08:                             # jmp addr
                t = mem[pc]
                pc = mem[(pc + 1) & 0xFFFF] << 8 | t
                cycles += 3
            else:                                        # call addr
                t, u = mem[pc], mem[(pc + 1) & 0xFFFF]
                pc = (pc + 2) & 0xFFFF
                sp = (sp - 1) & 0xFFFF
                mem[sp] = pc >> 8
                sp = (sp - 1) & 0xFFFF
                mem[sp] = pc & 0xFF
                pc = u << 8 | t
                cycles += 5
        elif op >= 0x04:                                 # inc x / dec x
            x = ((r[6] << 8 | r[7]) + (1 if op == 0x04 else -1)) & 0xFFFF
            r[6], r[7] = x >> 8, x & 0xFF
            z = int(x == 0)
            cycles += 2
        elif op == 0x03:                                 # jmp x
            pc = r[6] << 8 | r[7]
            cycles += 2
        elif op == 0x02:                                 # ret
            t = mem[sp]
            pc = mem[(sp + 1) & 0xFFFF] << 8 | t
            sp = (sp + 2) & 0xFFFF
            cycles += 3
        elif op == 0x01:                                 # halt: a pause resumes, any other ends the run
            cycles += 2
            if (pc - 1) & 0xFFFF not in pauses:
                break
        else:                                            # nop
            cycles += 1
    registers = tuple(r) + (sp, pc, ir, t, u)
    return Outcome(registers, (z, n, c, v), bytes(out), lamps, cycles, instructions, zlib.crc32(mem))


# ----- (b) and (c) relaybench ------------------------------------------------------------

def engine(program: Program, blocks: bool) -> Outcome:
    emu = Emulator(MACHINE)
    emu.blocks.enabled = blocks
    emu.load(program.segments)
    emu.switches, emu.input_bytes = program.switches, program.input_bytes
    while True:
        stop = emu.run(max_cycles=CYCLE_CAP - emu.cycles)
        if stop.kind != "halted" or stop.address not in program.pauses:
            break
        emu.press_resume()
    registers = tuple(emu.get(name) for name in ("r0", "r1", "r2", "r3", "r4", "r5", "r6", "r7", "sp", "pc",
                                                 "ir", "t", "u"))
    flags = tuple(emu.get(name) for name in "zncv")
    return Outcome(registers, flags, bytes(emu.output), emu.lamps, emu.cycles, emu.instructions,
                   zlib.crc32(emu.memory))


WAYS = {"plain": plain_interpreter, "fused": lambda p: engine(p, False), "blocks": lambda p: engine(p, True)}


def compare(program: Program, repeat: int) -> dict[str, float]:
    """Best CPU times of each way; ``first blocks`` is the first run with blocks, which compiles them
    (later runs of the same image bind the machine's compiled blocks instead)."""
    outcomes, first = {}, {}
    for name, way in WAYS.items():
        start = time.process_time()
        outcomes[name] = way(program)
        first[name] = time.process_time() - start
    reference = outcomes["plain"]
    for name, outcome in outcomes.items():
        if outcome != reference:
            raise SystemExit(f"{program.name}: {name} disagrees with the plain interpreter:\n"
                             f"  plain: {reference}\n  {name}: {outcome}")
    best = {name: float("inf") for name in WAYS}
    for _ in range(repeat):
        for name, way in WAYS.items():
            start = time.process_time()
            way(program)
            best[name] = min(best[name], time.process_time() - start)
    return {"instructions": reference.instructions, **best, "first blocks": first["blocks"]}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--only", help="one program by file name")
    args = parser.parse_args()
    paths = sorted((ROOT / "programs" / "ref8").glob("*.asm"), key=lambda p: (p.name != "ledger.asm", p.name))
    if args.only:
        paths = [p for p in paths if p.name == args.only]
    ok = True
    print(f"{'program':<16}{'instructions':>13}{'plain/s':>12}{'fused/s':>12}{'blocks/s':>12}"
          f"{'blocks÷plain':>14}{'blocks÷fused':>14}{'first run÷plain':>17}")
    for path in paths:
        short = path.name != "ledger.asm"      # a few milliseconds each: more rounds for a steady best
        result = compare(load_program(path), args.repeat * 4 if short else args.repeat)
        count = result["instructions"]
        rate = {name: count / result[name] for name in WAYS}
        over_plain, over_fused = rate["blocks"] / rate["plain"], rate["blocks"] / rate["fused"]
        first_over_plain = result["plain"] / result["first blocks"]
        print(f"{path.name:<16}{count:>13,}{rate['plain']:>12,.0f}{rate['fused']:>12,.0f}{rate['blocks']:>12,.0f}"
              f"{over_plain:>13.2f}×{over_fused:>13.2f}×{first_over_plain:>16.2f}×")
        if path.name == "ledger.asm":
            ok &= over_plain >= LOOP_TARGET
        else:
            ok &= over_fused >= 1.0 - SHORT_NOISE
    print(f"targets: blocks ≥ {LOOP_TARGET:.0f}× plain on ledger.asm, blocks ≥ fused on the short programs "
          f"(within {SHORT_NOISE:.0%}, the noise of timing a few milliseconds): "
          f"{'met' if ok else 'NOT MET'}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
