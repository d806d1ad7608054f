"""Timing analysis: the clock ring as parts, its spread, waveforms and relay wear.

The machine description may carry a ``[timing]`` section (the parts of
each ring stage) and a ``[wear]`` section (rated relay life); the loader
checks them into ``Machine.timing`` and ``Machine.wear``, the engine does not
read them, this package works out what they imply.
"""

from ..description import PARTS, SILICON_DIODE_DROP_V, StageParts, WearRatings
from ._model import TimingModel, has_timing, timing_model
from ._montecarlo import METRICS, PERCENTILES, ClockSamples, monte_carlo
from ._rc import (charging_voltage, discharging_voltage, divider, time_constant,
                  time_to_charge, time_to_discharge)
from ._spread import SpreadClock, spread_source
from ._vcd import LARGE_BYTES, VcdRecorder, VcdWindow, control_lines, fitted_unit_ns, record_vcd, signal_name
from ._wear import WearCounter, count_wear, format_wear, relay_names, wear_ratings

__all__ = [
    "PARTS", "SILICON_DIODE_DROP_V", "StageParts", "TimingModel", "has_timing", "timing_model",
    "METRICS", "PERCENTILES", "ClockSamples", "monte_carlo",
    "charging_voltage", "discharging_voltage", "divider", "time_constant",
    "time_to_charge", "time_to_discharge",
    "SpreadClock", "spread_source",
    "LARGE_BYTES", "VcdRecorder", "VcdWindow", "control_lines", "fitted_unit_ns", "record_vcd", "signal_name",
    "WearCounter", "WearRatings", "count_wear", "format_wear", "relay_names", "wear_ratings",
]
