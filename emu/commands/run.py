"""``relaybench run``: run a program headless ("Headless runs" in emu/machines/ref8.md).

The work is in ``emu.runs``; this module only turns options into a call
and the result into the summary or the JSON object and the exit status:
0 at a halt (or at a pause with ``--stop-at-pause``), 3 at the cycle limit, 1 for a bad program or machine file,
2 for a bad command line, 130 when interrupted.
"""

from __future__ import annotations

import json
import os
import sys
from contextlib import ExitStack

from ._progress import Progress, terminal_attached
from ..runs import (DEFAULT_MAX_CYCLES, ProgramError, load_program, operator_script_for, report, run_loaded,
                    start_emulator)
from ..runs import format_summary
from ..formatting import address_text, count_text, duration_text, rate_text
from ._options import (add_machine_option, add_panel_options, check_range, cycle_count, cycle_start, keep_parser,
                       machine_for_program, memory_range, panel_settings, print_program_error, seed,
                       usage_error)


EXIT_HALTED = 0
EXIT_CYCLE_LIMIT = 3
EXIT_INTERRUPTED = 130


def add_arguments(parser) -> None:
    parser.add_argument("program", metavar="PROGRAM", help="assembly source, Intel HEX or raw binary")
    add_machine_option(parser, per_program=True)
    parser.add_argument("--max-cycles", metavar="N", type=cycle_count, default=DEFAULT_MAX_CYCLES,
                        help=f"cycle limit for the whole run (default {DEFAULT_MAX_CYCLES:,})")
    add_panel_options(parser)
    parser.add_argument("--stop-at-pause", action="store_true", help="end the run at the first pause")
    parser.add_argument("--dump", metavar="START:LEN", type=memory_range, action="append", default=[],
                        help="add a memory range to the report (repeatable)")
    parser.add_argument("--json", action="store_true", help="print one JSON object instead of the summary")
    timing = parser.add_argument_group("timing")
    timing.add_argument("--clock-spread", metavar="SEED", type=seed,
                        help="an irregular clock: phase durations drawn from the machine's [timing] "
                             "parts for one built clock (SEED picks it); results are unchanged")
    timing.add_argument("--vcd", metavar="FILE", help="write a value change dump (IEEE 1364) of the run")
    timing.add_argument("--vcd-from", metavar="CYCLE", type=cycle_start, default=0,
                        help="with --vcd: start the dump at this cycle (default 0)")
    timing.add_argument("--vcd-cycles", metavar="N", type=cycle_count,
                        help="with --vcd: dump this many cycles (default: to the end of the run)")
    timing.add_argument("--wear", action="store_true",
                        help="count relay operations and estimate how long each relay lasts")
    keep_parser(parser)



def _timing():
    """``emu.timing``, imported only for a run that uses it: it brings numpy and the waveform writer."""
    from .. import timing
    return timing


def _warn(message: str) -> None:
    print(f"relaybench: warning: {message}", file=sys.stderr, flush=True)


def main(args) -> int:
    try:
        machine = machine_for_program(args, args.program)
    except ProgramError as exc:
        return print_program_error(exc)
    if args.vcd is None and (args.vcd_from or args.vcd_cycles is not None):
        usage_error(args, "argument --vcd-from/--vcd-cycles: only with --vcd FILE")
    for dump in args.dump:
        check_range(args, "--dump", dump, machine)
    try:
        program = load_program(args.program, machine)
        switches, data = panel_settings(args, args.program, machine)
        emulator = start_emulator(program, machine, switches=switches, input_bytes=data)
        operator = operator_script_for(args.program, machine)
    except ProgramError as exc:
        return print_program_error(exc)
    timing = _timing() if args.clock_spread is not None or args.vcd is not None or args.wear else None
    if args.clock_spread is not None:
        emulator.clock_source = timing.spread_source(machine, args.clock_spread)
    try:
        with ExitStack() as observers, Progress(enabled=terminal_attached() and not args.json) as progress:
            if args.vcd is not None:
                try:
                    observers.enter_context(timing.record_vcd(emulator, args.vcd, start=args.vcd_from,
                                                       cycles=args.vcd_cycles, warn=_warn))
                except OSError as exc:
                    usage_error(args, f"argument --vcd: cannot write '{args.vcd}' ({exc.strerror or exc})")
            wear = observers.enter_context(timing.count_wear(emulator)) if args.wear else None
            bar = progress.line(args.program)
            result = run_loaded(program, machine, max_cycles=args.max_cycles,
                                stop_at_pause=args.stop_at_pause, emulator=emulator, operator=operator,
                                chunk=lambda emu: bar.update(emu.cycles))
    except KeyboardInterrupt:
        print(f"relaybench: run interrupted after {count_text(emulator.cycles, 'cycle')} "
              f"(pc {address_text(emulator.pc, machine)}); no report", file=sys.stderr)
        if args.vcd is not None and os.path.exists(args.vcd):
            print(f"relaybench: the waveform up to the interruption was kept in {args.vcd}", file=sys.stderr)
        return EXIT_INTERRUPTED
    facts = report(result, args.dump)
    wear_report = wear.report() if wear is not None else None
    if wear_report is not None:
        facts["wear"] = wear_report
    if args.json:
        print(json.dumps(facts))
    else:
        place = program.source_map.get(result.halt_address) if result.halt_address is not None else None
        spread = None if args.clock_spread is None else f"on the spread clock (seed {args.clock_spread})"
        print(format_summary(args.program, facts, machine, max_cycles=args.max_cycles, dumps=args.dump,
                             halt_place=f"{place[0]}:{place[1]}" if place else None, clock=spread))
        if args.clock_spread is not None:
            nominal = emulator.cycles / machine.nominal_hz
            print(f"  clock      the time above is for the spread clock; on the nominal clock "
                  f"({rate_text(machine.nominal_hz)}) the run takes {duration_text(nominal)}")
        if args.vcd is not None:
            window = "" if not (args.vcd_from or args.vcd_cycles) else \
                f" (cycles from {count_text(args.vcd_from)}" + \
                (f", {count_text(args.vcd_cycles, 'cycle')})" if args.vcd_cycles else " to the end)")
            print(f"  waveform   {args.vcd}{window}")
        if wear_report is not None:
            print(timing.format_wear(wear_report))
    return EXIT_CYCLE_LIMIT if result.status == "cycle_limit" else EXIT_HALTED
