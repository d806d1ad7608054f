"""One way to write numbers and durations (emu.formatting), pinned with values worked by hand."""

import pytest

from emu import load_machine
from emu.formatting import (address_text, count_text, duration_text, hex_value, hours_text, rate_text,
                            size_text, word_text)

REF8 = load_machine("ref8")
ACC12 = load_machine("tests/machines/acc12.toml")


@pytest.mark.parametrize("value, bits, text", [
    (0x6E, 16, "0x006E"), (0xB, 16, "0x000B"), (0xC, 8, "0x0C"), (0xAB, 12, "0x0AB"), (1, 1, "0x1"),
])
def test_hex_has_the_digit_count_of_its_width_and_upper_case(value, bits, text):
    assert hex_value(value, bits) == text


def test_addresses_and_words_follow_the_machine():
    assert (address_text(0xB, REF8), word_text(0xB, REF8)) == ("0x000B", "0x0B")
    assert (address_text(0xB, ACC12), word_text(0xB, ACC12)) == (
        hex_value(0xB, ACC12.address_bits), hex_value(0xB, ACC12.data_bits))


@pytest.mark.parametrize("count, noun, text", [
    (31_010, None, "31,010"), (1, "cycle", "1 cycle"), (0, "check", "0 checks"), (50_000_000, "cycle", "50,000,000 cycles"),
])
def test_counts(count, noun, text):
    assert count_text(count, noun) == text


@pytest.mark.parametrize("seconds, units, text", [
    (41_370 / 5, None, "2 h 17 min 54 s"),          # 41,370 cycles at 5 Hz
    (59.96, None, "1 min 0 s"),                      # never "60 s"
    (50_000_000 / 5, None, "115 d 17 h 46 min 40 s"),
    (1_204 * 86_400 + 3 * 3_600, None, "1,204 d 3 h 0 min 0 s"),
    (7127.77 * 3_600, 2, "297 d 0 h"),               # rounded at the last unit kept
    (8274, 2, "2 h 18 min"),
])
def test_durations(seconds, units, text):
    assert duration_text(seconds, units) == text


def test_hours_are_written_as_durations():
    """Before: a relay's life as ``7,127 h`` beside a run of ``27 d 17 h``."""
    assert hours_text(556.1) == "23 d 4 h"


@pytest.mark.parametrize("value, text", [(812, "812 B"), (20_480, "20.5 kB"), (252e6, "252 MB"), (1.68e9, "1.68 GB")])
def test_sizes(value, text):
    assert size_text(value) == text


@pytest.mark.parametrize("hz, text", [(5.0, "5 Hz"), (1200.0, "1.2 kHz"), (3.4e6, "3.4 MHz")])
def test_rates(hz, text):
    assert rate_text(hz) == text


def test_the_debugger_panel_writes_time_as_every_command_does():
    """Before: the panel wrote ``7127 h 46 min 12.0 s`` where ``run`` wrote days."""
    from emu.debugger import duration_text as panel_duration
    nanoseconds = round((7127 * 3_600 + 46 * 60 + 12) * 1e9)
    assert panel_duration(nanoseconds) == duration_text(nanoseconds / 1e9) == "296 d 23 h 46 min 12 s"
