"""Free-running speed of the engine against a hand-written interpreter.

Run:  python tests/bench/bench_engine.py [--cycles N]

The program is a long ref8 loop built from the machine description's own
encodings. The baseline is a minimal interpreter of the same instructions
written by hand the usual way (a dispatch table of small functions over a
register list), existing only here. Both run the same number of cycles in
one process and the report gives cycles/s, instructions/s and the ratio.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from emu import Emulator, load_machine  # noqa: E402

from engine_support import encode  # noqa: E402

MACHINE = load_machine("ref8")


def loop_program() -> list[int]:
    e = lambda display, **f: encode(MACHINE, display, **f)  # noqa: E731
    words = []
    words += e("li rd, imm", rd=3, imm=0)
    words += e("li x, addr", addr=0x8000)
    loop = len(words)
    words += e("add rd, rs", rd=0, rs=1)
    words += e("adc rd, imm", rd=1, imm=3)
    words += e("st [x], rs", rs=0)
    words += e("inc x")
    words += e("ld rd, [x]", rd=2)
    words += e("dec rd", rd=3)
    words += e("cmp rd, imm", rd=3, imm=0)
    jnz_at = len(words)
    words += e("jnz addr", addr=0)
    words += e("call addr", addr=0)
    call_at = len(words) - 3
    words += e("li x, addr", addr=0x8000)
    words += e("jmp addr", addr=loop)
    sub = len(words)
    words += e("push rs", rs=0)
    words += e("pop rd", rd=4)
    words += e("ret")
    words[jnz_at + 1:jnz_at + 3] = [loop & 0xFF, loop >> 8]
    words[call_at + 1:call_at + 3] = [sub & 0xFF, sub >> 8]
    return words


def handwritten_interpreter(words: list[int], cycle_limit: int) -> tuple[int, int, list[int]]:
    """The same ten instructions, interpreted by hand; returns cycles, instructions, registers."""
    mem = bytearray(65536)
    mem[:len(words)] = bytes(words)
    r = [0] * 8
    state = {"pc": 0, "sp": 0, "z": 0, "n": 0, "c": 0, "v": 0}

    def fetch():
        pc = state["pc"]
        state["pc"] = (pc + 1) & 0xFFFF
        return mem[pc]

    def flags_add(a, b, res):
        state["c"] = res >> 8 & 1
        state["v"] = ((a ^ res) & (b ^ res)) >> 7 & 1
        res &= 0xFF
        state["z"] = int(res == 0)
        state["n"] = res >> 7
        return res

    def li(op):
        r[op & 7] = fetch()
        return 2

    def li_x(op):
        r[7] = fetch()
        r[6] = fetch()
        return 3

    def add_rr(op):
        b = fetch()
        d, s = b >> 3 & 7, b & 7
        r[d] = flags_add(r[d], r[s], r[d] + r[s])
        return 3

    def adc_imm(op):
        d, b = op & 7, fetch()
        r[d] = flags_add(r[d], b, r[d] + b + state["c"])
        return 2

    def st_x(op):
        mem[r[6] << 8 | r[7]] = r[op & 7]
        return 2

    def inc_x(op):
        x = ((r[6] << 8 | r[7]) + 1) & 0xFFFF
        r[6], r[7] = x >> 8, x & 0xFF
        state["z"] = int(x == 0)
        return 2

    def ld_x(op):
        r[op & 7] = mem[r[6] << 8 | r[7]]
        return 2

    def dec(op):
        d = op & 7
        res = (r[d] - 1) & 0xFF
        r[d] = res
        state["z"], state["n"] = int(res == 0), res >> 7
        return 2

    def cmp_imm(op):
        a, b = r[op & 7], fetch()
        res = a - b
        state["c"] = res >> 8 & 1
        state["v"] = ((a ^ b) & (a ^ res)) >> 7 & 1
        res &= 0xFF
        state["z"], state["n"] = int(res == 0), res >> 7
        return 2

    def jnz(op):
        lo = fetch()
        hi = mem[state["pc"]]
        state["pc"] = (state["pc"] + 1) & 0xFFFF if state["z"] else hi << 8 | lo
        return 3

    def jmp(op):
        lo = fetch()
        state["pc"] = mem[state["pc"]] << 8 | lo
        return 3

    def call(op):
        lo, hi = fetch(), fetch()
        pc, sp = state["pc"], state["sp"]
        sp = (sp - 1) & 0xFFFF
        mem[sp] = pc >> 8
        sp = (sp - 1) & 0xFFFF
        mem[sp] = pc & 0xFF
        state["sp"], state["pc"] = sp, hi << 8 | lo
        return 5

    def push(op):
        state["sp"] = (state["sp"] - 1) & 0xFFFF
        mem[state["sp"]] = r[op & 7]
        return 2

    def pop(op):
        r[op & 7] = mem[state["sp"]]
        state["sp"] = (state["sp"] + 1) & 0xFFFF
        return 2

    def ret(op):
        sp = state["sp"]
        lo, hi = mem[sp], mem[(sp + 1) & 0xFFFF]
        state["sp"], state["pc"] = (sp + 2) & 0xFFFF, hi << 8 | lo
        return 3

    table = {}
    for display, handler in [("li rd, imm", li), ("li x, addr", li_x), ("add rd, rs", add_rr),
                             ("adc rd, imm", adc_imm), ("st [x], rs", st_x), ("inc x", inc_x),
                             ("ld rd, [x]", ld_x), ("dec rd", dec), ("cmp rd, imm", cmp_imm),
                             ("jnz addr", jnz), ("jmp addr", jmp), ("call addr", call),
                             ("push rs", push), ("pop rd", pop), ("ret", ret)]:
        ins = next(i for i in MACHINE.instructions if i.display == display)
        for word, index in enumerate(MACHINE.decode_table):
            if index == ins.index:
                table[word] = handler
    cycles = instructions = 0
    while cycles < cycle_limit:
        op = fetch()
        cycles += table[op](op)
        instructions += 1
    return cycles, instructions, r


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cycles", type=int, default=10_000_000)
    args = parser.parse_args()
    words = loop_program()

    emu = Emulator(MACHINE)
    emu.load([(0, words)])
    start = time.perf_counter()
    emu.run(max_cycles=args.cycles)
    engine_s = time.perf_counter() - start

    start = time.perf_counter()
    base_cycles, base_instructions, base_regs = handwritten_interpreter(words, args.cycles)
    base_s = time.perf_counter() - start

    check = Emulator(MACHINE)
    check.load([(0, words)])
    check.run(max_cycles=base_cycles)
    assert [check.get(f"r{i}") for i in range(8)] == base_regs, "baseline and engine disagree"

    engine_ips, base_ips = emu.instructions / engine_s, base_instructions / base_s
    print(f"program: {len(words)} words, {args.cycles:,} cycles")
    print(f"engine (fused path): {emu.cycles / engine_s:>12,.0f} cycles/s {engine_ips:>12,.0f} instructions/s")
    print(f"hand-written baseline: {base_cycles / base_s:>10,.0f} cycles/s {base_ips:>12,.0f} instructions/s")
    print(f"ratio engine / baseline: {engine_ips / base_ips:.2f}")


if __name__ == "__main__":
    main()
