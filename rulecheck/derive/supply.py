"""Derive step: the supply band and unbalance, and what the drive makes of the supply (DC bus, output voltage)."""

from __future__ import annotations

import math

from rulecheck.derive.record import Spec, default, put
from rulecheck.model import Model
from rulecheck.physics import power_electronics as pe
from rulecheck.physics import supply as sp

__all__ = ["DEFAULT_FIRING_ANGLE_MIN", "DEFAULT_FREQUENCY_TOLERANCE", "DEFAULT_VOLTAGE_TOLERANCE", "derive_drive",
           "derive_supply"]

DEFAULT_VOLTAGE_TOLERANCE = 0.10  # ±10 %: IEC 60038 supply tolerance (from memory)
DEFAULT_FREQUENCY_TOLERANCE = 0.02  # ±2 %: common practice for public grids
DEFAULT_FIRING_ANGLE_MIN = math.radians(15.0)  # smallest firing angle of a controlled bridge: common practice, 15–30°


def derive_supply(m: Model, spec: Spec) -> None:
    """Supply voltage band (given or the default) and the NEMA voltage unbalance of measured phase voltages."""
    put(m, "supply.band_declared", m.has("supply.voltage_tolerance"), "given", ("supply.voltage_tolerance",),
        "the spec gives supply.voltage_tolerance")
    default(m, "supply.voltage_tolerance", DEFAULT_VOLTAGE_TOLERANCE, "±10 % (IEC 60038 supply tolerance, from memory)")
    default(m, "supply.frequency_tolerance", DEFAULT_FREQUENCY_TOLERANCE, "±2 % (common practice for public grids)")
    v = m.get("supply.voltage")
    if v is not None:
        tol = m.get("supply.voltage_tolerance")
        put(m, "supply.voltage_min", v * (1 - tol), "tolerance", ("supply.voltage", "supply.voltage_tolerance"),
            "nominal × (1 − tolerance)")
        put(m, "supply.voltage_max", v * (1 + tol), "tolerance", ("supply.voltage", "supply.voltage_tolerance"),
            "nominal × (1 + tolerance)")
    if len(spec.items("supply", "phase_voltages")) == 3:
        phases = [spec.quantity(f"supply.phase_voltages[{k}]") for k in range(3)]
        if None not in phases:
            put(m, "supply.unbalance", sp.voltage_unbalance(*phases), "voltage_unbalance", ("supply.phase_voltages",),
                "NEMA: max deviation from average ÷ average")


def derive_drive(m: Model, spec: Spec) -> None:
    """DC bus and output voltage of an inverter, overload current, armature voltage of a DC converter."""
    kind = m.get("drive.kind")
    v, vmin, vmax = m.get("supply.voltage"), m.get("supply.voltage_min"), m.get("supply.voltage_max")
    if kind == "inverter" and v is not None:
        put(m, "drive.dc_bus_voltage", pe.dc_bus_voltage_loaded(v), "dc_bus_voltage_loaded", ("supply.voltage",),
            "3√2/π × supply voltage (six-pulse diode front end)")
        put(m, "drive.dc_bus_voltage_min", pe.dc_bus_voltage_loaded(vmin), "dc_bus_voltage_loaded",
            ("supply.voltage_min",), "3√2/π × lowest supply voltage")
        put(m, "drive.dc_bus_voltage_max", pe.dc_bus_voltage_no_load(vmax), "dc_bus_voltage_no_load",
            ("supply.voltage_max",), "√2 × highest supply voltage (no load)")
        # Drive datasheets give the output as 0…U_in: with overmodulation the drive reaches its supply voltage
        # (the no-load bus is √2·V_LL); V_dc/√2 of the linear SVPWM range understates it. A given value wins.
        put(m, "drive.output_voltage_max", v, "supply_voltage", ("supply.voltage",),
            "drive output up to the supply voltage (datasheets: 0…U_in)")
    rated, share = m.get("drive.rated_current"), m.get("drive.overload.current")
    if rated is not None and share is not None:
        put(m, "drive.overload_current", rated * share, "product", ("drive.rated_current", "drive.overload.current"),
            "rated current × overload share")
    if kind == "dc-converter":
        default(m, "drive.firing_angle_min", DEFAULT_FIRING_ANGLE_MIN, "15° (common practice, 15–30°)")
        if vmin is not None:
            put(m, "drive.armature_voltage_max",
                pe.controlled_bridge_dc_voltage(vmin, m.get("drive.firing_angle_min")),
                "controlled_bridge_dc_voltage", ("supply.voltage_min", "drive.firing_angle_min"),
                "3√2/π × lowest supply voltage × cos α_min")
