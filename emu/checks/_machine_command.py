"""``relaybench check --machine FILE``: the machine half of the check command.

Runs the clock and control-unit properties (P1–P7) and the assembler round
trip with hypothesis on random programs from the machine's own instruction
table and random panel actions at random cycles and phases, one line per
property; a failure shows the shrunk counterexample and the seed that
repeats it. Then the design report: where halts freeze the clock, the
longest STOP, repeating steps, what a STEP press gives. Returns 0 when no
property failed, 1 otherwise.
"""

from __future__ import annotations

import dataclasses
import json
import sys

from ._counterexamples import failure_json, failure_lines, reproduce_command
from ._design_report import design_report, design_report_lines
from ._machine_properties import MACHINE_PROPERTIES
from ._property_runner import FAILED, NOT_APPLICABLE, PASSED, check_property, new_seed

__all__ = ["DEFAULT_MACHINE_EXAMPLES", "check_machine_command"]

DEFAULT_MACHINE_EXAMPLES = 100


def check_machine_command(args, machine, out, progress) -> int:
    """Check ``machine`` as ``args`` say (``examples``, ``seed``, ``json``, ``machine`` as typed)."""
    examples = DEFAULT_MACHINE_EXAMPLES if args.examples is None else args.examples
    chosen_seed = new_seed() if args.seed is None else args.seed
    reproduce = reproduce_command(args.machine, chosen_seed, examples)
    if not args.json:
        print(f"checking {machine.name} ({machine.path}): {examples} examples a property, seed {chosen_seed}",
              file=out, flush=True)
    results = []
    try:
        for prop in MACHINE_PROPERTIES:
            bar = progress.line(f"{prop.key} {prop.title}", examples, unit="examples", remove_when_done=True)
            result = check_property(prop, machine, examples, chosen_seed, progress=bar.update)
            bar.finish()
            results.append(result)
            if not args.json:
                print("\n".join(_result_lines(result, machine, reproduce)), file=out, flush=True)
    except KeyboardInterrupt:
        progress.clear()
        print(f"relaybench: interrupted after {len(results)} of {len(MACHINE_PROPERTIES)} properties",
              file=sys.stderr)
        return 130
    report = design_report(machine)
    counts = {status: sum(r.status == status for r in results) for status in (PASSED, FAILED, NOT_APPLICABLE)}
    if args.json:
        print(json.dumps(_json(machine, chosen_seed, examples, results, report, reproduce, counts), indent=2),
              file=out)
    else:
        print("\ndesign report (facts of the machine as described, not pass/fail):", file=out)
        print("\n".join("  " + line for line in design_report_lines(report)), file=out)
        print(f"\n{len(results)} properties: {counts[PASSED]} passed, {counts[FAILED]} failed, "
              f"{counts[NOT_APPLICABLE]} not applicable", file=out)
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
