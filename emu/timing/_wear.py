"""Relay wear: how often each relay operates, and how long it will last.

A ring-stage relay operates each time the ring lights its stage; the relay
of a control line operates on every pulse whose micro-step drives that
line (a gated line: on every pulse where its condition let it through).
The engine keeps the counts on both of its paths (``Emulator.count_lines``),
so a counted run goes as fast as the fast path allows. From the counts of one run, the number of operations per clock pulse
gives the operations per hour of use at the machine's nominal rate, and
the rated mechanical life from the ``[wear]`` section gives the hours each
relay lasts. The relays that wear out first come first in the report.
"""

from __future__ import annotations

import math
from contextlib import contextmanager

from .. import Emulator
from ..description import Machine, WearRatings
from ..formatting import hours_text

__all__ = ["WearCounter", "WearRatings", "count_wear", "wear_ratings", "format_wear",
           "relay_names"]


def relay_names(machine: Machine) -> list[str]:
    """The relays that wear can be counted for: ring stages, then control lines."""
    return machine.relay_names()


def wear_ratings(machine: Machine) -> WearRatings:
    """The machine's checked ``[wear]`` section (no section: life unknown)."""
    return machine.wear


class WearCounter:
    """Counts operations of every relay while attached to an emulator.

    Built from the emulator, so a stage already lit when counting starts
    is not counted until it lights again.
    """

    def __init__(self, emu: Emulator):
        self.machine = emu.machine
        self.tally = emu.count_lines()

    @property
    def counts(self) -> dict[str, int]:
        """Operations per relay: the ring stages, then the control lines."""
        return self.tally.counts()

    @property
    def pulses(self) -> int:
        return self.tally.pulses()

    def report(self) -> dict:
        """A JSON-able dict: per relay its count, rate and life, soonest worn first."""
        machine = self.machine
        ratings = wear_ratings(machine)
        pulses = self.pulses
        per_hour_factor = machine.nominal_hz * 3600 / pulses if pulses else 0.0
        relays = []
        for name, count in self.counts.items():
            if not count:
                continue
            per_hour = count * per_hour_factor
            life = ratings.life(name)
            hours = life / per_hour if life is not None and per_hour else None
            relays.append({"relay": name, "operations": count, "per_pulse": count / pulses,
                           "per_hour": per_hour, "rated_operations": life, "life_hours": hours})
        relays.sort(key=lambda r: (r["life_hours"] is None, r["life_hours"] or 0, -r["operations"], r["relay"]))
        timed = [r for r in relays if r["life_hours"] is not None]
        first = [r["relay"] for r in timed if math.isclose(r["life_hours"], timed[0]["life_hours"])]
        return {"machine": machine.name, "pulses": pulses, "nominal_hz": machine.nominal_hz,
                "relays": relays, "wears_first": first,
                "rated_life_known": ratings.default is not None or bool(ratings.relays)}


@contextmanager
def count_wear(emu: Emulator):
    """Count relay operations of whatever the emulator does inside the ``with`` block."""
    counter = WearCounter(emu)
    try:
        yield counter
    finally:
        emu.stop_counting_lines()


def format_wear(report: dict, top: int = 10) -> str:
    """The report as text for the terminal: the ``top`` soonest-worn relays."""
    if not report["pulses"]:
        return "relay wear: no clock pulses were run"
    lines = [f"relay wear over {report['pulses']:,} pulses, extrapolated at the nominal "
             f"{report['nominal_hz']:g} Hz:",
             f"  {'relay':<14}{'operations':>12}{'per hour':>12}{'rated life':>14}{'lasts':>14}"]
    for r in report["relays"][:top]:
        life = "unknown" if r["rated_operations"] is None else f"{r['rated_operations']:,.0f}"
        lasts = "?" if r["life_hours"] is None else hours_text(r["life_hours"])
        lines.append(f"  {r['relay']:<14}{r['operations']:>12,}{r['per_hour']:>12,.0f}{life:>14}{lasts:>14}")
    hidden = len(report["relays"]) - top
    if hidden > 0:
        lines.append(f"  … and {hidden} more")
    if report["wears_first"]:
        worst = report["relays"][0]
        lines.append(f"wears first: {', '.join(report['wears_first'])} "
                     f"(rated life reached after {hours_text(worst['life_hours'])} of use)")
    else:
        lines.append("no rated life in the machine file ([wear] rated_operations), so no life estimate")
    return "\n".join(lines)

