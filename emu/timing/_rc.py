"""The RC formulas a relay clock stage is timed by.

Every function works on plain floats and on numpy arrays alike, so the
nominal figures and the Monte Carlo share one implementation. Units are SI
(ohms, farads, volts, seconds).
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "time_constant", "charging_voltage", "discharging_voltage",
    "time_to_charge", "time_to_discharge", "divider",
]


def time_constant(resistance, capacitance):
    """tau = R C, in seconds."""
    return resistance * capacitance


def charging_voltage(final, t, tau):
    """v(t) = V (1 - e^(-t/tau)): a capacitor charging from 0 towards ``final``."""
    return final * (1.0 - np.exp(-t / tau))


def discharging_voltage(start, t, tau):
    """v(t) = V0 e^(-t/tau): a capacitor discharging from ``start`` towards 0."""
    return start * np.exp(-t / tau)


def time_to_charge(final, target, tau):
    """t = tau ln(V / (V - v)): charging from 0 until the voltage reaches ``target``.

    Infinite where ``target`` is not below ``final``: the voltage never gets
    there, which for a relay stage means the relay never picks up and the
    clock stops.
    """
    final, target = np.asarray(final, float), np.asarray(target, float)
    reachable = final > target
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(reachable, final / np.where(reachable, final - target, 1.0), 1.0)
        t = np.where(reachable, tau * np.log(ratio), np.inf)
    return t[()] if t.ndim == 0 else t


def time_to_discharge(start, target, tau):
    """t = tau ln(V0 / v): discharging from ``start`` until it falls to ``target``.

    Zero where the start is already at or below the target.
    """
    start, target = np.asarray(start, float), np.asarray(target, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = tau * np.log(np.maximum(start / target, 1.0))
    return t[()] if t.ndim == 0 else t


def divider(source, r_series, r_load):
    """The Thevenin equivalent seen by a capacitor across ``r_load`` fed via ``r_series``.

    Returns (open-circuit voltage, equivalent resistance): the capacitor in
    parallel with a relay coil charges towards V·Rl/(Rs+Rl), not towards the
    supply, with the time constant of Rs ∥ Rl.
    """
    total = r_series + r_load
    return source * r_load / total, r_series * r_load / total
