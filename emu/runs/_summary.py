"""The text summary of a headless run, for a person at a terminal.

Built from the same report dict that ``--json`` prints, so the two views
cannot disagree. The line a builder cares about most comes first: how long
the program would take on the real machine at its nominal clock.
"""

from __future__ import annotations

from ..description import Machine

__all__ = ["format_duration", "format_rate", "format_summary"]

_UNITS = (("d", 86_400), ("h", 3_600), ("min", 60), ("s", 1))


def format_duration(seconds: float) -> str:
    """``8274`` → ``2 h 17 min 54 s``; under a minute keeps a decimal: ``12.4 s``."""
    if seconds < 60:
        text = f"{seconds:.1f}".rstrip("0").rstrip(".")
        return f"{text} s"
    remaining = round(seconds)
    parts = []
    for unit, size in _UNITS:
        count, remaining = divmod(remaining, size)
        if count or parts:
            parts.append(f"{count} {unit}")
    return " ".join(parts)


def format_rate(hz: float) -> str:
    """A clock rate without noise digits: ``5 Hz``, ``2.5 Hz``, ``1.2 kHz``."""
    if hz >= 1000:
        return f"{hz / 1000:.3g} kHz"
    return f"{hz:.3g} Hz"


def _hex(value: int, bits: int) -> str:
    return f"0x{value:0{(bits + 3) // 4}X}"


def _printable(text: str) -> str:
    """Console bytes shown so that control characters stay visible."""
    return "".join(ch if ch == "\n" or " " <= ch <= "~" else f"\\x{ord(ch):02x}" for ch in text)


def format_summary(name: str, report: dict, machine: Machine, *, halt_place: str | None,
                   max_cycles: int, dumps: list[tuple[str, int, int]] = ()) -> str:
    """The summary of one run; ``halt_place`` is ``file:line`` of the final halt if known,
    ``dumps`` the (text, start, length) of each ``--dump``."""
    addr_bits, data_bits = machine.address_bits, machine.data_bits
    pc = _hex(report["pc"], addr_bits)
    if report["status"] == "halted":
        where = f" (halt at {halt_place})" if halt_place else ""
        head = f"{name}: halted, pc {pc}{where}"
    else:
        head = f"{name}: stopped at the cycle limit of {max_cycles:,}, pc {pc} (no halt reached)"
    lines = [
        head,
        f"  time       {report['cycles']:,} cycles ≈ {format_duration(report['sim_seconds'])} "
        f"at {format_rate(machine.nominal_hz)}, {report['instructions']:,} instructions",
    ]
    pauses = report["pauses"]
    places = ", ".join(f"line {p['line']}" if p["line"] is not None else _hex(p["pc"], addr_bits)
                       for p in pauses[:8])
    more = ", …" if len(pauses) > 8 else ""
    lines.append(f"  pauses     {len(pauses)}" + (f" ({places}{more})" if pauses else ""))
    registers = "  ".join(f"{reg} {_hex(value, machine.register_width(reg))}"
                          for reg, value in report["registers"].items())
    lines.append(f"  registers  {registers}")
    lines.append("  flags      " + "  ".join(f"{flag} {value}" for flag, value in report["flags"].items()))
    lamps = report["lamps"]
    lines.append(f"  lamps      {lamps:0{data_bits}b} ({_hex(lamps, data_bits)})")
    output = report["output"]
    if output:
        lines.append(f"  console    {len(output):,} byte{'s' if len(output) != 1 else ''}:")
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
        row = f"    {_hex(start + offset, machine.address_bits)}  {words}"
        if machine.data_bits <= 8:
            pad = " " * ((per_row - len(chunk)) * 3)
            row += pad + "  " + "".join(chr(v) if 32 <= v < 127 else "." for v in chunk)
        rows.append(row)
    return rows
