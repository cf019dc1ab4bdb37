"""Derive step: the installation — motor cable (voltage drop, reflected-wave critical length, peak voltage at the
motor), NEC full-load current, motor currents at the required torques, how long the peak lasts, gearbox output
torque at the peak, and the braking energy and power returned to the drive."""

from __future__ import annotations

import math

from rulecheck.derive.record import Spec, default, put
from rulecheck.model import Model
from rulecheck.physics import loads as ld
from rulecheck.physics import machines as mc
from rulecheck.physics import power_electronics as pe
from rulecheck.physics import supply as sp

__all__ = ["CABLE_PROPAGATION_SPEED", "DEFAULT_RISE_TIME", "STOP_RAMP_STEPS",
           "derive_installation"]

CABLE_PROPAGATION_SPEED = 150e6  # m/s, pulse speed on a motor cable (about half the speed of light): common practice
DEFAULT_RISE_TIME = 0.1e-6  # s, IGBT output voltage rise time when the drive data give none: common practice
STOP_RAMP_STEPS = 200  # steps of the ramped stop over which the returned energy is integrated


def derive_installation(m: Model, spec: Spec) -> None:
    """Cable, protection, motor currents, peak duration, braking."""
    _cable_protection(m)
    _motor_currents(m)
    _peak(m)
    _braking(m)


def _cable_protection(m: Model) -> None:
    length, area = m.get("cable.length"), m.get("cable.conductor_area")
    current, pf = m.get("motor.rated_current"), m.get("motor.power_factor")
    v = m.get("motor.rated_voltage")
    if None not in (length, area, current, pf, v):
        material = m.get("cable.material", "copper")
        drop = sp.voltage_drop_annex_g(current, length, area, pf, material=material,
                                       reactance_per_length=m.get("cable.reactance", sp.ANNEX_G_REACTANCE))
        put(m, "cable.voltage_drop", sp.relative_voltage_drop(drop, v / math.sqrt(3)), "voltage_drop_annex_g",
           ("motor.rated_current", "cable.length", "cable.conductor_area", "motor.power_factor"),
           "IEC 60364-5-52 Annex G: b·(ρ₁·L·cosφ/S + λ·L·sinφ)·I ÷ U₀")
    if m.get("drive.kind") == "inverter":
        if not m.has("cable.rise_time"):
            # recorded, so the insulation limit a rule picks is read at the same rise time as the peak estimate
            default(m, "cable.rise_time", DEFAULT_RISE_TIME, "IGBT output rise time 0.1 µs (common practice)")
        rise = m.get("cable.rise_time")
        crit = pe.reflected_wave_critical_length(CABLE_PROPAGATION_SPEED, rise)
        put(m, "cable.critical_length", crit, "reflected_wave_critical_length", ("cable.rise_time",),
           "v·t_r ÷ 2 with v = 150 m/µs (common practice)")
        vdc = max(x for x in (m.get("drive.dc_bus_voltage_max"), m.get("drive.braking.chopper_threshold"), 0.0)
                  if x is not None)
        if length is not None and vdc:
            put(m, "cable.motor_peak_voltage", pe.motor_peak_voltage(vdc, length, crit), "motor_peak_voltage",
               ("drive.dc_bus_voltage_max", "cable.length", "cable.critical_length"),
               "V_dc,max × (1 + Γ), Γ → 1 beyond the critical length")
    p, v = m.get("motor.rated_power"), m.get("motor.rated_voltage")
    if p is not None and v is not None and m.has("protection.code") and str(m.get("protection.code")).startswith(
            "nec"):
        flc = sp.nec_full_load_current(p, v)
        if flc is not None:
            put(m, "protection.full_load_current", flc, "nec_full_load_current",
               ("motor.rated_power", "motor.rated_voltage"), "NEC Table 430.250 (NFPA 70, 2008)")


def _current_at(m: Model, torque: float) -> tuple[float, str, tuple[str, ...]] | None:
    """Return (motor current [A] at a torque, method, inputs), or None if the motor data do not allow it."""
    kind = m.get("motor.kind")
    tn = m.get("motor.rated_torque")
    if kind == "induction" and tn and m.has("motor.rated_current"):
        i = mc.induction_current_at_torque(abs(torque), tn, m.get("motor.rated_current"),
                                           m.get("motor.magnetising_current"))
        return i, "induction_current_at_torque", ("motor.rated_torque", "motor.rated_current",
                                                  "motor.magnetising_current")
    if kind == "pm-synchronous":
        kt_path = "motor.torque_constant" if m.has("motor.torque_constant") else "motor.torque_constant_from_emf"
        kt = m.get(kt_path)
        if kt:
            return abs(torque) / kt, "torque ÷ Kt", (kt_path,)
    if kind == "dc" and tn and m.has("motor.armature_current"):
        # k·Φ at rated field is T_N ÷ I_aN; above base speed the weakened field needs more current per N·m
        return abs(torque) / tn * m.get("motor.armature_current"), "dc_armature_current_for_torque", (
            "motor.rated_torque", "motor.armature_current")
    return None


def _motor_currents(m: Model) -> None:
    for torque_path, path, what in (("train.continuous_torque_required", "train.motor_current_required", "RMS"),
                                    ("train.peak_torque_required", "train.motor_current_peak", "peak")):
        torque = m.get(torque_path)
        if torque is None or m.has(path):
            continue
        found = _current_at(m, torque)
        if found:
            value, method, inputs = found
            put(m, path, value, method, (torque_path, *inputs), f"motor current at the {what} torque")


def _peak(m: Model) -> None:
    segments = m.lists.get("duty.segments")
    if segments:
        worst = max(segments, key=lambda s: abs(s["torque"]))
        put(m, "train.peak_duration", worst["duration"], "duty", ("load.duty",), "duration of the peak-torque segment")
    elif (m.get("train.acceleration_torque") or 0.0) > 0.0 and m.has("load.acceleration_time"):
        put(m, "train.peak_duration", m.get("load.acceleration_time"), "acceleration", ("load.acceleration_time",),
           "the peak lasts the acceleration time")
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    peak = m.get("train.peak_torque_required")
    if peak is not None and i and eff and not m.has("train.gear_output_torque_peak"):
        put(m, "train.gear_output_torque_peak", abs(peak) * i * eff, "product",
                 ("train.peak_torque_required", "transmission.ratio", "transmission.efficiency"),
                 "peak motor torque × i × η")


def _overhauling_torque(m: Model) -> tuple[float, str, tuple[str, ...]] | None:
    """Return (torque [N*m] with which the load drives its own shaft at steady speed in its regenerating
    direction, > 0; how; inputs), or None when the load model cannot overhaul at steady speed.

    Hoist: lowering, the rope force on the drum less the mechanism's losses (T_hold·η_load). Conveyor: a downhill
    pull larger than the belt's friction, F = m·g·(μ·cos θ + sin θ) < 0, less the losses (|F|·D/2·η_load).
    Any other model: a negative load torque at speed_max (the load drives).
    """
    model, eta_load = m.get("load.model"), m.get("load.efficiency") or 1.0
    if model == "hoist":
        hold = m.get("load.holding_torque")
        if hold is None:
            return None
        return abs(hold) * eta_load, "hoist lowering: T_hold × η_load", ("load.holding_torque", "load.efficiency")
    if model == "conveyor":
        mass, d = m.get("load.mass"), m.get("load.pulley_diameter")
        if not mass or not d:
            return None
        force = float(ld.conveyor_force(mass, m.get("load.incline", 0.0), m.get("load.friction_coefficient") or 0.0))
        if force >= 0.0:
            return None  # uphill, level, or friction holds the belt: it does not drive the motor
        return (-float(ld.pulley_torque(force, d)) * eta_load, "downhill belt: −m·g·(μ·cos θ + sin θ)·D/2 × η_load",
                ("load.mass", "load.incline", "load.friction_coefficient", "load.pulley_diameter", "load.efficiency"))
    fn, nmax = m.functions.get("load_torque"), m.get("load.speed_max")
    if fn is None or nmax is None:
        return None
    torque = float(fn(nmax))
    if torque >= 0.0:
        return None
    return -torque, "negative load torque at speed_max", ("load.model", "load.speed_max")


def _sustained(m: Model, overhauling: bool) -> bool:
    """Return whether the load regenerates at steady speed: hoist lowering, downhill belt, braked segment."""
    if overhauling or m.get("load.model") == "hoist" or m.get("load.lowering_power") is not None:
        return True
    for seg in m.lists.get("duty.segments") or []:
        steady = seg["speed_from"] == seg["speed_to"] and seg["speed_to"] != 0.0
        if steady and seg["torque"] * seg["speed_to"] < 0.0:
            return True
    return False


def _braking(m: Model) -> None:
    if m.get("drive.kind") != "inverter":
        return
    overhauling = _overhauling_torque(m)
    sustained = _sustained(m, overhauling is not None)
    put(m, "train.regeneration_sustained", sustained, "regeneration",
       ("load.model", "load.incline", "load.friction_coefficient", "load.duty"),
       "hoist lowering, a downhill belt its friction does not hold, or a duty segment braking at steady speed")
    eta = (m.get("transmission.reverse_efficiency") or m.get("transmission.efficiency") or 1.0) * (
        m.get("motor.efficiency") or 1.0)
    eta_inputs = ("transmission.reverse_efficiency", "motor.efficiency")
    if m.has("duty.regenerative_energy", "duty.cycle_time"):
        e_cycle = m.get("duty.regenerative_energy") * eta
        put(m, "train.braking_energy", e_cycle, "duty", ("duty.regenerative_energy", *eta_inputs),
           "regenerated energy per cycle × η_rev × η_mot (whole cycle, conservative per stop)")
        put(m, "train.braking_power_peak", m.get("duty.peak_braking_power", 0.0) * eta, "duty",
           ("duty.peak_braking_power", *eta_inputs), "largest −T·ω of the cycle × η")
        put(m, "train.braking_power_mean", e_cycle / m.get("duty.cycle_time"), "duty",
           ("duty.regenerative_energy", "duty.cycle_time"), "E_cycle ÷ t_cycle")
        _regenerates(m, sustained)
        return
    jt, w = m.get("train.inertia_total"), m.get("train.speed_max")
    e_mech = _stopping(m, jt, w, eta, eta_inputs, overhauling)
    steady = _steady_regeneration(m, overhauling)
    if steady is not None:
        power, how, inputs = steady
        peak = max(m.get("train.braking_power_peak", 0.0), power * eta)
        put(m, "train.braking_power_peak", peak, "braking_power", (*inputs, *eta_inputs),
           "largest of the stopping peak and the steady regeneration × η_rev × η_mot")
        put(m, "train.braking_power_mean", power * eta, "steady_regeneration", (*inputs, *eta_inputs),
           f"{how} × η_rev × η_mot, all the time (no duty cycle given: conservative)")
    elif e_mech is not None and m.get("load.starts_per_hour"):
        put(m, "train.braking_power_mean", e_mech * eta * m.get("load.starts_per_hour") / 3600.0, "braking_energy",
           ("train.braking_energy", "load.starts_per_hour"), "E_stop × stops per hour ÷ 3600 s")
    _regenerates(m, sustained)


def _steady_regeneration(m: Model, overhauling: tuple[float, str, tuple[str, ...]] | None,
                         ) -> tuple[float, str, tuple[str, ...]] | None:
    """Return (power [W] the load returns at its shaft at steady top speed, how, inputs), or None."""
    lowering = m.get("load.lowering_power")
    if m.get("load.model") == "hoist" and lowering is not None:
        return lowering, "lowering power m·g·v·η_load", ("load.lowering_power",)
    nmax = m.get("load.speed_max")
    if overhauling is None or nmax is None:
        return None
    torque, how, inputs = overhauling
    return torque * nmax, f"({how}) × load speed", (*inputs, "load.speed_max")


def _regenerates(m: Model, sustained: bool) -> None:
    """Whether anything flows back to the DC bus; left underived while the energy of a stop is unknown."""
    energy, mean = m.get("train.braking_energy"), m.get("train.braking_power_mean")
    if not sustained and energy is None and mean is None:
        return
    flows = sustained or (energy or 0.0) > 0.0 or (mean or 0.0) > 0.0
    why = ("the load regenerates at steady speed" if sustained else
           "a stop returns energy to the DC bus" if flows else
           "nothing returns to the DC bus: the drive coasts, or the load's own friction stops it within the ramp")
    put(m, "train.regenerates", flows, "regeneration",
       ("train.regeneration_sustained", "train.braking_energy", "train.braking_power_mean", "drive.stop"), why)


def _stopping(m: Model, jt: float | None, w: float | None, eta: float, eta_inputs: tuple[str, ...],
              overhauling: tuple[float, str, tuple[str, ...]] | None) -> float | None:
    """Derive the energy and peak power that one ramped stop from top speed returns; return it before η [J].

    A load that can overhaul is stopped in its regenerating direction (a hoist while lowering, a downhill belt):
    the motor brakes the inertia and the load's pull, T_m = −(J·ω/t_dec + T_ovh/i). Any other load is stopped
    as it runs: its torque helps, T_m = T_L(ω)/(i·η) − J·ω/t_dec, and the motor regenerates while T_m < 0.
    Without a deceleration time the drive may coast or ramp slowly: nothing is derived, and the braking
    rule reports what it would need.
    """
    if m.get("drive.stop") == "coast" and overhauling is None:
        # the inverter stops modulating and the load coasts: nothing flows back to the DC bus
        put(m, "train.braking_energy", 0.0, "coast", ("drive.stop",), "coast to stop: no regeneration")
        put(m, "train.braking_power_peak", 0.0, "coast", ("drive.stop",), "coast to stop: no regeneration")
        return 0.0
    t_dec = m.get("load.deceleration_time")
    if not t_dec or jt is None or w is None:
        return None
    i = m.get("transmission.ratio") or 1.0
    eff = m.get("transmission.efficiency") or 1.0
    load_torque = m.functions.get("load_torque")
    steps = STOP_RAMP_STEPS
    decel_torque = jt * w / t_dec
    energy = 0.0
    peak = 0.0
    dt = t_dec / steps
    for k in range(steps + 1):
        speed = w * (1.0 - k / steps)
        if overhauling is not None:
            pull = overhauling[0] / i  # the load drives: it adds to the braking torque
        else:
            pull = -abs(float(load_torque(speed / i))) / (i * eff) if load_torque is not None else 0.0
        power = max(0.0, (decel_torque + pull) * speed)
        peak = max(peak, power)
        energy += power * (dt if 0 < k < steps else dt / 2)
    how = "(J·ω/t_dec + T_ovh/i)·ω, stopping in the overhauling direction" if overhauling is not None else \
        "max(0, (J·ω/t_dec − T_L(ω)/(i·η))·ω)"
    load_inputs = overhauling[2] if overhauling is not None else ("train.load_torque",)
    put(m, "train.braking_power_peak", peak * eta, "braking_power",
       ("train.inertia_total", "train.speed_max", "load.deceleration_time", *load_inputs, *eta_inputs),
       f"largest over the ramp of {how} × η_rev × η_mot")
    put(m, "train.braking_energy", energy * eta, "braking_energy",
       ("train.inertia_total", "train.speed_max", "load.deceleration_time", *load_inputs, *eta_inputs),
       f"∫ {how} dt over a linear ramp to rest × η_rev × η_mot")
    return energy
