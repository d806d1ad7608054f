"""The work of ``relaybench check PROGRAM`` once the command line is read: run, show, exit status."""

from __future__ import annotations

import json
import sys

from ._program_checks import check_program_timing
from ._program_report import report_json, report_lines

__all__ = ["check_program_command"]


def check_program_command(args, machine, out, progress) -> int:
    """Check ``args.program`` on ``machine``; 0 when every part passed, 1 otherwise.

    ``progress`` is a ``emu.commands.Progress`` (drawn only on a terminal); each part of
    the check gets a line on it. A program that cannot be loaded raises ProgramError.
    """
    lines = {}

    def tell(part: str, done: int, total: int) -> None:
        if part not in lines:
            lines[part] = progress.line(part, total, unit="runs" if part != "halt placement" else "statements")
        lines[part].update(done)

    try:
        check = check_program_timing(args.program, machine, examples=args.examples, seed=args.seed,
                                     sample=args.sample, dumps=args.dump, max_cycles=args.max_cycles, progress=tell)
    except KeyboardInterrupt:
        progress.clear()
        where = ""
        if lines:
            part, line = list(lines.items())[-1]
            where = f" during {part} ({line.done:,} of {line.total:,} {line.unit})"
        print(f"relaybench: check interrupted{where}; no report", file=sys.stderr)
        return 130
    progress.close()
    if args.json:
        print(json.dumps({**report_json(check), "seed": args.seed, "examples": args.examples},
                         ensure_ascii=False), file=out)
    else:
        print("\n".join(report_lines(check)), file=out)
    return 0 if check.passed else 1
