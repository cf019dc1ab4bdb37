"""Derive step: the installation — motor cable (conductor area from AWG/kcmil and parallel conductors, voltage drop
for three-phase, single-phase and DC circuits, reflected-wave critical length, peak voltage at the motor), NEC
full-load current (Tables 430.247/248/250), prospective short-circuit current, short-circuit ratio, EMC environment,
motor currents at the required torques, how long the peak lasts, gearbox output torque at the peak, and the
braking energy and power returned to the drive."""

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
    _conductor(m)
    _voltage_drop(m)
    _reflected_wave(m)
    _nec_full_load_current(m)
    _supply_side(m)


def _conductor(m: Model) -> None:
    """Cross-section of a phase (or pole): the given area or an AWG/kcmil size, times the conductors in parallel."""
    n = m.get("cable.parallel_conductors", 1)
    # the number in parallel (default 1) and the reactance (default λ) refine the value: named in the note, not
    # asked for as inputs
    if m.has("cable.conductor_area"):
        put(m, "cable.phase_area", m.get("cable.conductor_area") * n, "product", ("cable.conductor_area",),
            "conductor cross-section × conductors in parallel per phase (or pole)")
    elif m.has("cable.conductor_size"):
        try:
            area = sp.conductor_size_area(str(m.get("cable.conductor_size")))
        except ValueError:
            return  # the schema refuses such a size; nothing is derived from it
        put(m, "cable.phase_area", area * n, "conductor_size_area", ("cable.conductor_size",),
            "AWG: d = 0.127 mm·92^((36 − n)/39), kcmil: 0.5067 mm² each (ASTM B258); × conductors in parallel")


def _circuit(m: Model) -> str:
    """Which circuit the motor cable is: the DC armature circuit, a single-phase line circuit, or three-phase."""
    if m.get("motor.kind") == "dc":
        return "dc"
    if m.get("supply.phases") == 1 and m.get("drive.kind") != "inverter":
        return "single-phase"
    return "three-phase"


def _voltage_drop(m: Model) -> None:
    length, area = m.get("cable.length"), m.get("cable.phase_area")
    if length is None or area is None:
        return
    material = m.get("cable.material", "copper")
    circuit = _circuit(m)
    if circuit == "dc":
        current = m.get("motor.armature_current", m.get("motor.rated_current"))
        v = m.get("motor.armature_voltage", m.get("motor.rated_voltage"))
        if current is None or v is None:
            return
        drop = sp.voltage_drop_dc(current, length, area, material=material)
        put(m, "cable.voltage_drop", sp.relative_voltage_drop(drop, v), "voltage_drop_dc",
            ("motor.armature_current", "cable.length", "cable.phase_area"),
            "DC armature circuit: 2·(ρ₁·L/S)·I ÷ U_a (IEC 60364-5-52 Annex G ρ₁)")
        return
    current, pf, v = m.get("motor.rated_current"), m.get("motor.power_factor"), m.get("motor.rated_voltage")
    if None in (current, pf, v):
        return
    # n cables in parallel each carry I/n: the set's resistance and reactance are both 1/n of one cable's
    x = m.get("cable.reactance", sp.ANNEX_G_REACTANCE) / m.get("cable.parallel_conductors", 1)
    inputs = ("motor.rated_current", "cable.length", "cable.phase_area", "motor.power_factor")
    if circuit == "single-phase":
        # out and return conductor: u = 2·I·L·(R cosφ + X sinφ), relative to the line voltage
        drop = sp.voltage_drop_annex_g(current, length, area, pf, material=material, phases=1,
                                       reactance_per_length=x)
        put(m, "cable.voltage_drop", sp.relative_voltage_drop(drop, v), "voltage_drop_annex_g", inputs,
            "single-phase: 2·(ρ₁·L·cosφ/S + λ·L·sinφ)·I ÷ U (IEC 60364-5-52 Annex G, b = 2)")
        line_drop = drop
    else:
        drop = sp.voltage_drop_annex_g(current, length, area, pf, material=material, reactance_per_length=x)
        put(m, "cable.voltage_drop", sp.relative_voltage_drop(drop, v / math.sqrt(3)), "voltage_drop_annex_g",
            inputs, "IEC 60364-5-52 Annex G: b·(ρ₁·L·cosφ/S + λ·L·sinφ)·I ÷ U₀")
        line_drop = math.sqrt(3) * drop
    u_min = m.get("supply.voltage_min")
    if u_min is not None and m.get("drive.kind") in ("direct-on-line", "soft-starter"):
        # a motor on the line sees the lowest supply voltage less the running drop
        put(m, "cable.motor_voltage_low", (u_min - line_drop) / v, "motor_voltage_low",
            ("supply.voltage_min", "cable.voltage_drop", "motor.rated_voltage"),
            "(U_supply,min − ΔU_line) ÷ U_N, the motor on the line at the low supply tolerance")


def _reflected_wave(m: Model) -> None:
    if m.get("drive.kind") != "inverter":
        return
    if not m.has("cable.rise_time"):
        # recorded, so the insulation limit a rule picks is read at the same rise time as the peak estimate
        default(m, "cable.rise_time", DEFAULT_RISE_TIME, "IGBT output rise time 0.1 µs (common practice)")
    rise = m.get("cable.rise_time")
    crit = pe.reflected_wave_critical_length(CABLE_PROPAGATION_SPEED, rise)
    put(m, "cable.critical_length", crit, "reflected_wave_critical_length", ("cable.rise_time",),
        "v·t_r ÷ 2 with v = 150 m/µs (common practice)")
    vdc = max(x for x in (m.get("drive.dc_bus_voltage_max"), m.get("drive.braking.chopper_threshold"), 0.0)
              if x is not None)
    length = m.get("cable.length")
    if length is not None and vdc:
        put(m, "cable.motor_peak_voltage", pe.motor_peak_voltage(vdc, length, crit), "motor_peak_voltage",
            ("drive.dc_bus_voltage_max", "cable.length", "cable.critical_length"),
            "V_dc,max × (1 + Γ), Γ → 1 beyond the critical length")


def _nec_full_load_current(m: Model) -> None:
    if not (m.has("protection.code") and str(m.get("protection.code")).startswith("nec")):
        return
    p = m.get("motor.rated_power")
    if m.get("motor.kind") == "dc":
        system, v_path = "dc", "motor.armature_voltage"
        v = m.get("motor.armature_voltage", m.get("motor.rated_voltage"))
    else:
        phases = 1 if m.get("supply.phases") == 1 and m.get("drive.kind") != "inverter" else 3
        system = "single-phase" if phases == 1 else "three-phase"
        v, v_path = m.get("motor.rated_voltage"), "motor.rated_voltage"
    if p is None or v is None:
        return
    flc = sp.nec_full_load_current(p, v, system)
    if flc is not None:
        put(m, "protection.full_load_current", flc, "nec_full_load_current", ("motor.rated_power", v_path),
            f"NEC {sp.NEC_TABLE_NAMES[system]} (NFPA 70, 2023; written from the table, status P)")


def _supply_side(m: Model) -> None:
    """Prospective short-circuit current, the drive's input apparent power and short-circuit ratio, EMC environment."""
    s_k, u = m.get("supply.fault_level"), m.get("supply.voltage")
    if not (s_k and u and s_k > 0 and u > 0):
        s_k = u = None
    if s_k is not None and u is not None:
        put(m, "supply.fault_current", sp.prospective_short_circuit_current(s_k, u),
            "prospective_short_circuit_current", ("supply.fault_level", "supply.voltage"),
            "I_k = S_k ÷ (√3·U_n) (IEC 60909-0); cable impedance neglected (conservative)")
    i_in = m.get("drive.input_current")
    if s_k is not None and u is not None and i_in:
        s_equ = math.sqrt(3) * u * i_in
        put(m, "drive.short_circuit_ratio", sp.short_circuit_ratio(s_k, s_equ), "short_circuit_ratio",
            ("supply.fault_level", "supply.voltage", "drive.input_current"),
            "R_sce = S_k ÷ (√3·U·I_in) (IEC 61000-3-12; IEEE 519 I_sc/I_L with the drive as the load)")
    front_end = m.get("drive.front_end")
    if front_end is not None and not m.has("drive.input_thd"):
        put(m, "drive.input_thd", sp.typical_input_thd(str(front_end)), "typical_input_thd", ("drive.front_end",),
            "typical input current THD for the front-end kind (common practice; give drive.input_thd from the "
            "drive's data)", source="default")
    env = m.get("supply.emc_environment")
    if env is None and m.get("supply.low_voltage_network") in ("public", "private"):
        env = "first" if m.get("supply.low_voltage_network") == "public" else "second"
        put(m, "supply.emc_environment", env, "emc_environment", ("supply.low_voltage_network",),
            "public LV network → first environment; own transformer → second (IEC 61800-3 definitions)")


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
    elif (m.get("train.acceleration_torque") or m.get("train.acceleration_torque_min") or 0.0) > 0.0 and m.has(
            "load.acceleration_time"):  # the peak lasts the run-up, whether its torque is known or a lower bound
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
        # the cycle's torques are at the motor shaft, an overhauling load's already T·η_rev ÷ i: only the motor's
        # losses remain (the gear's losses on the inertia torques are not credited: conservative)
        eta_mot = m.get("motor.efficiency") or 1.0
        e_cycle = m.get("duty.regenerative_energy") * eta_mot
        put(m, "train.braking_energy", e_cycle, "duty", ("duty.regenerative_energy", "motor.efficiency"),
           "regenerated energy per cycle at the motor shaft × η_mot (whole cycle, conservative per stop)")
        put(m, "train.braking_power_peak", m.get("duty.peak_braking_power", 0.0) * eta_mot, "duty",
           ("duty.peak_braking_power", "motor.efficiency"), "largest −T·ω of the cycle at the motor shaft × η_mot")
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
