"""Power-electronics relations against the check values (docs/references.md) K28, K39, K40, K44 and R16/R21."""

import math

import numpy as np
import pytest

from rulecheck.physics import call_with_quantities
from rulecheck.physics import power_electronics as pe
from rulecheck.units import registry

Q = registry().Quantity
RPM = 2 * math.pi / 60


def test_k28_dc_bus_from_supply():
    # K28: six-pulse diode rectifier 3√2/π·V_LL: 400 V → 540 V (1.35 × 400), no-load 565.7 V; 440 V → 594 V.
    # K28 rounds the factor to 1.35 (exact 1.3505), so the loaded values agree to 0.04 %.
    assert pe.dc_bus_voltage_loaded(400) == pytest.approx(540.0, rel=4e-4)
    assert pe.dc_bus_voltage_loaded(440) == pytest.approx(594.0, rel=4e-4)
    assert pe.dc_bus_voltage_loaded(1.0) == pytest.approx(3 * math.sqrt(2) / math.pi, rel=1e-12)
    assert pe.dc_bus_voltage_no_load(400) == pytest.approx(565.7, abs=0.05)


def test_k44_inverter_output_voltage():
    # K44: V_dc 540 V → SVPWM 381.8 V, sine-triangle 330.7 V, six-step fundamental 421.0 V (4 figures)
    assert pe.output_voltage_max_svpwm(540) == pytest.approx(381.8, abs=0.05)
    assert pe.output_voltage_max_sine_triangle(540) == pytest.approx(330.7, abs=0.05)
    assert pe.output_voltage_six_step(540) == pytest.approx(421.0, abs=0.05)
    # docs/references.md R17: V_out,max ≈ 0.95·V_LL on a loaded six-pulse bus (3/π = 0.955)
    assert pe.output_voltage_max_svpwm(pe.dc_bus_voltage_loaded(400)) / 400 == pytest.approx(0.955, abs=5e-4)


def test_r16_output_frequency():
    # R16 and K10: a 4-pole PM motor at 1500 r/min needs exactly 50 Hz; an induction motor at 1455 r/min with
    # 45 r/min slip needs 50 Hz; at 3600 r/min + 45 r/min slip, 121.5 Hz
    assert pe.output_frequency_synchronous(1500 * RPM, 4) == pytest.approx(50.0, rel=1e-12)
    assert pe.output_frequency_induction(1455 * RPM, 4, 45 * RPM) == pytest.approx(50.0, rel=1e-12)
    assert pe.output_frequency_induction(3600 * RPM, 4, 45 * RPM) == pytest.approx(121.5, rel=1e-12)
    f = call_with_quantities(pe.output_frequency_synchronous, Q(3000, "rpm"), 8)
    assert f.to("Hz").magnitude == pytest.approx(200.0)


def test_r21_controlled_bridge():
    # R21: 1.35·V_LL·cos α; α = 0 equals the diode bridge, α = 60° halves it (cos 60° = 0.5)
    assert pe.controlled_bridge_dc_voltage(400, 0.0) == pytest.approx(pe.dc_bus_voltage_loaded(400))
    assert pe.controlled_bridge_dc_voltage(400, math.radians(60)) == pytest.approx(270.1, abs=0.05)
    v = call_with_quantities(pe.controlled_bridge_dc_voltage, Q(460, "V"), Q(30, "deg"))
    assert v.magnitude == pytest.approx(1.35 * 460 * math.cos(math.radians(30)), rel=4e-4)  # 1.35 is rounded


def test_k39_capacitor_and_resistor():
    # K39: C 2 mF from 540 to 800 V takes 348.4 J; R_max at 780 V for 10 kW is 60.84 Ω
    e = call_with_quantities(pe.capacitor_energy, Q(2, "mF"), Q(540, "V"), Q(800, "V"))
    assert e.to("J").magnitude == pytest.approx(348.4, abs=0.05)
    assert pe.braking_resistance_max(780, 10e3) == pytest.approx(60.84, abs=5e-3)
    assert pe.braking_resistor_power(780, pe.braking_resistance_max(780, 10e3)) == pytest.approx(10e3)


def test_k40_reflected_wave():
    # K40: v 150 m/µs, t_r 0.1 µs → l_c = 7.5 m; R39: beyond l_c the peak approaches 2·V_dc
    lc = call_with_quantities(pe.reflected_wave_critical_length, Q(150, "m/us"), Q(0.1, "us"))
    assert lc.to("m").magnitude == pytest.approx(7.5, rel=1e-12)
    assert pe.motor_peak_voltage(650.0, 50.0, 7.5) == pytest.approx(1300.0)
    assert pe.motor_peak_voltage(650.0, 3.75, 7.5) == pytest.approx(975.0)
    peaks = pe.motor_peak_voltage(650.0, np.array([0.0, 7.5, 100.0]), 7.5, 0.8)
    assert list(peaks) == pytest.approx([650.0, 1170.0, 1170.0])


def test_k30_part31_insulation_limit():
    # K30: NEMA MG 1 Part 31: 3.1 × 460 = 1426 V; 3.1 × 575 = 1782.5 V
    assert pe.inverter_duty_insulation_peak_limit(460) == pytest.approx(1426.0)
    assert pe.inverter_duty_insulation_peak_limit(575) == pytest.approx(1782.5)
    # a 460 V bus (√2·480 V line maximum = 679 V) doubled at a long cable stays under 1426 V
    assert pe.motor_peak_voltage(pe.dc_bus_voltage_no_load(480), 50.0, 7.5) < 1426.0
