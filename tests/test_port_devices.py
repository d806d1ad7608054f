"""Each port device does what its row of the one device table promises."""

from __future__ import annotations

import dataclasses
import json

import pytest

from cli_support import cli
from emu import load_machine
from emu.description import INPUT_DEVICES, OUTPUT_DEVICES, PORT_DEVICES
from emu.engine import Ports

REF8 = load_machine("ref8")        # in 0 switches, 1 input, 2 input_ready; out 0 console, 1 lamps
ACC12 = load_machine("tests/machines/acc12.toml")


def four_bit_bus() -> Ports:
    """ref8's wiring on a 4-bit data bus, to see what a device does with a wider value."""
    return Ports(dataclasses.replace(REF8, data_bits=4))


def test_input_reads_the_stream_then_0_and_counts_each_read_past_the_end():
    bus = Ports(REF8)
    bus.input_bytes = b"AB"
    assert [bus.read(1) for _ in range(4)] == [0x41, 0x42, 0, 0]
    assert bus.reads_past_end == 2
    assert bus.warnings() == ["2 reads past the end of the input stream (2 bytes), answered with 0"]


def test_input_ready_reads_1_while_input_is_left_then_0_and_counts_nothing():
    bus = Ports(REF8)
    bus.input_bytes = b"x"
    assert bus.read(2) == 1
    bus.read(1)
    assert [bus.read(2), bus.read(2)] == [0, 0]
    assert bus.reads_past_end == 0 and bus.warnings() == []


def test_switches_read_the_toggles():
    bus = Ports(REF8)
    bus.switches = 0x2A
    assert bus.read(0) == 0x2A


def test_console_and_lamps_take_what_is_written():
    bus = Ports(REF8)
    for value in b"hi":
        bus.write(0, value)
    bus.write(1, 0x81)
    assert bytes(bus.output) == b"hi" and bus.lamps == 0x81


def test_values_wider_than_a_device_keeps_are_masked():
    """Lamps, switches and input keep data_bits bits; the console keeps a byte."""
    bus = four_bit_bus()
    bus.write(1, 0x5A)
    assert bus.lamps == 0xA
    bus.switches = 0x37
    assert bus.read(0) == 0x7
    bus.input_bytes = b"\x9c"
    assert bus.read(1) == 0xC
    wide = Ports(ACC12)
    wide.write(0, 0x341)
    assert bytes(wide.output) == b"A"


def test_a_port_without_a_device_reads_0_and_is_counted():
    bus = Ports(REF8)
    assert bus.read(9) == 0
    bus.write(7, 1)
    assert bus.warnings() == ["1 read from port 9, which has no device", "1 write to port 7, which has no device"]


def test_the_loader_takes_its_device_names_from_the_table():
    assert set(INPUT_DEVICES) | set(OUTPUT_DEVICES) == set(PORT_DEVICES)
    assert INPUT_DEVICES == ("switches", "input", "input_ready")
    for name, device in PORT_DEVICES.items():
        assert (device.read is not None) == (device.direction == "in"), name
        assert (device.write is not None) == (device.direction == "out"), name


@pytest.mark.parametrize("shown", [
    "  in    1  input        reads the next byte of the input stream; past the end of input it "
             "reads 0 and counts the read (the run reports it); wider: a byte keeps the low 8 bits",
    "  out   1  lamps        sets the panel lamps; wider: keeps the low 8 bits",
])
def test_isa_lists_the_ports_with_their_devices(capsys, shown):
    code, out, _err = cli(capsys, "isa", "--brief")
    assert code == 0
    assert shown in out.splitlines()


def test_isa_json_lists_the_ports(capsys):
    code, out, _err = cli(capsys, "isa", "--json")
    ports = json.loads(out)["ports"]
    assert {"direction": "in", "port": 2, "device": "input_ready"} in ports and len(ports) == 5
