"""The derive stage: from a validated spec, the drive-train model an engineer would work out by hand.

Every value the spec gives is copied in as ``given``; every value an engineer
would derive and the spec does not give is computed by a physics method and
recorded with its inputs, or set to a stated default. Given values that can
also be derived are *not* overwritten: the rules compare the two (a nameplate
that contradicts itself is a finding).

Paths of derived values, and their kinds, are listed in :data:`DERIVED`, the
catalogue rule expressions may use (``rulecheck rules lint`` checks against it).
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np

from rulecheck.load import Document
from rulecheck.model import Model
from rulecheck.physics import dynamics as dyn
from rulecheck.physics import loads as ld
from rulecheck.physics import machines as mc
from rulecheck.physics import power_electronics as pe
from rulecheck.physics import supply as sp
from rulecheck.physics import transmission as tr
from rulecheck.schema import Quantities, fields

__all__ = ["DERIVED", "build_model"]

TWO_PI = 2.0 * math.pi
G_N = 9.80665  # standard gravity, 3rd CGPM (1901)

# path → (kind or None for flags/counts, meaning) of every value the derive stage may add
DERIVED: dict[str, tuple[str | None, str]] = {
    "supply.voltage_min": ("voltage", "lowest supply voltage: nominal × (1 − tolerance)"),
    "supply.voltage_max": ("voltage", "highest supply voltage: nominal × (1 + tolerance)"),
    "supply.voltage_tolerance": ("fraction", "declared voltage band (default ±10 %, IEC 60038 from memory)"),
    "supply.frequency_tolerance": ("fraction", "declared frequency band (default ±2 %, common practice)"),
    "supply.band_declared": ("flag", "the spec declares its supply voltage band (rather than the default)"),
    "supply.unbalance": ("fraction", "voltage unbalance, NEMA definition"),
    "drive.dc_bus_voltage": ("voltage", "DC bus of a six-pulse diode front end at nominal supply, loaded"),
    "drive.dc_bus_voltage_min": ("voltage", "DC bus at the lowest supply voltage, loaded"),
    "drive.dc_bus_voltage_max": ("voltage", "DC bus at the highest supply voltage, no load (√2·V_LL)"),
    "drive.output_voltage_max": ("voltage", "highest fundamental output voltage at nominal supply (SVPWM linear)"),
    "drive.overload_current": ("current", "short-time overload current"),
    "drive.armature_voltage_max": ("voltage", "highest armature voltage of a controlled bridge"),
    "drive.firing_angle_min": ("angle", "smallest firing angle of the bridge (default 15°)"),
    "motor.rated_torque": ("torque", "rated torque from rated power and rated speed"),
    "motor.rated_torque_from_nameplate": ("torque", "rated power ÷ rated speed, for the cross-check"),
    "motor.pole_pairs": (None, "poles ÷ 2"),
    "motor.synchronous_speed": ("rotational_speed", "120·f/p"),
    "motor.slip": ("fraction", "(n_s − n_N)/n_s"),
    "motor.poles_inferred": (None, "2·floor(60·f/n_N)"),
    "motor.base_speed": ("rotational_speed", "speed at which the drive's voltage limit is reached"),
    "motor.magnetising_current": ("current", "no-load current (default 35 % of rated, common practice)"),
    "motor.electrical_output": ("power", "√3·V·I·cosφ·η"),
    "motor.implied_efficiency": ("fraction", "P_N/(√3·V·I·cosφ)"),
    "motor.back_emf_constant_ll_rms": ("back_emf_constant", "Ke normalised to line-to-line RMS per rad/s"),
    "motor.torque_constant_from_emf": ("torque_constant", "Kt = √3·Ke (sinusoidal PM machine)"),
    "motor.rated_back_emf": ("voltage", "DC: E_N = V_aN − I_aN·R_a − V_br"),
    "motor.brush_drop": ("voltage", "DC: brush drop (default 2 V, common practice)"),
    "motor.efficiency_class_limit": ("fraction", "IEC 60034-30-1 limit for the declared class"),
    "motor.max_speed_effective": ("rotational_speed", "lowest of the motor's and the driven train's speed limits"),
    "transmission.ratio": (None, "1 for direct coupling"),
    "transmission.efficiency": ("fraction", "1 for direct coupling"),
    "transmission.reverse_efficiency": ("fraction", "equal to the forward efficiency for gear stages"),
    "load.speed_max": ("rotational_speed", "from line speed and pulley, drum or winder core"),
    "load.speed_min": ("rotational_speed", "lowest load speed"),
    "load.torque_running": ("torque", "load torque at speed_max from the load model"),
    "load.torque_max": ("torque", "largest continuous load torque over the speed range"),
    "load.speed_at_torque_max": ("rotational_speed", "load speed where the load torque is largest"),
    "load.power_running": ("power", "load power at speed_max"),
    "load.mass_inertia": ("inertia", "inertia of linear masses at the load shaft"),
    "load.gravity": ("flag", "gravity acts on the load (hoist, incline, vertical axis)"),
    "load.rope_force": ("force", "hoist: force in one rope fall"),
    "load.holding_torque": ("torque", "torque needed at the load shaft to hold the load at rest"),
    "load.lowering_power": ("power", "hoist: power returned while lowering at line speed"),
    "load.overhauling": ("flag", "the load can drive the motor (lowering, downhill, braking)"),
    "train.ratio": (None, "motor speed ÷ load speed"),
    "train.speed_max": ("rotational_speed", "highest motor speed in operation"),
    "train.speed_min": ("rotational_speed", "lowest continuous motor speed"),
    "train.load_torque": ("torque", "running load torque referred to the motor shaft"),
    "train.inertia_load": ("inertia", "load inertia referred to the motor shaft"),
    "train.inertia_total": ("inertia", "total inertia at the motor shaft"),
    "train.inertia_ratio": (None, "referred load inertia ÷ motor inertia"),
    "train.holding_torque": ("torque", "torque at the motor shaft to hold the load at rest"),
    "train.acceleration_torque": ("torque", "J_tot·ω_max/t_acc"),
    "train.peak_torque_required": ("torque", "largest torque the motor must give"),
    "train.speed_at_peak": ("rotational_speed", "motor speed where the largest torque is needed"),
    "train.continuous_torque_required": ("torque", "continuous (RMS) torque the motor must give"),
    "train.continuous_margin": (None, "smallest T_cont(n)/T_req(n) over the continuous speed range"),
    "train.continuous_speed_worst": ("rotational_speed", "motor speed of the smallest continuous margin"),
    "train.continuous_required_worst": ("torque", "required torque at that speed"),
    "train.continuous_capability_worst": ("torque", "continuous capability at that speed"),
    "train.output_frequency_required": ("frequency", "drive output frequency at the highest motor speed"),
    "train.back_emf_at_max": ("voltage", "PM: line-to-line RMS back-EMF at the highest speed"),
    "train.speed_abs_max": ("rotational_speed", "highest speed the shaft can reach (overspeed, runaway)"),
    "train.ucg_voltage": ("voltage", "PM: rectified back-EMF at the highest reachable speed (cold magnets)"),
    "train.armature_voltage_required": ("voltage", "DC: E(n_max) + I_a·R_a + V_br"),
    "train.motor_current_required": ("current", "motor current at the continuous (RMS) torque"),
    "train.motor_current_peak": ("current", "motor current at the peak torque"),
    "train.gear_output_torque": ("torque", "nominal torque at the gearbox output"),
    "train.gear_output_torque_peak": ("torque", "peak torque at the gearbox output"),
    "train.gear_input_speed_max": ("rotational_speed", "highest gearbox input speed"),
    "train.acceleration_time": ("time", "time to reach speed_max with the available torque"),
    "duty.peak_torque": ("torque", "largest |T| over the duty cycle at the motor shaft"),
    "duty.speed_at_peak": ("rotational_speed", "motor speed at the peak torque"),
    "duty.rms_torque": ("torque", "thermally equivalent torque (standstill cooling reduced)"),
    "duty.mean_abs_torque": ("torque", "time mean of |T|"),
    "duty.cycle_time": ("time", "cycle time"),
    "duty.standstill_time": ("time", "time at standstill per cycle"),
    "duty.on_time": ("time", "time the motor is loaded per cycle"),
    "duty.cdf": ("fraction", "cyclic duration factor on ÷ (on + off)"),
    "duty.max_speed": ("rotational_speed", "highest motor speed of the cycle"),
    "duty.regenerative_energy": ("energy", "energy returned by the motor per cycle"),
    "duty.peak_braking_power": ("power", "largest regenerative power"),
    "duty.utilisation": (None, "speed-aware thermal utilisation U of the continuous capability"),
    "duty.holding_at_standstill": ("flag", "torque is held at standstill during the cycle"),
    "duty.standstill_torque": ("torque", "largest torque held at standstill"),
    "site.motor_derating": ("fraction", "motor output factor for altitude and ambient"),
    "site.drive_derating": ("fraction", "drive current factor for altitude and ambient"),
    "site.derating_default_used": ("flag", "a common-practice default was used for the site derating"),
    "cable.voltage_drop": ("fraction", "voltage drop of the motor cable at rated current (Annex G)"),
    "cable.critical_length": ("length", "cable length above which reflections double the voltage"),
    "cable.motor_peak_voltage": ("voltage", "estimated peak voltage at the motor terminals"),
    "protection.full_load_current": ("current", "NEC Table 430.250 full-load current"),
}


# Further derive steps live in topic modules; each exports DERIVED (same form) and derive(model, data, base).
EXTENSIONS = ("rulecheck.derive_machines", "rulecheck.derive_installation")


def _extensions() -> list[Any]:
    import importlib

    modules = []
    for name in EXTENSIONS:
        try:
            modules.append(importlib.import_module(name))
        except ModuleNotFoundError as exc:
            if exc.name != name:
                raise
    return modules


for _module in _extensions():
    DERIVED.update(_module.DERIVED)


def _given(model: Model, doc: Document, q: Quantities) -> None:
    values, kinds = q.values, q.kinds
    for parts, value, node, path in fields(doc.data):
        if not parts or "[" in path:
            continue
        if path in values:
            model.given(path, values[path], kinds[path])
        elif isinstance(value, (bool, int, float, str)) and "x-dimension" not in node and "properties" not in node:
            model.given(path, value)


def _default(model: Model, path: str, value: Any, note: str) -> None:
    model.derive(path, value, DERIVED.get(path, (None,))[0], "default", note=note, source="default")


def _d(model: Model, path: str, value: Any, method: str, inputs: tuple[str, ...], note: str = "") -> None:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return
    model.derive(path, value, DERIVED[path][0], method, inputs, note)


def build_model(doc: Document, q: Quantities, base_dir: Path | None = None) -> Model:
    """Return the drive-train model of a loaded spec, with derived values and their provenance."""
    model = Model()
    _given(model, doc, q)
    data = doc.data if isinstance(doc.data, dict) else {}
    # the site factors come before the train and duty cycle: the motor's capability depends on them
    steps = [_supply, _drive, _motor, _transmission, _load, _site, _train, _duty, _cable_protection]
    steps += [module.derive for module in _extensions()]
    for step in steps:
        try:
            step(model, data, base_dir)
        except (ValueError, ZeroDivisionError, OverflowError, FloatingPointError) as exc:
            name = getattr(step, "__module__", "") + "." + step.__name__.strip("_")
            model.notes.append(f"{name}: could not derive every value ({exc})")
    return model


def _supply(m: Model, data: dict[str, Any], base: Path | None) -> None:
    _d(m, "supply.band_declared", m.has("supply.voltage_tolerance"), "given", ("supply.voltage_tolerance",),
       "the spec gives supply.voltage_tolerance")
    _default(m, "supply.voltage_tolerance", 0.10, "±10 % (IEC 60038 supply tolerance, from memory)")
    _default(m, "supply.frequency_tolerance", 0.02, "±2 % (common practice for public grids)")
    v = m.get("supply.voltage")
    if v is not None:
        tol = m.get("supply.voltage_tolerance")
        _d(m, "supply.voltage_min", v * (1 - tol), "tolerance", ("supply.voltage", "supply.voltage_tolerance"),
           "nominal × (1 − tolerance)")
        _d(m, "supply.voltage_max", v * (1 + tol), "tolerance", ("supply.voltage", "supply.voltage_tolerance"),
           "nominal × (1 + tolerance)")
    phases = (data.get("supply") or {}).get("phase_voltages")
    if isinstance(phases, list) and len(phases) == 3:
        from rulecheck.units import QuantityError, parse_quantity

        try:
            va, vb, vc = (parse_quantity(p, "voltage") for p in phases)
            _d(m, "supply.unbalance", sp.voltage_unbalance(va, vb, vc), "voltage_unbalance",
               ("supply.phase_voltages",), "NEMA: max deviation from average ÷ average")
        except QuantityError:
            pass


def _drive(m: Model, data: dict[str, Any], base: Path | None) -> None:
    kind = m.get("drive.kind")
    v, vmin, vmax = m.get("supply.voltage"), m.get("supply.voltage_min"), m.get("supply.voltage_max")
    if kind == "inverter" and v is not None:
        _d(m, "drive.dc_bus_voltage", pe.dc_bus_voltage_loaded(v), "dc_bus_voltage_loaded", ("supply.voltage",),
           "3√2/π × supply voltage (six-pulse diode front end)")
        _d(m, "drive.dc_bus_voltage_min", pe.dc_bus_voltage_loaded(vmin), "dc_bus_voltage_loaded",
           ("supply.voltage_min",), "3√2/π × lowest supply voltage")
        _d(m, "drive.dc_bus_voltage_max", pe.dc_bus_voltage_no_load(vmax), "dc_bus_voltage_no_load",
           ("supply.voltage_max",), "√2 × highest supply voltage (no load)")
        # at nominal supply: the datasheet's output voltage, when given, replaces this estimate
        _d(m, "drive.output_voltage_max", pe.output_voltage_max_svpwm(m.get("drive.dc_bus_voltage")),
           "output_voltage_max_svpwm", ("drive.dc_bus_voltage",), "V_dc ÷ √2 (SVPWM linear range, nominal supply)")
    rated, share = m.get("drive.rated_current"), m.get("drive.overload.current")
    if rated is not None and share is not None:
        _d(m, "drive.overload_current", rated * share, "product", ("drive.rated_current", "drive.overload.current"),
           "rated current × overload share")
    if kind == "dc-converter":
        _default(m, "drive.firing_angle_min", math.radians(15.0), "15° (common practice, 15–30°)")
        if vmin is not None:
            _d(m, "drive.armature_voltage_max",
               pe.controlled_bridge_dc_voltage(vmin, m.get("drive.firing_angle_min")),
               "controlled_bridge_dc_voltage", ("supply.voltage_min", "drive.firing_angle_min"),
               "3√2/π × lowest supply voltage × cos α_min")


def _motor(m: Model, data: dict[str, Any], base: Path | None) -> None:
    kind = m.get("motor.kind")
    p, n = m.get("motor.rated_power"), m.get("motor.rated_speed")
    if p is not None and n is not None and n > 0:
        torque = mc.torque_from_power(p, n)
        _d(m, "motor.rated_torque_from_nameplate", torque, "torque_from_power",
           ("motor.rated_power", "motor.rated_speed"), "rated power ÷ rated speed")
        _d(m, "motor.rated_torque", torque, "torque_from_power", ("motor.rated_power", "motor.rated_speed"),
           "rated power ÷ rated speed")
    poles, f = m.get("motor.poles"), m.get("motor.rated_frequency")
    if isinstance(poles, int) and poles > 0:
        _d(m, "motor.pole_pairs", poles // 2 if poles % 2 == 0 else poles / 2, "poles", ("motor.poles",),
           "poles ÷ 2")
    if kind in ("induction", "pm-synchronous") and isinstance(poles, int) and poles > 0 and f is not None:
        ns = mc.synchronous_speed(f, poles)
        _d(m, "motor.synchronous_speed", ns, "synchronous_speed", ("motor.rated_frequency", "motor.poles"),
           "120·f/p")
        if kind == "induction" and n is not None:
            _d(m, "motor.slip", (ns - n) / ns, "slip", ("motor.synchronous_speed", "motor.rated_speed"),
               "(n_s − n_N)/n_s")
    if kind in ("induction", "pm-synchronous") and f is not None and n is not None and n > 0:
        _d(m, "motor.poles_inferred", mc.poles_from_rated_speed(n, f), "poles_from_rated_speed",
           ("motor.rated_speed", "motor.rated_frequency"), "2·floor(60·f/n_N)")
    if n is not None:
        base_speed = n
        vn, vout = m.get("motor.rated_voltage"), m.get("drive.output_voltage_max")
        if kind == "induction" and vn and vout and vout < vn:
            base_speed = n * vout / vn
            _d(m, "motor.base_speed", base_speed, "voltage_limit",
               ("motor.rated_speed", "drive.output_voltage_max", "motor.rated_voltage"),
               "rated speed × V_out,max ÷ V_N (the drive cannot reach rated voltage)")
        else:
            _d(m, "motor.base_speed", base_speed, "rated_speed", ("motor.rated_speed",), "rated speed")
    i_n = m.get("motor.rated_current")
    if kind == "induction" and i_n is not None:
        _default(m, "motor.magnetising_current", 0.35 * i_n, "35 % of rated current (common practice)")
    v, pf, eff = m.get("motor.rated_voltage"), m.get("motor.power_factor"), m.get("motor.efficiency")
    if kind in ("induction", "pm-synchronous") and None not in (v, i_n, pf, eff):
        phases = 1 if m.get("supply.phases") == 1 and m.get("drive.kind") in ("direct-on-line", "soft-starter") \
            else 3
        out = (mc.three_phase_output_power(v, i_n, pf, eff) if phases == 3
               else mc.single_phase_output_power(v, i_n, pf, eff))
        _d(m, "motor.electrical_output", out, "three_phase_output_power",
           ("motor.rated_voltage", "motor.rated_current", "motor.power_factor", "motor.efficiency"),
           "√3·V·I·cosφ·η" if phases == 3 else "V·I·cosφ·η")
        if p is not None:
            imp = (mc.implied_efficiency_three_phase(p, v, i_n, pf) if phases == 3
                   else mc.implied_efficiency_single_phase(p, v, i_n, pf))
            _d(m, "motor.implied_efficiency", imp, "implied_efficiency",
               ("motor.rated_power", "motor.rated_voltage", "motor.rated_current", "motor.power_factor"),
               "P_N ÷ (√3·V·I·cosφ)")
    if kind == "dc":
        va, ia, ra = m.get("motor.armature_voltage"), m.get("motor.armature_current"), m.get(
            "motor.armature_resistance")
        _default(m, "motor.brush_drop", 2.0, "2 V (common practice)")
        if va is None and v is not None:
            va = v
        if None not in (va, ia, ra):
            _d(m, "motor.rated_back_emf", mc.dc_back_emf_from_terminal(va, ia, ra, m.get("motor.brush_drop")),
               "dc_back_emf_from_terminal", ("motor.armature_voltage", "motor.armature_current",
                                              "motor.armature_resistance", "motor.brush_drop"),
               "V_aN − I_aN·R_a − V_br")
    ke = m.get("motor.back_emf_constant")
    if kind == "pm-synchronous" and ke is not None:
        convention = m.get("motor.back_emf_convention")
        if convention is None:
            m.notes.append("motor.back_emf_convention not given: line-to-line RMS assumed")
            convention = "line-to-line-rms"
        ke_ll = mc.back_emf_constant_line_rms(ke, convention)
        _d(m, "motor.back_emf_constant_ll_rms", ke_ll, "back_emf_constant_line_rms",
           ("motor.back_emf_constant", "motor.back_emf_convention"),
           f"Ke as line-to-line RMS ({convention} given" + (")" if m.get("motor.back_emf_convention") else
                                                            ", assumed)"))
        _d(m, "motor.torque_constant_from_emf", mc.torque_constant_from_back_emf(ke_ll),
           "torque_constant_from_back_emf", ("motor.back_emf_constant_ll_rms",), "Kt = √3·Ke (sinusoidal)")
    cls = m.get("motor.efficiency_class")
    if cls and p is not None and isinstance(poles, int):
        limit = mc.efficiency_class_limit(cls, p, poles, f or 50.0)
        if limit is not None:
            _d(m, "motor.efficiency_class_limit", limit, "efficiency_class_limit",
               ("motor.efficiency_class", "motor.rated_power", "motor.poles", "motor.rated_frequency"),
               "IEC 60034-30-1 limit for the declared class")


def _transmission(m: Model, data: dict[str, Any], base: Path | None) -> None:
    if "transmission" not in data:
        _default(m, "transmission.ratio", 1.0, "direct coupling (no transmission given)")
        _default(m, "transmission.efficiency", 1.0, "direct coupling (no transmission given)")
    eff, kind = m.get("transmission.efficiency"), m.get("transmission.kind")
    if eff is not None and kind != "worm" and not m.get("transmission.self_locking"):
        _d(m, "transmission.reverse_efficiency", eff, "equal", ("transmission.efficiency",),
           "taken equal to the forward efficiency (gear stages, common practice)")


def _load(m: Model, data: dict[str, Any], base: Path | None) -> None:
    model = m.get("load.model")
    v = m.get("load.line_speed")
    reeving = m.get("load.reeving") or 1
    if model == "conveyor" and v is not None and m.get("load.pulley_diameter"):
        _d(m, "load.speed_max", ld.pulley_speed(v, m.get("load.pulley_diameter")), "pulley_speed",
           ("load.line_speed", "load.pulley_diameter"), "line speed ÷ (π × pulley diameter)")
    elif model == "hoist" and v is not None and m.get("load.drum_diameter"):
        _d(m, "load.speed_max", ld.hoist_drum_speed(v, m.get("load.drum_diameter"), reeving), "hoist_drum_speed",
           ("load.line_speed", "load.drum_diameter", "load.reeving"), "reeving × line speed ÷ (π × drum diameter)")
    elif model == "constant-power" and v is not None and m.get("load.diameter_min"):
        _d(m, "load.speed_max", ld.winder_speed(v, m.get("load.diameter_min")), "winder_speed",
           ("load.line_speed", "load.diameter_min"), "line speed ÷ (π × core diameter)")
    elif model == "lead-screw" and v is not None and m.get("load.lead"):
        _d(m, "load.speed_max", ld.lead_screw_speed(v, m.get("load.lead")), "lead_screw_speed",
           ("load.line_speed", "load.lead"), "line speed ÷ lead")
    elif model == "points":
        pts = _points(data)
        if pts:
            _d(m, "load.speed_max", max(s for s, _ in pts), "points", ("load.points",), "highest point speed")
    if model == "constant-power" and v is not None and m.get("load.diameter_max"):
        _d(m, "load.speed_min", ld.winder_speed(v, m.get("load.diameter_max")), "winder_speed",
           ("load.line_speed", "load.diameter_max"), "line speed ÷ (π × full roll diameter)")
    torque_fn = _load_torque_function(m, data)
    if torque_fn is not None:
        m.functions["load_torque"] = torque_fn
    nmax = m.get("load.speed_max")
    if torque_fn is not None and nmax is not None:
        inputs = tuple(k for k in m.values if k.startswith("load.") and m.provenance[k].source == "given")[:6]
        _d(m, "load.torque_running", float(torque_fn(nmax)), f"load model {model}", inputs,
           f"{model} load model at speed_max")
        nmin = m.get("load.speed_min", 0.0)
        # 33 speeds as numpy.linspace gives them, as plain floats (numpy's overhead exceeds the work here)
        speeds = dyn.linear_grid(nmin, nmax, 33)
        torques = [float(torque_fn(s)) for s in speeds]
        k = _numpy_arg(max, [abs(t) for t in torques])
        _d(m, "load.torque_max", torques[k], f"load model {model}", inputs,
           "largest load torque between speed_min and speed_max")
        _d(m, "load.speed_at_torque_max", speeds[k], f"load model {model}", inputs,
           "load speed at the largest load torque")
        _d(m, "load.power_running", float(torque_fn(nmax)) * nmax, "power_from_torque",
           ("load.torque_running", "load.speed_max"), "torque × speed")
    mass = m.get("load.mass")
    if model == "conveyor" and mass and m.get("load.pulley_diameter"):
        r = m.get("load.pulley_diameter") / 2
        _d(m, "load.mass_inertia", mass * r * r, "reflected_inertia_of_mass_on_radius",
           ("load.mass", "load.pulley_diameter"), "m·r² (belt and material at the pulley)")
    elif model == "hoist" and mass and m.get("load.drum_diameter"):
        r = m.get("load.drum_diameter") / 2 / reeving
        moving = mass + (m.get("load.counterweight") or 0.0)
        _d(m, "load.mass_inertia", moving * r * r, "reflected_inertia_of_mass_on_radius",
           ("load.mass", "load.counterweight", "load.drum_diameter", "load.reeving"),
           "m·(r/reeving)² (payload and counterweight at the drum)")
    elif model == "lead-screw" and m.get("load.moving_mass") and m.get("load.lead"):
        _d(m, "load.mass_inertia", tr.reflected_inertia_of_mass_on_screw(m.get("load.moving_mass"), m.get("load.lead")),
           "reflected_inertia_of_mass_on_screw", ("load.moving_mass", "load.lead"), "m·(L/2π)²")
    incline = m.get("load.incline", 0.0)
    gravity = bool(m.get("load.vertical")) or model == "hoist" or (model == "conveyor" and abs(incline) > 0)
    _d(m, "load.gravity", gravity, "load model", ("load.model", "load.incline", "load.vertical"),
       "hoist, inclined conveyor or declared vertical load")
    if model == "hoist" and mass and m.get("load.drum_diameter"):
        cw = m.get("load.counterweight") or 0.0
        _d(m, "load.rope_force", ld.hoist_rope_force(mass, reeving, cw), "hoist_rope_force",
           ("load.mass", "load.reeving", "load.counterweight"), "(m − m_cw)·g ÷ reeving")
        _d(m, "load.holding_torque", ld.hoist_drum_torque(mass, m.get("load.drum_diameter"), reeving, cw),
           "hoist_drum_torque", ("load.mass", "load.drum_diameter", "load.reeving", "load.counterweight"),
           "rope force × drum radius")
        if v is not None and m.get("load.efficiency") is not None:
            _d(m, "load.lowering_power", ld.hoist_lowering_power(mass, v, m.get("load.efficiency"), cw),
               "hoist_lowering_power", ("load.mass", "load.line_speed", "load.efficiency"), "m·g·v·η")
    elif model == "conveyor" and mass and m.get("load.pulley_diameter") and incline > 0:
        mu = m.get("load.friction_coefficient") or 0.0
        # at rest friction holds the belt back: the drive must hold the downhill pull less friction
        pull = mass * G_N * (math.sin(incline) - mu * math.cos(incline))
        _d(m, "load.holding_torque", max(pull, 0.0) * m.get("load.pulley_diameter") / 2, "conveyor_force",
           ("load.mass", "load.incline", "load.friction_coefficient", "load.pulley_diameter"),
           "m·g·(sin θ − μ·cos θ) × pulley radius (runback pull)")
    elif model == "lead-screw" and m.get("load.vertical") and m.get("load.thrust") and m.get("load.lead"):
        _d(m, "load.holding_torque", m.get("load.thrust") * m.get("load.lead") / TWO_PI, "lead_screw_torque",
           ("load.thrust", "load.lead"), "F·L/2π (without friction, conservative)")
    segments = [seg for seg in (data.get("load") or {}).get("duty") or [] if isinstance(seg, dict)]
    overhauling = model == "hoist" or any(str(seg.get("torque") or "").strip().startswith("-") for seg in segments)
    _d(m, "load.overhauling", overhauling, "load model", ("load.model", "load.duty"),
       "hoist lowering or negative load torque in the duty cycle")


def _points(data: dict[str, Any]) -> list[tuple[float, float]]:
    from rulecheck.units import QuantityError, parse_quantity

    out = []
    for pt in (data.get("load") or {}).get("points") or []:
        try:
            out.append((parse_quantity(pt["speed"], "rotational_speed"), parse_quantity(pt["torque"], "torque")))
        except (QuantityError, KeyError, TypeError):
            return []
    return sorted(out)


def _numpy_arg(pick: Any, values: list[float]) -> int:
    """Return the index numpy.argmax (``pick`` max) or numpy.argmin (min) gives: the first NaN, else the first
    largest (smallest) value."""
    for j, x in enumerate(values):
        if x != x:
            return j
    return pick(range(len(values)), key=values.__getitem__)


def _load_torque_function(m: Model, data: dict[str, Any]) -> Any:
    model = m.get("load.model")
    if model == "constant-torque" and m.has("load.torque"):
        t = m.get("load.torque")
        return lambda n: t
    if model == "quadratic" and m.has("load.torque_at_speed_max", "load.speed_max"):
        t, nmax, tb = m.get("load.torque_at_speed_max"), m.get("load.speed_max"), m.get("load.breakaway_torque", 0.0)
        return lambda n: ld.quadratic_torque(n, t, nmax, 0.0) if n > 0 else max(tb, 0.0)
    if model == "conveyor" and m.has("load.mass", "load.pulley_diameter"):
        force = ld.conveyor_force(m.get("load.mass"), m.get("load.incline", 0.0),
                                  m.get("load.friction_coefficient") or 0.0)
        eff = m.get("load.efficiency") or 1.0
        t = ld.pulley_torque(force, m.get("load.pulley_diameter")) / eff
        return lambda n: t
    if model == "hoist" and m.has("load.mass", "load.drum_diameter"):
        t = ld.hoist_drum_torque(m.get("load.mass"), m.get("load.drum_diameter"), m.get("load.reeving") or 1,
                                 m.get("load.counterweight") or 0.0) / (m.get("load.efficiency") or 1.0)
        return lambda n: t
    if model == "lead-screw" and m.has("load.thrust", "load.lead", "load.screw_efficiency"):
        t = ld.lead_screw_torque(m.get("load.thrust"), m.get("load.lead"), m.get("load.screw_efficiency"))
        return lambda n: t
    if model == "constant-power" and m.has("load.tension", "load.line_speed", "load.diameter_min",
                                           "load.diameter_max"):
        tension, v = m.get("load.tension"), m.get("load.line_speed")
        dmin, dmax = m.get("load.diameter_min"), m.get("load.diameter_max")

        def winder(n: float) -> float:
            # the roll diameter that gives this speed at the line speed, within the roll's range
            d = min(max(v / (math.pi * n / TWO_PI) if n > 0 else dmax, dmin), dmax)
            return ld.winder_torque(tension, d)

        return winder
    if model == "points":
        pts = _points(data)
        if pts:
            return ld.points_interpolator([s for s, _ in pts], [t for _, t in pts])
    return None


# the cooling table as arrays, made once: n/n_b, and k_cool for an inverter-rated motor and for one that is not
_COOLING_TABLE = np.asarray(mc._COOLING_SPEED_RATIO, dtype=float)
_COOLING_VALUES = {rated: np.asarray((*mc._COOLING_FACTOR[:-1], 1.0 if rated else
                                      mc._COOLING_FACTOR_NOT_INVERTER_RATED), dtype=float) for rated in (True, False)}


def _cooling_factors(ratio: Any, inverter_rated: bool, ct_limit: float | None) -> Any:
    """Return k_cool for an array of speed ratios n/n_b, as mc.self_ventilated_cooling_factor does for one."""
    cool = np.interp(ratio, _COOLING_TABLE, _COOLING_VALUES[bool(inverter_rated)])
    cool = np.where(ratio < mc._COOLING_SPEED_RATIO[0], mc._COOLING_NEAR_STANDSTILL, cool)
    if ct_limit is not None:
        cool = np.where(ratio >= ct_limit, 1.0, cool)
    return cool


def _capability(m: Model) -> Any:
    """Return T_cont(ω) [N*m] of the motor (cooling, field weakening, site derating), or None."""
    tn, nb = m.get("motor.rated_torque"), m.get("motor.base_speed")
    if tn is None or not nb:
        return None
    kind = m.get("motor.kind")
    cooling = m.get("motor.cooling", "self-ventilated")
    ct_min = m.get("motor.constant_torque_speed_min")
    on_inverter = m.get("drive.kind") in ("inverter", "dc-converter")
    ct_limit = 0.0 if cooling in ("forced", "liquid") else (ct_min / nb if ct_min is not None else None)
    inverter_rated = bool(m.get("motor.inverter_rated", False))
    k_env = m.get("site.motor_derating", 1.0)
    stall = m.get("motor.stall_torque")

    def cap(w: Any) -> Any:
        w = np.abs(np.asarray(w, dtype=float))
        ratio = w / nb
        if kind == "pm-synchronous" or kind == "dc" or not on_inverter:
            cool = np.ones_like(ratio)
            if kind == "pm-synchronous" and stall is not None:
                # servo motors: continuous torque falls from stall torque T0 to rated torque at rated speed
                base = stall + (tn - stall) * np.minimum(ratio, 1.0)
                return np.where(ratio <= 1.0, base, tn / np.maximum(ratio, 1e-9)) * k_env
        else:
            cool = _cooling_factors(ratio, inverter_rated, ct_limit)
        torque = tn * cool
        above = ratio > 1.0
        if above.any():  # field weakening; below base speed k_fw is 1.0, and a product with 1.0 is the same number
            torque = torque * np.where(above, 1.0 / np.maximum(ratio, 1e-9), 1.0)
        return torque * k_env

    def at(w: float) -> float:
        """T_cont at one speed, on plain floats: ``cap``'s arithmetic in the same order, so the same value."""
        ratio = abs(float(w)) / nb
        if kind == "pm-synchronous" or kind == "dc" or not on_inverter:
            cool = 1.0
            if kind == "pm-synchronous" and stall is not None:
                base = stall + (tn - stall) * min(ratio, 1.0)
                return (base if ratio <= 1.0 else tn / max(ratio, 1e-9)) * k_env
        else:
            cool = mc.self_ventilated_cooling_factor(ratio, inverter_rated, ct_limit)
        fw = 1.0 / max(ratio, 1e-9) if ratio > 1.0 else 1.0
        return tn * cool * fw * k_env

    cap.at = at  # type: ignore[attr-defined]
    return cap


def _train(m: Model, data: dict[str, Any], base: Path | None) -> None:
    i = m.get("transmission.ratio")
    eff = m.get("transmission.efficiency")
    if i is None:
        return
    _d(m, "train.ratio", i, "ratio", ("transmission.ratio",), "motor speed ÷ load speed")
    nmax, nmin = m.get("load.speed_max"), m.get("load.speed_min")
    if nmax is not None:
        _d(m, "train.speed_max", nmax * i, "ratio", ("load.speed_max", "transmission.ratio"), "load speed_max × i")
        _d(m, "train.gear_input_speed_max", nmax * i, "ratio", ("load.speed_max", "transmission.ratio"),
           "load speed_max × i")
    if nmin is not None:
        _d(m, "train.speed_min", nmin * i, "ratio", ("load.speed_min", "transmission.ratio"), "load speed_min × i")
    tl = m.get("load.torque_running")
    if tl is not None and eff:
        _d(m, "train.load_torque", tr.motor_torque_motoring(tl, i, eff), "motor_torque_motoring",
           ("load.torque_running", "transmission.ratio", "transmission.efficiency"), "T_L ÷ (i·η)")
        _d(m, "train.gear_output_torque", tl, "load", ("load.torque_running",), "running load torque")
    hold = m.get("load.holding_torque")
    if hold is not None:
        rev = m.get("transmission.reverse_efficiency", eff)
        _d(m, "train.holding_torque", hold * (rev or 1.0) / i, "motor_torque_overhauling",
           ("load.holding_torque", "transmission.ratio", "transmission.reverse_efficiency"), "T_hold·η_rev ÷ i")
    jl = (m.get("load.inertia") or 0.0) + (m.get("load.mass_inertia") or 0.0)
    if m.has("load.inertia") or m.has("load.mass_inertia"):
        _d(m, "train.inertia_load", tr.reflected_inertia(jl, i), "reflected_inertia",
           ("load.inertia", "load.mass_inertia", "transmission.ratio"), "J_L ÷ i²")
    jm = m.get("motor.inertia")
    if jm is not None and m.has("train.inertia_load"):
        total = jm + m.get("train.inertia_load") + (m.get("transmission.inertia") or 0.0) + (
            m.get("motor.brake.inertia") or 0.0)
        _d(m, "train.inertia_total", total, "sum",
           ("motor.inertia", "train.inertia_load", "transmission.inertia", "motor.brake.inertia"),
           "J_m + J_brake + J_gear + J_L ÷ i²")
        _d(m, "train.inertia_ratio", m.get("train.inertia_load") / jm, "inertia_ratio",
           ("train.inertia_load", "motor.inertia"), "referred load inertia ÷ motor inertia")
    kind = m.get("motor.kind")
    wmax = m.get("train.speed_max")
    if wmax is not None:
        poles = m.get("motor.poles")
        if kind == "induction" and isinstance(poles, int) and m.has("motor.synchronous_speed", "motor.rated_speed"):
            slip_speed = m.get("motor.synchronous_speed") - m.get("motor.rated_speed")
            _d(m, "train.output_frequency_required", pe.output_frequency_induction(wmax, poles, slip_speed),
               "output_frequency_induction", ("train.speed_max", "motor.poles", "motor.slip"),
               "pole pairs × (n_max + n_slip) ÷ 60")
        elif kind == "pm-synchronous" and isinstance(poles, int):
            _d(m, "train.output_frequency_required", pe.output_frequency_synchronous(wmax, poles),
               "output_frequency_synchronous", ("train.speed_max", "motor.poles"), "pole pairs × n_max ÷ 60")
        ke = m.get("motor.back_emf_constant_ll_rms")
        if ke is not None:
            _d(m, "train.back_emf_at_max", mc.back_emf_at_speed(ke, wmax), "back_emf_at_speed",
               ("motor.back_emf_constant_ll_rms", "train.speed_max"), "Ke × n_max")
        # the shaft may exceed operating speed: runaway of an overhauling load, or the motor's own limit
        candidates = [wmax * 1.1]
        if m.get("load.runaway_speed") is not None:
            candidates.append(m.get("load.runaway_speed") * i)
        _d(m, "train.speed_abs_max", max(candidates), "overspeed",
           ("train.speed_max", "load.runaway_speed"), "largest of 1.1 × n_max (overspeed trip) and runaway speed")
        if ke is not None:
            _d(m, "train.ucg_voltage", mc.uncontrolled_generation_voltage(ke, m.get("train.speed_abs_max")),
               "uncontrolled_generation_voltage", ("motor.back_emf_constant_ll_rms", "train.speed_abs_max"),
               "√2 × Ke × n_abs,max × 1.05 (cold magnets)")
        limits = [x for x in (m.get("motor.max_speed"), m.get("transmission.input_speed_max"),
                              m.get("load.speed_limit") * i if m.get("load.speed_limit") else None) if x]
        if limits:
            _d(m, "motor.max_speed_effective", min(limits), "minimum",
               ("motor.max_speed", "transmission.input_speed_max", "load.speed_limit"),
               "lowest speed limit of motor, gearbox and driven machine")
    if kind == "dc" and wmax is not None and m.has("motor.rated_back_emf", "motor.rated_speed"):
        e = mc.dc_back_emf_at_speed(m.get("motor.rated_back_emf"), m.get("motor.rated_speed"),
                                    min(wmax, m.get("motor.rated_speed")))
        ia = m.get("motor.armature_current")
        ra = m.get("motor.armature_resistance")
        if ia is not None and ra is not None:
            # above base speed the field is weakened, so E stays at its rated value
            _d(m, "train.armature_voltage_required", mc.dc_armature_voltage(e, ia, ra, m.get("motor.brush_drop")),
               "dc_armature_voltage", ("motor.rated_back_emf", "train.speed_max", "motor.armature_current",
                                       "motor.armature_resistance", "motor.brush_drop"),
               "E(n_max) + I_a·R_a + V_br at rated armature current")
    jt, tacc = m.get("train.inertia_total"), m.get("load.acceleration_time")
    if jt is not None and tacc and wmax is not None:
        _d(m, "train.acceleration_torque", dyn.acceleration_torque(jt, wmax, tacc), "acceleration_torque",
           ("train.inertia_total", "train.speed_max", "load.acceleration_time"), "J_tot × ω_max ÷ t_acc")
    _continuous(m)


def _continuous(m: Model) -> None:
    """Worst continuous margin over the operating speed range, at the motor shaft."""
    cap = _capability(m)
    fn_inputs = ("motor.rated_torque", "motor.base_speed", "motor.cooling", "load.speed_min", "load.speed_max")
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    nmax = m.get("load.speed_max")
    if cap is None or not i or not eff or nmax is None:
        return
    nmin = m.get("load.speed_min", nmax)
    data_fn = m.functions.get("load_torque")
    if data_fn is None:
        if m.get("load.torque_running") is None:
            return
        t = m.get("load.torque_running")

        def data_fn(n: float) -> float:
            return t
    # 25 speeds as numpy.linspace gives them, on plain floats: numpy's overhead exceeds the work here
    speeds = dyn.linear_grid(nmin, nmax, 25)
    required = [abs(float(data_fn(s))) / (i * eff) for s in speeds]
    capability = [cap.at(s * i) for s in speeds]
    margins = [c / max(r, 1e-12) if r > 0 else math.inf for c, r in zip(capability, required, strict=True)]
    k = _numpy_arg(min, margins)
    if not math.isfinite(margins[k]):
        return
    _d(m, "train.continuous_margin", margins[k], "continuous_margin", fn_inputs,
       "smallest T_cont(n) ÷ T_req(n) between speed_min and speed_max")
    _d(m, "train.continuous_speed_worst", speeds[k] * i, "continuous_margin", fn_inputs,
       "motor speed of the smallest margin")
    _d(m, "train.continuous_required_worst", required[k], "continuous_margin", fn_inputs,
       "T_L ÷ (i·η) at that speed")
    _d(m, "train.continuous_capability_worst", capability[k], "continuous_margin", fn_inputs,
       "T_N × k_cool × k_fw × k_env at that speed")


def _duty(m: Model, data: dict[str, Any], base: Path | None) -> None:
    load = data.get("load") or {}
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    jt = m.get("train.inertia_total")
    tl = m.get("train.load_torque")
    reduction = None
    if isinstance(load.get("duty"), list) and i and eff:
        from rulecheck.units import QuantityError, parse_quantity

        segments = []
        speed = 0.0
        try:
            for seg in load["duty"]:
                duration = parse_quantity(seg["duration"], "time")
                to = parse_quantity(seg["speed_to"], "rotational_speed") * i
                if "torque" in seg:
                    t_load = parse_quantity(seg["torque"], "torque")
                    t_motor = tr.motor_torque_for_power_flow(t_load, max(abs(speed), abs(to)) or 1.0, i, eff)
                elif tl is not None:
                    t_motor = tl if (speed or to) else (m.get("train.holding_torque") or 0.0)
                else:
                    return
                segments.append(dyn.Segment(duration, speed, to, t_motor, jt or 0.0))
                speed = to
        except (QuantityError, KeyError, TypeError):
            return
        if not segments:
            return
        beta = 1.0 if m.get("motor.cooling") in ("forced", "liquid") else dyn.DEFAULT_STANDSTILL_FACTOR
        items = dyn.duty_cycle_torques(segments)
        reduction = dyn.reduce_duty_cycle(items, beta, _capability(m))
        m.lists["duty.segments"] = [
            {"duration": s.segment.duration, "speed_from": s.segment.speed_from, "speed_to": s.segment.speed_to,
             "torque": s.torque, "label": (load["duty"][k] or {}).get("label", "")}
            for k, s in enumerate(items)
        ]
        standstill_torques = [abs(s.torque) for s in items if s.segment.speed_from == 0 and s.segment.speed_to == 0]
        hold = max(standstill_torques, default=0.0)
        _d(m, "duty.holding_at_standstill", hold > 0.0, "duty", ("load.duty",), "torque held at standstill")
        _d(m, "duty.standstill_torque", hold, "duty", ("load.duty",), "largest torque held at standstill")
        on = sum(s.segment.duration for s in items if s.segment.speed_from or s.segment.speed_to or abs(s.torque) > 0)
        _d(m, "duty.on_time", on, "duty", ("load.duty",), "time with speed or torque")
        _d(m, "duty.cdf", on / reduction.cycle_time, "duty", ("load.duty",), "on-time ÷ cycle time")
        source = ("load.duty", "train.inertia_total", "train.load_torque")
    elif load.get("duty_profile") and base is not None:
        from rulecheck.physics.profile_csv import ProfileError, read_profile_csv

        target = (base / load["duty_profile"]).resolve()
        try:
            target.relative_to(base.resolve())
        except ValueError:
            m.notes.append("load.duty_profile must be a file beside the spec (or below its folder)")
            return
        try:
            profile = read_profile_csv(target)
        except (ProfileError, OSError) as exc:
            m.notes.append(f"load.duty_profile: {exc}")
            return
        beta = 1.0 if m.get("motor.cooling") in ("forced", "liquid") else dyn.DEFAULT_STANDSTILL_FACTOR
        reduction = dyn.reduce_profile(profile.time, profile.speed, profile.torque, beta,
                                       capability=_capability(m))
        m.lists["duty.profile"] = _thin(profile.time, profile.speed, profile.torque)
        source = ("load.duty_profile",)
    if reduction is None:
        if tl is not None:
            acc = m.get("train.acceleration_torque") or 0.0
            _d(m, "train.peak_torque_required", tl + acc, "sum", ("train.load_torque", "train.acceleration_torque"),
               "running load torque + acceleration torque")
            _d(m, "train.speed_at_peak", m.get("train.speed_max"), "duty", ("train.speed_max",),
               "top speed (end of acceleration)")
            _d(m, "train.continuous_torque_required", tl, "load", ("train.load_torque",), "running load torque")
        return
    r = reduction
    _d(m, "duty.peak_torque", r.peak_torque, "reduce_duty_cycle", source, "largest |T| of the cycle")
    _d(m, "duty.speed_at_peak", r.speed_at_peak, "reduce_duty_cycle", source, "speed at the peak torque")
    _d(m, "duty.rms_torque", r.rms_torque, "reduce_duty_cycle", source, "√(Σ T²·t ÷ Σ t_eff)")
    _d(m, "duty.mean_abs_torque", r.mean_abs_torque, "reduce_duty_cycle", source, "time mean of |T|")
    _d(m, "duty.cycle_time", r.cycle_time, "reduce_duty_cycle", source, "sum of segment durations")
    _d(m, "duty.standstill_time", r.standstill_time, "reduce_duty_cycle", source, "time at zero speed")
    _d(m, "duty.max_speed", r.max_speed, "reduce_duty_cycle", source, "highest speed of the cycle")
    _d(m, "duty.regenerative_energy", r.regenerative_energy, "reduce_duty_cycle", source, "∫ max(0, −T·ω) dt")
    _d(m, "duty.peak_braking_power", r.peak_braking_power, "reduce_duty_cycle", source, "max(−T·ω)")
    if r.utilisation is not None:
        _d(m, "duty.utilisation", r.utilisation, "reduce_duty_cycle", source,
           "√(Σ (T ÷ T_cont(n))²·t ÷ Σ t_eff)")
    _d(m, "train.peak_torque_required", r.peak_torque, "duty", ("duty.peak_torque",), "duty-cycle peak torque")
    _d(m, "train.speed_at_peak", r.speed_at_peak, "duty", ("duty.speed_at_peak",), "speed at the duty-cycle peak")
    _d(m, "train.continuous_torque_required", r.rms_torque, "duty", ("duty.rms_torque",), "duty-cycle RMS torque")


def _thin(time: Any, speed: Any, torque: Any, points: int = 600) -> list[list[float]]:
    """Return at most ``points`` samples of a profile for charts (min/max preserving)."""
    n = len(time)
    if n <= points:
        idx = np.arange(n)
    else:
        idx = np.unique(np.concatenate([np.linspace(0, n - 1, points // 2).astype(int),
                                        np.array([int(np.argmax(np.abs(torque))), n - 1])]))
    return np.column_stack((np.asarray(time, dtype=float)[idx], np.asarray(speed, dtype=float)[idx],
                            np.asarray(torque, dtype=float)[idx])).tolist()


def _site(m: Model, data: dict[str, Any], base: Path | None) -> None:
    alt, amb = m.get("environment.altitude"), m.get("environment.ambient_max")
    outside = (alt is not None and alt > 1000.0) or (amb is not None and amb > 40.0)
    if m.has("environment.motor_derating"):
        _d(m, "site.motor_derating", m.get("environment.motor_derating"), "given",
           ("environment.motor_derating",), "manufacturer's factor")
        _d(m, "site.derating_default_used", False, "given", ("environment.motor_derating",), "manufacturer data")
    else:
        _d(m, "site.motor_derating", sp.motor_derating_factor(alt or 0.0, amb if amb is not None else 40.0),
           "motor_derating_factor", ("environment.altitude", "environment.ambient_max"),
           "−1 %/100 m above 1000 m × −1 %/K above 40 °C (common practice)")
        _d(m, "site.derating_default_used", bool(outside), "motor_derating_factor",
           ("environment.altitude", "environment.ambient_max"), "common-practice default used")
    if m.has("drive.derating"):
        _d(m, "site.drive_derating", m.get("drive.derating"), "given", ("drive.derating",), "manufacturer's factor")
    else:
        try:
            k = sp.drive_derating_factor(alt or 0.0, amb if amb is not None else 40.0,
                                         m.get("drive.ambient_max", 50.0))
        except ValueError:
            k = 0.0  # beyond the drive's stated range: no capability
        _d(m, "site.drive_derating", k, "drive_derating_factor", ("environment.altitude", "environment.ambient_max"),
           "−1 %/100 m above 1000 m × −1 %/K from 40 to 50 °C (common practice)")


def _cable_protection(m: Model, data: dict[str, Any], base: Path | None) -> None:
    length, area = m.get("cable.length"), m.get("cable.conductor_area")
    current, pf = m.get("motor.rated_current"), m.get("motor.power_factor")
    v = m.get("motor.rated_voltage")
    if None not in (length, area, current, pf, v):
        material = m.get("cable.material", "copper")
        drop = sp.voltage_drop_annex_g(current, length, area, pf, material=material,
                                       reactance_per_length=m.get("cable.reactance", 0.08e-3))
        _d(m, "cable.voltage_drop", sp.relative_voltage_drop(drop, v / math.sqrt(3)), "voltage_drop_annex_g",
           ("motor.rated_current", "cable.length", "cable.conductor_area", "motor.power_factor"),
           "IEC 60364-5-52 Annex G: b·(ρ₁·L·cosφ/S + λ·L·sinφ)·I ÷ U₀")
    if m.get("drive.kind") == "inverter":
        rise = m.get("cable.rise_time", 0.1e-6)
        crit = pe.reflected_wave_critical_length(150e6, rise)
        _d(m, "cable.critical_length", crit, "reflected_wave_critical_length", ("cable.rise_time",),
           "v·t_r ÷ 2 with v = 150 m/µs (common practice)")
        vdc = max(x for x in (m.get("drive.dc_bus_voltage_max"), m.get("drive.braking.chopper_threshold"), 0.0)
                  if x is not None)
        if length is not None and vdc:
            _d(m, "cable.motor_peak_voltage", pe.motor_peak_voltage(vdc, length, crit), "motor_peak_voltage",
               ("drive.dc_bus_voltage_max", "cable.length", "cable.critical_length"),
               "V_dc,max × (1 + Γ), Γ → 1 beyond the critical length")
    p, v = m.get("motor.rated_power"), m.get("motor.rated_voltage")
    if p is not None and v is not None and m.has("protection.code") and str(m.get("protection.code")).startswith(
            "nec"):
        flc = sp.nec_full_load_current(p, v)
        if flc is not None:
            _d(m, "protection.full_load_current", flc, "nec_full_load_current",
               ("motor.rated_power", "motor.rated_voltage"), "NEC Table 430.250 (NFPA 70, 2008)")
