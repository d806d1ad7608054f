"""The text summary of a headless run, for a person at a terminal.

Built from the same report dict that ``--json`` prints, so the two views
cannot disagree. The line a builder cares about most comes first: how long
the program would take on the real machine at its nominal clock.
"""

from __future__ import annotations

from ..description import Machine
from ..formatting import address_text, count_text, duration_text, hex_value, rate_text, word_text

__all__ = ["format_summary", "pause_place"]


def _printable(text: str) -> str:
    """Console bytes shown so that control characters stay visible."""
    return "".join(ch if ch == "\n" or " " <= ch <= "~" else f"\\x{ord(ch):02x}" for ch in text)


def pause_place(pause: dict, program_path: str, machine: Machine) -> str:
    """Where a pause of the report stands: ``line 22`` in the program itself,
    ``lib/io.inc:12`` in an included file, the address when no line is known."""
    if pause.get("line") is None:
        return address_text(pause["pc"], machine)
    if pause.get("file") in (None, program_path):
        return f"line {pause['line']}"
    return f"{pause['file']}:{pause['line']}"


def format_summary(name: str, report: dict, machine: Machine, *, halt_place: str | None,
                   max_cycles: int, dumps: list[tuple[str, int, int]] = (), clock: str | None = None) -> str:
    """The summary of one run; ``halt_place`` is ``file:line`` of the final halt or
    pause if known, ``dumps`` the (text, start, length) of each ``--dump``, ``clock``
    the clock the time was taken on when it is not the nominal one."""
    pc = address_text(report["pc"], machine)
    where = f" ({{}} at {halt_place})" if halt_place else ""
    if report["status"] == "halted":
        head = f"{name}: halted, pc {pc}{where.format('halt')}"
    elif report["status"] == "paused":
        head = f"{name}: stopped at a pause (--stop-at-pause), pc {pc}{where.format('pause')}"
    else:
        head = f"{name}: stopped at the cycle limit of {count_text(max_cycles)}, pc {pc} (no halt reached)"
    lines = [
        head,
        f"  time       {count_text(report['cycles'], 'cycle')} ≈ {duration_text(report['sim_seconds'])} "
        f"{clock or 'at ' + rate_text(machine.nominal_hz)}, {count_text(report['instructions'], 'instruction')}",
    ]
    pauses = report["pauses"]
    places = ", ".join(pause_place(p, name, machine) for p in pauses[:8])
    more = ", …" if len(pauses) > 8 else ""
    lines.append(f"  pauses     {len(pauses)}" + (f" ({places}{more})" if pauses else ""))
    registers = "  ".join(f"{reg} {hex_value(value, machine.register_width(reg))}"
                          for reg, value in report["registers"].items())
    lines.append(f"  registers  {registers}")
    lines.append("  flags      " + "  ".join(f"{flag} {value}" for flag, value in report["flags"].items()))
    lamps = report["lamps"]
    lines.append(f"  lamps      {lamps:0{machine.data_bits}b} ({word_text(lamps, machine)})")
    output = report["output"]
    if output:
        lines.append(f"  console    {count_text(len(output), 'byte')}:")
        body = _printable(output)
        lines.extend(f"    | {row}" for row in body.split("\n")[: -1 if body.endswith("\n") else None])
    else:
        lines.append("  console    (nothing)")
    for text, start, _length in dumps:
        lines.append(f"  dump {text}:")
        lines.extend(_dump_rows(start, report["dumps"][text], machine))
    warnings = report["warnings"]
    lines.append(f"  warnings   {len(warnings) or 'none'}")
    lines.extend(f"    - {w}" for w in warnings)
    return "\n".join(lines)


def _dump_rows(start: int, values: list[int], machine: Machine) -> list[str]:
    per_row = 16 if machine.data_bits <= 8 else 8
    digits = (machine.data_bits + 3) // 4
    rows = []
    for offset in range(0, len(values), per_row):
        chunk = values[offset:offset + per_row]
        words = " ".join(f"{v:0{digits}X}" for v in chunk)
        row = f"    {address_text(start + offset, machine)}  {words}"
        if machine.data_bits <= 8:
            pad = " " * ((per_row - len(chunk)) * 3)
            row += pad + "  " + "".join(chr(v) if 32 <= v < 127 else "." for v in chunk)
        rows.append(row)
    return rows
