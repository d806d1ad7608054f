"""``relaybench test``: run programs and judge their ``.expect`` checks.

One line per program, then a line for each failing check with its
file:line, what was expected and what the machine held. Exit 0 when every
program passed, 1 otherwise (also when no program was found), 130 when
interrupted. The judging is in ``emu.runs``.
"""

from __future__ import annotations

import json
import sys

from ._progress import Progress, terminal_attached
from ..formatting import count_text, duration_text, hex_value
from ..errors import RelaybenchError
from ..runs import PROGRAM_SUFFIX, MachineChooser, Verdict, check_program, collect_programs
from ._options import add_machine_option, cycle_count, keep_parser, machine_from



def add_arguments(parser) -> None:
    parser.add_argument("paths", metavar="PROGRAM|DIR", nargs="+",
                        help=f"program files, or folders searched for *{PROGRAM_SUFFIX} at any depth")
    add_machine_option(parser, per_program=True)
    parser.add_argument("--max-cycles", metavar="N", type=cycle_count, default=None,
                        help="cycle limit of each program (default: its panel file's, else 50,000,000)")
    parser.add_argument("--json", action="store_true", help="print one JSON object with every verdict")
    keep_parser(parser)


def _shown(value, bits: int) -> str:
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    return f"{value} ({hex_value(value, bits)})" if value > 9 else str(value)


def _one_line(text: str) -> str:
    """A check as written, with the line ends of a string value made visible."""
    return text.replace("\\", "\\\\").replace("\n", "\\n").replace("\r", "\\r").replace("\t", "\\t")


def verdict_lines(verdict: Verdict, machine, *, name_machine: bool = False) -> list[str]:
    """The verdict's lines; ``name_machine`` adds the machine (when a batch runs on more than one)."""
    on = f" on {machine.name}" if name_machine and machine is not None else ""
    if verdict.error is not None:
        return [f"FAIL  {verdict.path}{on}: cannot run it",
                *("      " + row for row in verdict.error.splitlines())]
    time = f"{count_text(verdict.cycles, 'cycle')} ≈ {duration_text(verdict.sim_seconds)}"
    checks = f"{count_text(verdict.checks_run, 'check')} at {count_text(verdict.halts, 'halt')}"
    lines = [f"{'pass' if verdict.passed else 'FAIL'}  {verdict.path}{on}  ({checks}, {time})"]
    if verdict.status == "cycle_limit":
        lines.append(f"      ended at the cycle limit of {count_text(verdict.max_cycles)} without reaching a halt")
    if verdict.checks_defined == 0:
        lines.append("      the program has no .expect checks, so nothing was tested")
    lines.extend(f"      warning: {warning}" for warning in verdict.warnings)
    for failure in verdict.failures:
        expect = failure.expect
        bits = _item_bits(expect, machine)
        wanted = _shown(expect.value, bits) if expect.op == "==" else f"anything but {_shown(expect.value, bits)}"
        visit = f" (at halt {failure.visit} there)" if failure.visit > 1 else ""
        lines.append(f"      {expect.file}:{expect.line}: {_one_line(expect.text)}: expected {wanted}, "
                     f"got {_shown(failure.actual, bits)}{visit}")
    for expect in verdict.unreached:
        lines.append(f"      {expect.file}:{expect.line}: {_one_line(expect.text)}: never checked, the run did not "
                     f"halt at address {hex_value(expect.address, machine.address_bits)}")
    return lines


def _item_bits(expect, machine) -> int:
    """How wide the checked item is, so its hex has the machine's digit count."""
    if expect.item in ("mem", "lamps", "out"):
        return machine.data_bits
    if expect.item in machine.flags:
        return 1
    try:
        return machine.register_width(expect.item)
    except KeyError:
        return machine.data_bits


def verdict_json(verdict: Verdict, machine) -> dict:
    def place(expect):
        return {"file": expect.file, "line": expect.line, "check": expect.text}
    return {
        "path": verdict.path, "machine": machine.name if machine is not None else None,
        "passed": verdict.passed, "status": verdict.status,
        "cycles": verdict.cycles, "sim_seconds": verdict.sim_seconds,
        "checks_run": verdict.checks_run, "halts": verdict.halts,
        "failures": [{**place(f.expect), "op": f.expect.op, "expected": f.expect.value,
                      "actual": f.actual, "visit": f.visit} for f in verdict.failures],
        "unreached": [place(e) for e in verdict.unreached],
        "checks_defined": verdict.checks_defined,
        "warnings": list(verdict.warnings),
        "error": verdict.error,
    }


def main(args) -> int:
    programs = collect_programs(args.paths)
    if not programs:
        print(f"relaybench: error: no *{PROGRAM_SUFFIX} programs in {', '.join(args.paths)}", file=sys.stderr)
        return 1
    if args.machine is not None:
        machine_from(args)          # a bad --machine is the command's error, not each program's
    machines = _machines_of(programs, MachineChooser(args.machine))
    name_machines = len({m.name for m in machines.values() if not isinstance(m, str)}) > 1
    verdicts = []
    try:
        with Progress(enabled=terminal_attached() and not args.json) as progress:
            batch = progress.line("programs", len(programs), unit="programs")
            for done, path in enumerate(programs):
                bar = progress.line(path, remove_when_done=True)
                machine = machines[path]
                if isinstance(machine, str):
                    verdict, machine = Verdict(path, error=machine), None
                else:
                    verdict = check_program(path, machine, max_cycles=args.max_cycles,
                                            chunk=lambda emu: bar.update(emu.cycles))
                bar.finish()
                batch.update(done + 1)
                verdicts.append((verdict, machine))
                if not args.json:
                    print("\n".join(verdict_lines(verdict, machine, name_machine=name_machines)), flush=True)
    except KeyboardInterrupt:
        if len(verdicts) < len(programs):
            print(f"relaybench: interrupted after {len(verdicts)} of {len(programs)} programs", file=sys.stderr)
            return 130
    passed = sum(v.passed for v, _machine in verdicts)
    if args.json:
        print(json.dumps({"passed": passed, "failed": len(verdicts) - passed,
                          "programs": [verdict_json(v, m) for v, m in verdicts]}, ensure_ascii=False))
    else:
        print(f"{len(verdicts)} program{'s' if len(verdicts) != 1 else ''}: {passed} passed, "
              f"{len(verdicts) - passed} failed")
    return 0 if passed == len(verdicts) else 1


def _machines_of(programs: list[str], chooser: MachineChooser) -> dict:
    """Each program's machine, or the error text of a machine that cannot be had (that program fails)."""
    machines = {}
    for path in programs:
        try:
            machines[path] = chooser.machine_for(path)
        except RelaybenchError as exc:
            machines[path] = str(exc)
    return machines
