"""The supply and drive steps against hand calculations."""

from __future__ import annotations

import pytest

from tests.derive.conftest import model_of


def test_default_band_and_dc_bus_of_a_400_v_inverter() -> None:
    # ±10 % (IEC 60038, from memory): 360–440 V; DC bus 3√2/π × 400 = 540.19 V loaded (six-pulse bridge,
    # power-electronics textbooks), √2 × 440 = 622.25 V at no load; output 0…U_in (drive datasheets): 400 V,
    # not V_dc/√2 = 381.97 V of the linear SVPWM range
    m = model_of({"supply": {"voltage": "400 V", "frequency": "50 Hz"}, "drive": {"kind": "inverter"}})
    assert (m.get("supply.voltage_min"), m.get("supply.voltage_max")) == pytest.approx((360.0, 440.0))
    assert m.get("supply.frequency_tolerance") == 0.02
    assert m.get("drive.dc_bus_voltage") == pytest.approx(540.19, abs=0.005)
    assert m.get("drive.dc_bus_voltage_max") == pytest.approx(622.25, abs=0.005)
    assert m.get("drive.output_voltage_max") == 400.0
    assert m.provenance["drive.output_voltage_max"].note == "drive output up to the supply voltage (datasheets: 0…U_in)"


def test_a_given_output_voltage_is_kept() -> None:
    # a datasheet value (here 380 V at a 400 V supply) is the drive's own statement and is never replaced
    m = model_of({"supply": {"voltage": "400 V"}, "drive": {"kind": "inverter", "output_voltage_max": "380 V"}})
    assert m.get("drive.output_voltage_max") == 380.0


def test_unbalance_from_the_parsed_phase_voltages() -> None:
    # NEMA MG 1 example: 462, 463, 455 V → average 460 V, largest deviation 5 V → 1.087 %
    m = model_of({"supply": {"voltage": "460 V", "phase_voltages": ["462 V", "463 V", "0.455 kV"]}})
    assert m.get("supply.unbalance") == pytest.approx(5 / 460, rel=1e-12)
