"""``relaybench clock``: what rate and beat a clock built from real parts will give.

Prints the nominal figures of the phase table, the phase times the parts
give, and a Monte Carlo over the parts' tolerances (percentiles and a
histogram of the rate), and warns when the datapath's minimum pulse width
is at risk. ``--json`` gives the same as one JSON document, ``--csv`` the
figures of every built clock.
"""

from __future__ import annotations

import argparse
import io
import json
import sys

import numpy as np

from .. import MachineError
from ..files import write_atomic
from ..formatting import rate_text
from ._progress import Progress, terminal_attached
from ..timing import METRICS, PERCENTILES, has_timing, monte_carlo, timing_model
from ._options import add_machine_option, keep_parser, machine_from, number, seed, usage_error

MAX_SAMPLES = 5_000_000
HISTOGRAM_BINS = 16
HISTOGRAM_WIDTH = 40
DIGITS = {"rate_hz": ".3f", "duty": ".1f", "shortest_high_s": ".1f", "shortest_low_s": ".1f",
          "irregularity": ".2f"}


def _samples(text: str) -> int:
    value = number(text)
    if not 1 <= value <= MAX_SAMPLES:
        raise argparse.ArgumentTypeError(f"must be 1…{MAX_SAMPLES:,}, not {value}")
    return value


def add_arguments(parser: argparse.ArgumentParser) -> None:
    add_machine_option(parser)
    parser.add_argument("--samples", type=_samples, default=100_000, metavar="N",
                        help="clocks to build from random parts (default 100000)")
    parser.add_argument("--seed", type=seed, default=1, metavar="S",
                        help="seed of the random parts, for reproducible figures (default 1)")
    parser.add_argument("--csv", metavar="FILE|-", help="write each built clock's figures as CSV ('-': stdout)")
    parser.add_argument("--json", action="store_true", help="print the figures as one JSON document")
    keep_parser(parser)


def main(args) -> int:
    if args.json and args.csv == "-":
        usage_error(args, "--json and --csv - both want standard output; give --csv a file name")
    machine = machine_from(args)
    report = {"machine": machine.name, "title": machine.title, "nominal": _nominal(machine),
              "phases": _phase_rows(machine), "monte_carlo": None, "warnings": []}
    samples = None
    if has_timing(machine):
        model = timing_model(machine)
        for row, seconds in zip(report["phases"], model.nominal_phase_seconds()):
            row["parts_ms"] = float(seconds * 1e3)
        quiet = args.json or args.csv == "-" or not terminal_attached()
        samples = _run(model, args.samples, args.seed, quiet)
        report["monte_carlo"] = samples.summary()
        report["warnings"] = _warnings(samples)
    elif args.csv:
        raise MachineError("no [timing] section, so there are no built clocks to write as CSV",
                           path=machine.path)
    if args.csv:
        try:
            _write_csv(samples, args.csv)
        except OSError as exc:
            print(f"relaybench: error: cannot write {args.csv}: {exc.strerror or exc}", file=sys.stderr)
            return 1
    for warning in report["warnings"]:
        print(f"relaybench: warning: {warning}", file=sys.stderr)
    if args.json:
        print(json.dumps(report, indent=2))
    elif args.csv != "-":
        print(_text(report, samples, machine))
    return 0


# ----- figures ----------------------------------------------------------------

def _nominal(machine) -> dict:
    high = sum(p.duration_ns for p in machine.phases if p.level == 1)
    return {"rate_hz": machine.nominal_hz, "period_ms": machine.cycle_ns / machine.pulses_per_turn / 1e6,
            "turn_ms": machine.cycle_ns / 1e6, "duty": high / machine.cycle_ns}


def _phase_rows(machine) -> list[dict]:
    return [{"name": p.name, "level": p.level, "table_ms": p.duration_ns / 1e6, "hold": p.hold,
             "ring": list(p.ring)} for p in machine.phases]


def _run(model, count: int, seed: int, quiet: bool):
    """The Monte Carlo, with a progress bar on a terminal once it has taken a second."""
    with Progress(enabled=not quiet) as progress:
        bar = progress.line("building clocks from random parts", count, unit="clocks")
        return monte_carlo(model, count, seed, progress=lambda done, _total: bar.update(done))


def _warnings(samples) -> list[str]:
    warnings = []
    model = samples.model
    if samples.stalled:
        warnings.append(f"{samples.stalled / samples.samples:.2%} of built clocks stop: "
                        f"a ring stage never reaches its pick-up voltage")
    below = samples.below_min_pulse()
    if below:
        worst = samples.shortest_high_s.min() * 1e3
        warnings.append(f"the shortest high pulse falls below the datapath's minimum of "
                        f"{model.min_pulse * 1e3:g} ms in {below:.2%} of built clocks "
                        f"(down to {worst:.1f} ms)")
    return warnings


def _write_csv(samples, target: str) -> None:
    names = list(METRICS)
    phases = [p.name for p in samples.model.machine.phases]
    header = names + [f"phase_{name}_s" for name in phases]
    table = np.column_stack([samples.figure(n) for n in names] + [samples.phase_s])
    buffer = io.StringIO()
    np.savetxt(buffer, table, delimiter=",", fmt="%.9g", header=",".join(header), comments="")
    if target == "-":
        sys.stdout.write(buffer.getvalue())
    else:
        write_atomic(target, buffer.getvalue())


# ----- text -------------------------------------------------------------------

def _text(report: dict, samples, machine) -> str:
    nominal = report["nominal"]
    out = [f"{report['title']} ({report['machine']})",
           f"nominal, from the phase table: {rate_text(nominal['rate_hz'])}, period "
           f"{nominal['period_ms']:.4g} ms, duty cycle {nominal['duty']:.1%}", ""]
    timed = samples is not None
    out.append(f"  {'phase':<8}{'level':<7}{'table':>10}" + (f"{'parts':>11}  timed by" if timed else ""))
    for i, row in enumerate(report["phases"]):
        line = f"  {row['name']:<8}{'high' if row['level'] else 'low':<7}{row['table_ms']:>7.1f} ms"
        if timed:
            model = samples.model
            stage = model.stages[model.phase_stage[i]]
            how = "charging to pick-up" if model.phase_event[i] == "charge" else "discharging to drop-out"
            line += f"{row['parts_ms']:>8.1f} ms  {machine.stage_relay(stage.number)}, {how}"
        if row["hold"]:
            line += "  (hold point)"
        out.append(line.rstrip())
    if not timed:
        out += ["", "no [timing] section: describe the clock's parts to see how their tolerances spread it"]
        return "\n".join(out)
    mc = report["monte_carlo"]
    kept = samples.samples - samples.stalled
    out += ["", f"{mc['samples']:,} clocks built from parts within tolerance "
                f"(seed {mc['seed']}, {mc['spread']} spread, {mc['turns_per_sample']} turns each):"]
    out.append(f"  {'':<34}" + "".join(f"{str(p) + ' %':>9}" for p in PERCENTILES))
    for name, entry in mc["figures"].items():
        if kept:
            values = "".join(f"{entry['percentiles'][str(p)]:>9{DIGITS[name]}}" for p in PERCENTILES)
            out.append(f"  {entry['label'] + ' (' + entry['unit'] + ')':<34}{values}")
    if mc["min_pulse_ms"] is not None:
        share = mc["below_min_pulse"]
        out.append(f"  high pulses shorter than the datapath's {mc['min_pulse_ms']:g} ms: "
                   f"{share:.2%} of built clocks")
    if kept:
        out += ["", "rate (Hz):"] + _histogram(samples.rate_hz)
    return "\n".join(out)


def _histogram(values: np.ndarray) -> list[str]:
    low, high = np.percentile(values, [0.1, 99.9])
    if high <= low:
        return [f"  {low:.4g}: all {len(values):,} samples"]
    counts, edges = np.histogram(np.clip(values, low, high), bins=HISTOGRAM_BINS, range=(low, high))
    block = "█" if _can_print("█") else "#"
    peak = counts.max()
    lines = []
    for count, left, right in zip(counts, edges, edges[1:]):
        bar = block * round(HISTOGRAM_WIDTH * count / peak)
        lines.append(f"  {left:7.3f}–{right:<7.3f} {bar:<{HISTOGRAM_WIDTH}} {count / len(values):6.2%}")
    return lines


def _can_print(text: str) -> bool:
    try:
        text.encode(sys.stdout.encoding or "ascii")
    except (UnicodeEncodeError, LookupError):
        return False
    return True
