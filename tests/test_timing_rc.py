"""The RC formulas against textbook figures and worked examples.

Sources: the one-time-constant figures (63.2 % charged, 36.8 % left) are
common practice, found in any electronics primer; the reference value is
math.exp(-1) from the standard library. The 555 timer check uses the
high and low times from the NE555 data sheet (Texas Instruments), quoted
from memory: t_high = 0.693 (RA + RB) C, t_low = 0.693 RB C.
"""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from emu.timing import (charging_voltage, discharging_voltage, divider, time_constant,
                        time_to_charge, time_to_discharge)


def test_time_constant_is_r_times_c():
    # common practice: 100 kOhm and 10 uF give one second
    assert time_constant(100e3, 10e-6) == pytest.approx(1.0)
    assert time_constant(680, 470e-6) == pytest.approx(0.3196)


def test_one_tau_of_charging_reaches_63_2_percent():
    # common practice: 63.2 % of the final voltage after one time constant
    assert charging_voltage(10.0, 1.0, 1.0) == pytest.approx(6.32, abs=0.005)
    assert charging_voltage(1.0, 0.25, 0.25) == pytest.approx(1 - math.exp(-1))


def test_one_tau_of_discharging_leaves_36_8_percent():
    # common practice: 36.8 % of the starting voltage left after one time constant
    assert discharging_voltage(10.0, 2.0, 2.0) == pytest.approx(3.68, abs=0.005)
    assert discharging_voltage(1.0, 1.0, 1.0) == pytest.approx(math.exp(-1))


@pytest.mark.parametrize("taus, charged", [(2, 0.865), (3, 0.950), (5, 0.993)])
def test_charging_after_several_time_constants(taus, charged):
    # common practice: the table of 1 - e^-n every primer prints
    assert charging_voltage(1.0, taus * 0.1, 0.1) == pytest.approx(charged, abs=0.0005)


def test_555_timer_high_and_low_times():
    # NE555 data sheet (from memory): the capacitor swings between 1/3 and
    # 2/3 of the supply, charging through RA + RB, discharging through RB.
    ra, rb, c, supply = 1e3, 10e3, 10e-6, 9.0
    charging_tau = time_constant(ra + rb, c)
    t_high = time_to_charge(supply, 2 * supply / 3, charging_tau) - time_to_charge(supply, supply / 3, charging_tau)
    t_low = time_to_discharge(2 * supply / 3, supply / 3, time_constant(rb, c))
    assert t_high == pytest.approx(0.693 * (ra + rb) * c, rel=1e-3)
    assert t_low == pytest.approx(0.693 * rb * c, rel=1e-3)


def test_a_voltage_that_is_never_reached_takes_forever():
    assert time_to_charge(12.0, 12.0, 1.0) == math.inf
    assert time_to_charge(12.0, 15.0, 1.0) == math.inf
    assert time_to_discharge(3.0, 5.0, 1.0) == 0.0


def test_formulas_work_on_arrays_elementwise():
    finals = np.array([10.0, 5.0, 20.0])
    times = time_to_charge(finals, np.array([5.0, 6.0, 10.0]), 1.0)
    assert times[0] == pytest.approx(math.log(2))
    assert times[1] == math.inf
    assert times[2] == pytest.approx(math.log(2))


def test_divider_is_the_thevenin_equivalent():
    # common practice: a 100 ohm feed into a 400 ohm load from 10 V
    volts, ohms = divider(10.0, 100.0, 400.0)
    assert volts == pytest.approx(8.0)
    assert ohms == pytest.approx(80.0)


@given(final=st.floats(0.5, 100), fraction=st.floats(0.01, 0.99), tau=st.floats(1e-4, 10))
def test_time_to_charge_inverts_the_charging_curve(final, fraction, tau):
    t = time_to_charge(final, fraction * final, tau)
    assert charging_voltage(final, t, tau) == pytest.approx(fraction * final, rel=1e-9)


@given(start=st.floats(0.5, 100), fraction=st.floats(0.01, 0.99), tau=st.floats(1e-4, 10))
def test_time_to_discharge_inverts_the_discharging_curve(start, fraction, tau):
    t = time_to_discharge(start, fraction * start, tau)
    assert discharging_voltage(start, t, tau) == pytest.approx(fraction * start, rel=1e-9)
