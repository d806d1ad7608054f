"""The devices a port can have, as one table: what each does and promises.

A machine file wires port numbers to devices by name (``[ports]``); what a
device *does* is the same on every machine, so it is written down once,
here, next to the promises ``relaybench isa`` and the reference state about
it: what a read answers once the input stream is used up, and what happens
to a value wider than the device keeps. The loader takes its device names
from this table and the engine's I/O bus (``emu.engine.Ports``) calls the
table's behaviour, so a new device is one row.

Behaviour works on a *bus*: any object with the attributes ``switches``,
``lamps``, ``output`` (a bytearray), ``input_bytes``, ``input_position``,
``reads_past_end`` and ``data_mask`` (the engine's ``Ports``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

__all__ = ["PORT_DEVICES", "PortDevice", "devices_for", "output_port_bits"]


@dataclass(frozen=True)
class PortDevice:
    """One kind of device on the I/O bus."""
    name: str
    direction: str
    """``"in"`` (read by ``in(N)``) or ``"out"`` (written by ``out(N) <- …``)."""
    does: str
    at_end_of_input: str
    """What a read answers once the input stream is used up ("" when the stream does not matter)."""
    wide_values: str
    """What happens to a value wider than the device keeps; ``{bits}`` is the data width."""
    read: Callable[[object], int] | None = None
    write: Callable[[object, int], None] | None = None
    keeps_bits: int | None = None
    """How many bits of a written value an output device keeps; None: the machine's data width."""

    def takes_bits(self, data_bits: int) -> int:
        """The widest value a step may write to this device: the data bus, or more for a device that
        keeps more (the console's byte on a 4-bit machine)."""
        return max(data_bits, self.keeps_bits or data_bits)


def _read_switches(bus) -> int:
    return bus.switches & bus.data_mask


def _read_input(bus) -> int:
    if bus.input_position < len(bus.input_bytes):
        bus.input_position += 1
        return bus.input_bytes[bus.input_position - 1] & bus.data_mask
    bus.reads_past_end += 1
    return 0


def _read_input_ready(bus) -> int:
    return 1 if bus.input_position < len(bus.input_bytes) else 0


def _write_console(bus, value: int) -> None:
    bus.output.append(value & 0xFF)


def _write_lamps(bus, value: int) -> None:
    bus.lamps = value & bus.data_mask


PORT_DEVICES: dict[str, PortDevice] = {device.name: device for device in (
    PortDevice("console", "out", "appends a character to the console output", "",
               "keeps the low 8 bits (one byte)", write=_write_console, keeps_bits=8),
    PortDevice("lamps", "out", "sets the panel lamps", "",
               "keeps the low {bits} bits", write=_write_lamps),
    PortDevice("switches", "in", "reads the panel toggles", "",
               "the toggles keep the low {bits} bits", read=_read_switches),
    PortDevice("input", "in", "reads the next byte of the input stream",
               "reads 0 and counts the read (the run reports it)",
               "a byte keeps the low {bits} bits", read=_read_input),
    PortDevice("input_ready", "in", "reads 1 while input is left", "reads 0",
               "always 0 or 1", read=_read_input_ready),
)}
"""Every device, by the name a machine file's ``[ports]`` gives it.

``at_end_of_input`` is empty for a device the input stream does not touch;
``{bits}`` in ``wide_values`` stands for the machine's data width.
"""


def devices_for(direction: str) -> tuple[str, ...]:
    """The device names a port of ``direction`` (``"in"`` or ``"out"``) may have, in table order."""
    return tuple(name for name, device in PORT_DEVICES.items() if device.direction == direction)


def output_port_bits(port: int | None, ports_out: dict[int, str], data_bits: int) -> tuple[int, str]:
    """(bits, what) a step may write to output port ``port``: its device's width, or for a port
    computed by the step (``None``) the widest output device's; ``what`` names the port in messages."""
    if port is None:
        widest = max((PORT_DEVICES[d].takes_bits(data_bits) for d in ports_out.values()), default=data_bits)
        return widest, "the output port (computed by the step: the widest output device)"
    device = ports_out.get(port)
    if device is None:
        return data_bits, f"output port {port} (no device: the data bus)"
    return PORT_DEVICES[device].takes_bits(data_bits), f"output port {port} ({device})"
