"""The words of ``relaybench check PROGRAM``: a table for a person, an object for a script."""

from __future__ import annotations

from ..formatting import count_text, duration_text
from ._outcomes import difference_text
from ._program_checks import ProgramCheck

__all__ = ["report_json", "report_lines"]


def _verdict(ok: bool) -> str:
    return "pass" if ok else "FAIL"


def report_lines(check: ProgramCheck) -> list[str]:
    time = f"{count_text(check.cycles, 'cycle')} ≈ {duration_text(check.seconds)}"
    lines = [f"check {check.path} on {check.machine}  (free run: {time}, "
             f"{'ended at a halt' if check.status == 'halted' else 'ended at the cycle limit'})"]
    if check.status != "halted":
        lines.append("  the free run never reached its final halt, so there is no result to compare with")
        return lines + [f"FAIL  {check.path}"]
    lines += _panel_lines(check)
    lines += _operator_lines(check)
    lines += _placement_lines(check)
    lines += _clock_lines(check)
    lines.append(f"{_verdict(check.passed)}  {check.path}")
    return lines


def _row(part: str, ok: bool, text: str) -> str:
    return f"  {part:<17} {_verdict(ok)}  {text}"


def _panel_lines(check: ProgramCheck) -> list[str]:
    timed = check.timing_dependent
    if not timed:
        if not check.panel_reads:
            return [_row("timing", True, "no instruction reads the toggles or input-ready port while running")]
        return [_row("timing", True, f"the result does not depend on when the operator acts "
                                     f"({_harmless_reads(check)})")]
    rows = [_row("timing", False, "the result depends on when the operator acts:")]
    for read in timed:
        place = f"{read.place[0]}:{read.place[1]}" if read.place else f"address {read.address:#x}"
        rows.append(f"      {place}: {read.statement}  ({count_text(read.reads, 'read')})")
        rows.append(f"        {read.why}")
    return rows


def _harmless_reads(check: ProgramCheck) -> str:
    """What the reads that passed were: stalls on input-ready, toggles read once after a halt."""
    stalled = sorted({read.statement or f"{read.address:#x}" for read in check.panel_reads if read.stall_reads})
    told = []
    if stalled:
        told.append(f"{', '.join(stalled)} {'waits' if len(stalled) == 1 else 'wait'} for input: a stall, "
                    f"the same result at any pace")
    if any(read.device == "switches" for read in check.panel_reads):
        told.append("the toggles are read once after a halt, as the panel is meant to be")
    return "; ".join(told)


def _operator_lines(check: ProgramCheck) -> list[str]:
    if not check.interleavings:
        return [_row("operator", True, f"{count_text(check.scripts, 'script')} of STOP, STEP, RUN and RESUME: "
                                       f"the free run's result every time")]
    rows = [_row("operator", False, f"{len(check.interleavings)} of {count_text(check.scripts, 'script')} "
                                    f"changed the result:")]
    for failure in check.interleavings:
        rows.append(f"      script {failure.script}: {'; '.join(failure.actions) or 'no stop'}")
        rows.append(f"        {difference_text(failure.difference, 'in the free run', 'with the operator')}")
    return rows


def _placement_lines(check: ProgramCheck) -> list[str]:
    if check.placements is None:
        return [_row("halt placement", True, f"skipped: {check.placement_skipped}")]
    checked = len(check.placements)
    sampled = f"{checked} of {count_text(check.statements, 'statement')} (a sample)" \
        if checked < check.statements else count_text(checked, "statement")
    unsafe = check.unsafe_placements
    if not unsafe:
        return [_row("halt placement", True, f"{sampled}: a halt may go in front of each"), *_longest_delay(check)]
    rows = [_row("halt placement", False, f"{sampled}: a halt changes the result in front of {len(unsafe)}:")]
    width = max(len(f"{p.file}:{p.line}") for p in unsafe)
    for placement in unsafe:
        place = f"{placement.file}:{placement.line}"
        rows.append(f"      {place:<{width}}  {placement.statement}")
        if placement.error is not None:
            rows.append(f"      {'':<{width}}    cannot be planted: {placement.error}")
            continue
        rows.append(f"      {'':<{width}}    changes: {placement.changed}")
        rows.append(f"      {'':<{width}}    cause:   {placement.cause or 'none found in the program text'}")
    return rows


def _longest_delay(check: ProgramCheck) -> list[str]:
    """Where a planted halt stretches the run most: passed on every turn of a loop, it
    lengthens the loop's real duration (a timing loop's purpose) as much as the program's."""
    longest = max(check.placements, key=lambda p: p.extra_cycles, default=None)
    if longest is None or longest.extra_cycles <= 0:
        return []
    return [f"{'':<25}the longest delay: in front of {longest.file}:{longest.line} ({longest.statement}) the halt "
            f"adds {count_text(longest.extra_cycles, 'cycle')} ≈ {duration_text(longest.extra_seconds)} to the run"]


def _clock_lines(check: ProgramCheck) -> list[str]:
    clock = check.clock
    if clock.skipped is not None:
        return [_row("irregular clock", True, f"skipped: {clock.skipped}")]
    spread = (f"real time {duration_text(clock.fastest_seconds)} … {duration_text(clock.slowest_seconds)} "
              f"(nominal {duration_text(clock.nominal_seconds)}, spread {clock.spread:.1%})")
    if not clock.clocks:
        return [_row("irregular clock", True, f"none of {count_text(clock.drawn, 'clock')} drawn ran: their parts "
                                              f"cannot keep the ring going; see relaybench clock")]
    if not clock.differing:
        rows = [_row("irregular clock", True, f"{count_text(clock.clocks, 'clock')} built from random parts: "
                                              f"the same result; {spread}")]
    else:
        rows = [_row("irregular clock", False, f"{len(clock.differing)} of {count_text(clock.clocks, 'clock')} "
                                               f"changed the result; {spread}")]
    for seed, difference in clock.differing:
        rows.append(f"      clock seed {seed}: {difference_text(difference, 'on the nominal clock', 'on this one')}")
    return rows + _stopped_clocks(clock)


def _stopped_clocks(clock) -> list[str]:
    """A warning, not a failure: the parts' tolerances stop some clocks, whatever the program."""
    if not clock.stopped:
        return []
    return [f"{'':<25}warning: {count_text(clock.drawn, 'clock')} drawn: {clock.clocks} ran, {clock.stopped} "
            f"stop — their parts cannot keep the ring going; see relaybench clock"]


def report_json(check: ProgramCheck) -> dict:
    clock = check.clock
    return {
        "path": check.path, "machine": check.machine, "passed": check.passed,
        "status": check.status, "cycles": check.cycles, "sim_seconds": check.seconds,
        "timing": [{"file": r.place[0] if r.place else None, "line": r.place[1] if r.place else None,
                    "statement": r.statement, "address": r.address, "device": r.device, "reads": r.reads,
                    "most_between_halts": r.most_between_halts, "stall_reads": r.stall_reads,
                    "depends_on_timing": r.depends_on_timing,
                    "why": r.why if r.depends_on_timing else None} for r in check.panel_reads],
        "operator": {"scripts": check.scripts,
                     "changed": [{"script": f.script, "actions": list(f.actions), **_difference(f.difference)}
                                 for f in check.interleavings]},
        "halt_placement": {
            "statements": check.statements, "checked": len(check.placements or ()),
            "skipped": check.placement_skipped,
            "longest_delay": _delay_json(check),
            "changed": [{"file": p.file, "line": p.line, "statement": p.statement, "changes": p.changed,
                         "cause": p.cause, "error": p.error, "extra_cycles": p.extra_cycles,
                         "extra_seconds": p.extra_seconds}
                        for p in check.unsafe_placements]},
        "clock": None if clock is None else {
            "clocks": clock.clocks, "drawn": clock.drawn, "stopped": clock.stopped,
            "skipped": clock.skipped, "nominal_seconds": clock.nominal_seconds,
            "fastest_seconds": clock.fastest_seconds, "slowest_seconds": clock.slowest_seconds,
            "spread": clock.spread,
            "changed": [{"seed": seed, **_difference(d)} for seed, d in clock.differing]},
    }


def _delay_json(check: ProgramCheck) -> dict | None:
    longest = max(check.placements or (), key=lambda p: p.extra_cycles, default=None)
    if longest is None:
        return None
    return {"file": longest.file, "line": longest.line, "statement": longest.statement,
            "extra_cycles": longest.extra_cycles, "extra_seconds": longest.extra_seconds}


def _difference(difference) -> dict:
    what, expected, got = difference
    return {"what": what, "expected": _plain(expected), "got": _plain(got)}


def _plain(value):
    """A value as JSON holds it: the console's bytes as text, a source place as ``FILE:LINE``."""
    if isinstance(value, bytes):
        return value.decode("latin-1")
    if isinstance(value, tuple):
        return f"{value[0]}:{value[1]}"
    return value
