"""``relaybench check --machine FILE``: does the machine as described halt, step and resume safely?

Runs the clock and control-unit properties (P1–P7) and the assembler round
trip with hypothesis on random programs from the machine's own instruction
table and random panel actions at random cycles and phases, one line per
property; a failure shows the shrunk counterexample and the seed that
repeats it. Then the design report: where halts freeze the clock, the
longest STOP, repeating steps, what a STEP press gives. Exit 0 when no
property failed, 1 otherwise (also for a machine file that does not load).
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import sys

from ..checks import (FAILED, MACHINE_PROPERTIES, NOT_APPLICABLE, PASSED, check_property, design_report,
                      design_report_lines, failure_json, failure_lines, new_seed, reproduce_command)
from ._options import add_machine_option, keep_parser, machine_from, number, seed, usage_error
from ._progress import Progress, terminal_attached

SUMMARY = "check a machine description: halt, stop, step and resume properties, and its design report"
MAX_EXAMPLES = 100_000


def _examples(text: str) -> int:
    value = number(text)
    if not 1 <= value <= MAX_EXAMPLES:
        raise argparse.ArgumentTypeError(f"must be 1…{MAX_EXAMPLES:,} examples, not {value}")
    return value


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_machine_option(parser, default=None)
    parser.add_argument("--examples", type=_examples, default=100, metavar="N",
                        help="random examples per property (default 100)")
    parser.add_argument("--seed", type=seed, default=None, metavar="S",
                        help="seed of the random search, to repeat a run exactly (default: a new one, printed)")
    parser.add_argument("--json", action="store_true", help="print the results and the report as one JSON document")
    keep_parser(parser)


def main(args) -> int:
    if args.machine is None:
        usage_error(args, "which machine? give --machine FILE (a .toml file or a shipped machine's name)")
    machine = machine_from(args)
    chosen_seed = new_seed() if args.seed is None else args.seed
    reproduce = reproduce_command(args.machine, chosen_seed, args.examples)
    if not args.json:
        print(f"checking {machine.name} ({machine.path}): {args.examples} examples a property, seed {chosen_seed}",
              flush=True)
    results = []
    try:
        with Progress(enabled=terminal_attached() and not args.json) as progress:
            for prop in MACHINE_PROPERTIES:
                bar = progress.line(f"{prop.key} {prop.title}", args.examples, unit="examples",
                                    remove_when_done=True)
                result = check_property(prop, machine, args.examples, chosen_seed, progress=bar.update)
                bar.finish()
                results.append(result)
                if not args.json:
                    print("\n".join(_result_lines(result, machine, reproduce)), flush=True)
    except KeyboardInterrupt:
        print(f"relaybench: interrupted after {len(results)} of {len(MACHINE_PROPERTIES)} properties",
              file=sys.stderr)
        return 130
    report = design_report(machine)
    counts = {status: sum(r.status == status for r in results) for status in (PASSED, FAILED, NOT_APPLICABLE)}
    if args.json:
        print(json.dumps(_json(machine, chosen_seed, args.examples, results, report, reproduce, counts), indent=2))
    else:
        print("\ndesign report (facts of the machine as described, not pass/fail):")
        print("\n".join("  " + line for line in design_report_lines(report)))
        print(f"\n{len(results)} properties: {counts[PASSED]} passed, {counts[FAILED]} failed, "
              f"{counts[NOT_APPLICABLE]} not applicable")
    return 1 if counts[FAILED] else 0


def _result_lines(result, machine, reproduce: str) -> list[str]:
    prop = result.prop
    name = f"{prop.key:<10} {prop.title}"
    if result.status == PASSED:
        return [f"  pass  {name} ({result.examples} examples)"]
    if result.status == NOT_APPLICABLE:
        return [f"  n/a   {name}: {result.reason}"]
    return [f"  FAIL  {name} (at example {result.examples}, shrunk):",
            *failure_lines(result, machine, reproduce, indent="        ")]


def _json(machine, chosen_seed: int, examples: int, results, report, reproduce: str, counts: dict) -> dict:
    def entry(result) -> dict:
        return {"key": result.prop.key, "title": result.prop.title, "status": result.status,
                "examples": result.examples, "reason": result.reason,
                "counterexample": failure_json(result, machine, reproduce) if result.status == FAILED else None}
    return {"machine": machine.name, "file": str(machine.path), "seed": chosen_seed,
            "examples_per_property": examples, "passed": counts[FAILED] == 0,
            "counts": {"passed": counts[PASSED], "failed": counts[FAILED], "not_applicable": counts[NOT_APPLICABLE]},
            "properties": [entry(r) for r in results], "design": dataclasses.asdict(report)}
