"""``relaybench sweep``: run one program over many inputs and check every result.

The work is in ``emu.runs`` (``SweepPlan``, ``sweep_locally``,
``sweep_on_cluster``); this module turns options into a plan and the rows
into a table, a CSV or JSON file and an exit status: 0 when every run halted
and passed its checks, 1 when a check failed or a run warned (or a bad program
or machine file), 3 when a run reached its cycle limit, 2 for a bad command line, 130
when interrupted (no file is written then).
"""

from __future__ import annotations

import csv
import io
import json
import os
import sys
import time
from pathlib import Path

from ._progress import Progress, terminal_attached
from ..errors import RelaybenchError
from ..formatting import count_text
from ..runs import (CHECK_FUNCTIONS, ProgramError, SweepPlan, SweepSpecError, check_names, chunk_bounds, compile_check,
                    load_program, operator_script_for, parse_input, parse_output, sweep_locally, sweep_on_cluster)
from ..files import write_atomic
from ._options import (add_machine_option, add_panel_options, cycle_count, keep_parser, machine_for_program,
                       panel_settings, positive, print_program_error, seed, usage_error)

EXIT_PASSED, EXIT_FAILED, EXIT_CYCLE_LIMIT, EXIT_INTERRUPTED = 0, 1, 3, 130
DEFAULT_RUN_CYCLES = 1_000_000
SHOWN_FAILURES = 10
CLUSTER_WORKER_WAIT = 10.0
"""Seconds to wait for a cluster's first worker before giving up."""


def add_arguments(parser) -> None:
    parser.add_argument("program", metavar="PROGRAM", help="assembly source, Intel HEX or raw binary")
    add_machine_option(parser, per_program=True)
    parser.add_argument("--each", metavar="NAME=VALUES", action="append", default=[],
                        help="an input and its values (repeatable): NAME is toggles, input, a register, group "
                             "or flag, or a label of the program (label:N for N words); VALUES is a list of "
                             "numbers and LOW..HIGH ranges, LOW..HIGH~N for N values drawn from the range; "
                             "for input, texts separated by |")
    parser.add_argument("--draw", metavar="N", type=positive("rows"),
                        help="run N rows drawn at random from all combinations of the inputs (default: all)")
    parser.add_argument("--seed", metavar="S", type=seed, default=0, help="seed of every random draw (default 0)")
    parser.add_argument("--collect", metavar="NAMES", action="append", default=[],
                        help="outputs, comma-separated (repeatable): registers, groups, flags, labels, "
                             "console, lamps, cycles, instructions, status")
    parser.add_argument("--check", metavar="EXPR", action="append", default=[],
                        help="a Python expression over the columns that must hold for every row (repeatable)")
    parser.add_argument("--expect", metavar="NAME=EXPR", action="append", default=[],
                        help="output NAME must equal the expression's value (repeatable)")
    parser.add_argument("--out", metavar="FILE", help="write the rows to FILE: .csv or .json (default: a table)")
    parser.add_argument("--max-cycles", metavar="N", type=cycle_count, default=DEFAULT_RUN_CYCLES,
                        help=f"cycle limit of each run (default {DEFAULT_RUN_CYCLES:,})")
    parser.add_argument("--workers", metavar="N", type=positive("worker processes"), default=os.cpu_count() or 1,
                        help="processes to run on (default: one per core)")
    parser.add_argument("--cluster", metavar="ADDRESS",
                        help="run on a dask.distributed scheduler at ADDRESS instead "
                             "(needs the 'cluster' extra: pip install 'relaybench[cluster]')")
    add_panel_options(parser)
    keep_parser(parser)


def main(args) -> int:
    try:
        machine = machine_for_program(args, args.program)
        program = load_program(args.program, machine)
        switches, data = panel_settings(args, args.program, machine)
        operator = operator_script_for(args.program, machine)
    except ProgramError as exc:
        return print_program_error(exc)
    if args.out is not None and Path(args.out).suffix.lower() not in (".csv", ".json"):
        usage_error(args, f"argument --out: '{args.out}' must end in .csv or .json")
    plan = _plan(args, machine, program, switches, data, operator)
    total = len(plan.rows)
    started = time.perf_counter()
    try:
        with Progress(enabled=terminal_attached()) as progress:
            bar = progress.line(args.program, total, unit="runs")
            if args.cluster is not None:
                with _client(args) as client:
                    rows = sweep_on_cluster(plan, client, done=bar.update)
            else:
                rows = sweep_locally(plan, args.workers, done=bar.update)
            bar.finish()
    except KeyboardInterrupt:
        print(f"relaybench: sweep interrupted before all {count_text(total, 'run')} ended; "
              f"no results written", file=sys.stderr)
        return EXIT_INTERRUPTED
    seconds = time.perf_counter() - started
    table = _table(plan, rows)
    if args.out is not None:
        try:
            write_atomic(args.out, _csv(table) if args.out.lower().endswith(".csv") else _json(args, plan, table))
        except OSError as exc:
            usage_error(args, f"argument --out: cannot write '{args.out}' ({exc.strerror or exc})")
    else:
        print(_text(table))
    print("\n".join(_summary(args, plan, rows, seconds)))
    if any(not ok for _values, _outputs, ok, _status, _warnings in rows):
        return EXIT_FAILED
    return EXIT_CYCLE_LIMIT if any(status != "halted" for _v, _o, _ok, status, _w in rows) else EXIT_PASSED


def _plan(args, machine, program, switches, data, operator) -> SweepPlan:
    """Every option checked against the machine and the program before anything runs."""
    if not args.each:
        usage_error(args, "give at least one --each NAME=VALUES (what the sweep varies)")
    option = "--each"
    try:
        inputs = tuple(parse_input(text, machine, program, args.seed) for text in args.each)
        names = [i.column for i in inputs]
        if len(set(names)) != len(names):
            raise SweepSpecError(f"an input is named twice ({', '.join(names)})")
        option = "--collect"
        wanted = [name.strip() for group in args.collect for name in group.split(",") if name.strip()]
        twice = sorted({name for name in wanted if wanted.count(name) > 1})
        if twice:
            raise SweepSpecError(f"an output is named twice ({', '.join(twice)})")
        outputs = []
        for name in wanted:
            outputs.append(parse_output(name, machine, program, set(names) | {o.column for o in outputs}))
        option = "--check"
        for name in (name for text in args.check for name in check_names(text)):
            if name not in names and name not in CHECK_FUNCTIONS and all(name != o.column for o in outputs):
                try:
                    outputs.append(parse_output(name, machine, program, set(names)))
                except SweepSpecError:
                    pass                    # not an output either: compile_check says what the columns are
        expects = []
        for name, expr in (_expect_parts(args, text) for text in args.expect):
            option = "--expect"
            output = next((o for o in outputs if name in (o.name, o.column, o.name.partition(":")[0])), None)
            if output is None:
                output = parse_output(name, machine, program, set(names) | {o.column for o in outputs})
                outputs.append(output)
            expects.append((output.column, expr))
        columns = names + [o.column for o in outputs]
        checks = [(compile_check(text, columns, "--check").text, None) for text in args.check]
        checks += [(compile_check(expr, columns, "--expect", column).text, column) for column, expr in expects]
    except SweepSpecError as exc:
        usage_error(args, exc.message if exc.message.startswith("argument") else f"argument {option}: {exc.message}")
    product = 1
    for given in inputs:
        product *= len(given.values)
    if args.draw is not None and args.draw > product:
        usage_error(args, f"argument --draw: {args.draw:,} rows asked, but the inputs make only {product:,}")
    machine_text = Path(machine.path).read_text(encoding="utf-8")
    return SweepPlan.made(machine, machine_text, program, switches=switches, input_bytes=data, inputs=inputs,
                          outputs=tuple(outputs), checks=tuple(checks), max_cycles=args.max_cycles,
                          operator=operator, draws=args.draw, seed=args.seed)


def _expect_parts(args, text: str) -> tuple[str, str]:
    name, equals, expr = text.partition("=")
    if not equals or not name.strip() or not expr.strip():
        usage_error(args, f"argument --expect: '{text}' is not NAME=EXPR (for example toll='load * rate')")
    return name.strip(), expr


class _client:
    """A dask.distributed client for ``--cluster``, closed afterwards; a usage error when dask is missing."""

    def __init__(self, args):
        self.args = args

    def __enter__(self):
        try:
            from distributed import Client
        except ImportError:
            usage_error(self.args, "argument --cluster: dask.distributed is not installed "
                                   "(pip install 'relaybench[cluster]')")
        try:
            self.client = Client(self.args.cluster, timeout="5s")
        except (OSError, TimeoutError, ValueError) as exc:
            raise RelaybenchError(f"cannot reach the cluster at {self.args.cluster} ({exc})") from None
        try:
            self.client.wait_for_workers(1, timeout=CLUSTER_WORKER_WAIT)
        except TimeoutError:
            self.client.close()
            raise RelaybenchError(f"the cluster at {self.args.cluster} has no workers "
                                  f"(waited {CLUSTER_WORKER_WAIT:g} s for one)") from None
        return self.client

    def __exit__(self, *exc):
        self.client.close()


def _table(plan: SweepPlan, rows) -> tuple[list[str], list[list]]:
    """The columns, ``ok`` (with checks, or when a run warned), ``status`` (unless collected as an
    output) and ``warnings`` (when a run warned)."""
    warned = any(warnings for *_row, warnings in rows)
    judged = bool(plan.checks) or warned
    status_collected = "status" in plan.columns
    header = plan.columns + ["ok"] * judged + ["status"] * (not status_collected) + ["warnings"] * warned
    body = [list(values) + list(outputs) + [ok] * judged + [status] * (not status_collected)
            + ["; ".join(warnings)] * warned
            for values, outputs, ok, status, warnings in rows]
    return header, body


def _check_texts(plan: SweepPlan) -> list[str]:
    """Each check as the user would read it: an ``--expect`` as ``NAME == EXPR``."""
    return [text if column is None else f"{column} == {text}" for text, column in plan.checks]


def _cell(value) -> str:
    if isinstance(value, bytes):
        return value.decode("utf-8", "replace")
    if isinstance(value, bool):
        return "yes" if value else "no"
    return str(value)


def _shown(value) -> str:
    """A cell on one line: text with its escapes (``\\n``), numbers as they are."""
    if isinstance(value, (str, bytes)):
        return _cell(value).encode("unicode_escape").decode("ascii")
    return _cell(value)


def _text(table) -> str:
    header, body = table
    shown = [[_shown(v) for v in row] for row in body]
    widths = [max([len(h)] + [len(row[k]) for row in shown]) for k, h in enumerate(header)]
    lines = ["  ".join(h.rjust(w) for h, w in zip(header, widths))]
    lines += ["  ".join(c.rjust(w) for c, w in zip(row, widths)) for row in shown]
    return "\n".join(lines)


def _csv(table) -> str:
    header, body = table
    stream = io.StringIO()
    writer = csv.writer(stream, lineterminator="\n")
    writer.writerow(header)
    writer.writerows([[_cell(v) for v in row] for row in body])
    return stream.getvalue()


def _json(args, plan: SweepPlan, table) -> str:
    header, body = table
    rows = [{h: (_cell(v) if isinstance(v, bytes) else v) for h, v in zip(header, row)} for row in body]
    return json.dumps({"program": args.program, "columns": header,
                       "checks": _check_texts(plan), "seed": plan.seed,
                       "rows": rows}, ensure_ascii=False) + "\n"


def _summary(args, plan: SweepPlan, rows, seconds: float) -> list[str]:
    runs = len(rows)
    failed = [row for row in rows if not row[2]]
    limited = sum(1 for _v, _o, _ok, status, _w in rows if status != "halted")
    warned = [warnings for *_row, warnings in rows if warnings]
    where = f"on the cluster at {args.cluster}" if args.cluster else \
        f"on {count_text(min(args.workers, len(chunk_bounds(runs, args.workers))), 'worker')}"
    lines = [f"{args.program}: {count_text(runs, 'run')} in {seconds:.2f} s {where}"
             + (f" -> {args.out}" if args.out else "")]
    if plan.checks:
        lines.append(f"  checks     {count_text(runs - len(failed))} passed, "
                     f"{count_text(len(failed) - len(warned))} failed ({'; '.join(_check_texts(plan))})")
    if warned:
        lines.append(f"  warnings   {count_text(len(warned), 'run')} warned and did not pass "
                     f"(first: {warned[0][0]})")
    if limited:
        lines.append(f"  limit      {count_text(limited, 'run')} reached the cycle limit "
                     f"({count_text(plan.max_cycles, 'cycle')}) without halting")
    names = plan.columns
    checks = [compile_check(text, names, "--check", column) for text, column in plan.checks]
    for values, outputs, _ok, status, warnings in failed[:SHOWN_FAILURES]:
        row = dict(zip(names, values + outputs))
        cells = ", ".join(f"{n}={_shown(v)}" for n, v in row.items())
        notes = ([status] if status != "halted" else []) + list(warnings)
        for check in checks:
            value = check.value(row)
            if isinstance(value, Exception):
                notes.append(f"'{check.text}' raised {type(value).__name__}: {value}")
            elif check.column is not None and not check.passes(row):
                notes.append(f"{check.column} should be {_shown(value)}")
        lines.append(f"  fail       {cells}" + (f" ({'; '.join(notes)})" if notes else ""))
    if len(failed) > SHOWN_FAILURES:
        lines.append(f"  …          and {count_text(len(failed) - SHOWN_FAILURES, 'more failure')}")
    return lines
