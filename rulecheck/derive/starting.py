"""Derive step: short-time torque available from motor and drive at the speed of the peak, breakaway torque,
run-up time (on a drive, or direct on line on the Kloss curve) and the supply voltage at a direct-on-line start.

Runs after the duty step: the peak torque and its speed are known.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Callable

from rulecheck.derive.record import Spec, put
from rulecheck.model import Model
from rulecheck.physics import dynamics as dyn
from rulecheck.physics import machines as mc
from rulecheck.physics import supply as sp

__all__ = ["DOL_RUN_UP_END", "INTEGRATION_STEPS", "LOCKED_ROTOR_POWER_FACTOR", "derive_starting", "dol_motor_torque"]

# Power factor of an induction motor at locked rotor when the datasheet gives none (docs/references.md R13: 0.3–0.4, C).
LOCKED_ROTOR_POWER_FACTOR = 0.35
# A direct-on-line run-up is taken as finished at 95 % of rated speed: the last few per cent approach the
# running point asymptotically and add little time (common practice).
DOL_RUN_UP_END = 0.95
INTEGRATION_STEPS = 50  # docs/references.md R11 asks for at least 20 speed steps


def derive_starting(m: Model, spec: Spec) -> None:
    """Short-time torque at the peak, breakaway torque, run-up time, starting voltage."""
    _peak_torque(m)
    _breakaway(m)
    _acceleration(m)
    _starting_voltage(m)


# --- short-time torque ---------------------------------------------------------------


def _weakening(base_speed: float, speed: float) -> float:
    """n_b/n above base speed, 1 at or below it."""
    w = abs(speed)
    return base_speed / w if w > base_speed else 1.0


def _motor_short_time(m: Model) -> Callable[[float], float] | None:
    """Return the motor's short-time torque [N*m] at a shaft speed [rad/s], or None without data."""
    kind, nb = m.get("motor.kind"), m.get("motor.base_speed")
    peak, breakdown = m.get("motor.peak_torque"), m.get("motor.breakdown_torque")
    if not nb:
        return None
    if kind == "induction":
        top = peak if peak is not None else breakdown
        if top is None:
            return None

        def induction(w: float) -> float:
            r = _weakening(nb, w)
            # constant power above base speed, but never above the pull-out torque, which falls as (n_b/n)²
            return min(top * r, breakdown * r * r) if breakdown is not None else top * r

        return induction
    if kind in ("pm-synchronous", "dc") and peak is not None:
        return lambda w: peak * _weakening(nb, w)
    return None


def _drive_limited(m: Model) -> tuple[Callable[[float], float], str] | None:
    """Return (torque [N*m] at the drive's overload current as a function of speed [rad/s], method), or None."""
    kind, drive = m.get("motor.kind"), m.get("drive.kind")
    i_ol, nb, tn = m.get("drive.overload_current"), m.get("motor.base_speed"), m.get("motor.rated_torque")
    if i_ol is None or not nb:
        return None
    if kind == "induction" and drive == "inverter" and tn and m.get("motor.rated_current"):
        t = mc.induction_torque_at_current(i_ol, tn, m.get("motor.rated_current"), m.get("motor.magnetising_current"))
        how = "T_N·√((I_ol² − I_0²)/(I_N² − I_0²))"
    elif kind == "pm-synchronous" and drive == "inverter":
        kt = m.get("motor.torque_constant", m.get("motor.torque_constant_from_emf"))
        if kt is None:
            return None
        t = kt * i_ol
        how = "Kt·I_ol"
    elif kind == "dc" and drive == "dc-converter" and tn:
        ia = m.get("motor.armature_current", m.get("motor.rated_current"))
        if not ia:
            return None
        t = tn * i_ol / ia
        how = "T_N·I_ol/I_aN"
    else:
        return None
    return (lambda w: t * _weakening(nb, w)), how


def _available(m: Model) -> Callable[[float], float] | None:
    """Return the short-time torque available [N*m] at a speed [rad/s]: motor and, on a drive, drive limits."""
    motor = _motor_short_time(m)
    limited = _drive_limited(m)
    on_drive = m.get("drive.kind") in ("inverter", "dc-converter")
    if on_drive:
        if limited is None:
            return None
        drive_fn = limited[0]
        if motor is None:
            return None
        return lambda w: min(motor(w), drive_fn(w))
    return motor


def _peak_torque(m: Model) -> None:
    w = m.get("train.speed_at_peak")
    if w is None:
        return
    at = f"at {w * 60 / (2 * math.pi):.0f} r/min"
    motor = _motor_short_time(m)
    if motor is not None:
        put(m, "train.peak_torque_motor", motor(w), "motor_short_time_torque",
           ("motor.peak_torque", "motor.breakdown_torque", "motor.base_speed", "train.speed_at_peak"),
           f"peak (or breakdown) torque × n_b/n above base speed, ≤ T_bd·(n_b/n)² {at}")
    elif m.get("motor.kind") in ("induction", "pm-synchronous", "dc"):
        m.notes.append("train.peak_torque_motor: give motor.peak_torque (or, induction, motor.breakdown_torque)")
    limited = _drive_limited(m)
    if limited is not None:
        fn, how = limited
        put(m, "train.peak_torque_drive", fn(w), "torque_at_overload_current",
           ("drive.overload_current", "motor.rated_torque", "motor.rated_current", "motor.magnetising_current",
            "motor.torque_constant", "motor.base_speed", "train.speed_at_peak"), f"{how}, × n_b/n above base {at}")
    elif m.get("drive.kind") in ("inverter", "dc-converter"):
        m.notes.append("train.peak_torque_drive: give drive.rated_current and drive.overload.current "
                       "(and the motor's rated current, or Kt for a PM motor)")
    available = _available(m)
    if available is not None:
        put(m, "train.peak_torque_available", available(w), "minimum",
           ("train.peak_torque_motor", "train.peak_torque_drive"), f"lower of motor and drive limits {at}")


# --- breakaway, acceleration ---------------------------------------------------------------


def _load_at_motor(m: Model) -> Callable[[float], float] | None:
    """Return the load torque at the motor shaft [N*m] as a function of motor speed [rad/s] (motoring)."""
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    fn = m.functions.get("load_torque")
    if fn is not None and i and eff:
        return lambda w: abs(float(fn(abs(w) / i))) / (i * eff)
    tl = m.get("train.load_torque")
    if tl is not None:
        return lambda w: abs(tl)
    return None


def _breakaway(m: Model) -> None:
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    load = _load_at_motor(m)
    if load is None or not i or not eff:
        return
    at_rest = load(0.0)
    given = m.get("load.breakaway_torque")
    start = max(at_rest, given / (i * eff)) if given is not None else at_rest
    put(m, "train.breakaway_torque", start, "breakaway",
       ("load.breakaway_torque", "load.model", "transmission.ratio", "transmission.efficiency"),
       "larger of the load model at rest and the given breakaway torque, ÷ (i·η)")
    available = _available(m)
    if available is not None and m.get("drive.kind") in ("inverter", "dc-converter"):
        put(m, "train.standstill_torque_available", available(0.0), "minimum",
           ("motor.peak_torque", "motor.breakdown_torque", "drive.overload_current", "motor.rated_current"),
           "lower of the motor's short-time torque and the torque at the drive's overload current, at standstill")


def dol_motor_torque(rated_torque: float, breakdown_torque: float, rated_slip: float, synchronous_speed: float,
                     locked_rotor_torque: float | None = None) -> Callable[[float], float]:
    """Return the direct-on-line torque T_m(ω) [N*m] of an induction motor as a function of shaft speed [rad/s].

    Parameters
    ----------
    rated_torque : T_N [N*m]
    breakdown_torque : T_bd [N*m], above T_N
    rated_slip : s_N [1]
    synchronous_speed : n_s [rad/s]
    locked_rotor_torque : T_LR [N*m]; without it the Kloss curve alone is used (it underestimates the
        starting torque of most cage motors, so the run-up time comes out longer)

    Method: Kloss's equation T = 2·T_bd/(s/s_k + s_k/s), with the breakdown slip fitted to the rated point,
    s_k = s_N·(b + √(b² − 1)), b = T_bd/T_N; between s_k and standstill a correction rising linearly with slip
    makes T(s = 1) = T_LR. The pull-up dip of deep-bar rotors is not modelled.

    References
    ----------
    Kloss's equation (electric-machines textbooks, derivation P); the blend to T_LR is common practice.
    """
    b = breakdown_torque / rated_torque
    if b <= 1.0 or not 0.0 < rated_slip < 1.0:
        raise ValueError("the DOL torque curve needs T_bd > T_N and a rated slip between 0 and 1")
    s_k = min(rated_slip * (b + math.sqrt(b * b - 1.0)), 1.0)

    def kloss(s: float) -> float:
        return 2.0 * breakdown_torque / (s / s_k + s_k / s)

    correction = 0.0 if locked_rotor_torque is None else locked_rotor_torque - kloss(1.0)

    def torque(w: float) -> float:
        s = max(1.0 - w / synchronous_speed, 1e-9)
        share = max(0.0, (s - s_k) / (1.0 - s_k)) if s_k < 1.0 else 0.0
        return kloss(s) + correction * share

    return torque


def _acceleration(m: Model) -> None:
    jt, load = m.get("train.inertia_total"), _load_at_motor(m)
    if jt is None or load is None:
        return
    drive = m.get("drive.kind")
    if drive in ("inverter", "dc-converter"):
        end = m.get("train.speed_max")
        available = _available(m)
        if available is None or not end:
            return
        method, note = "acceleration_integral", "J_tot·∫dω/(T_avail(ω) − T_L(ω)), 0 → n_max, T_avail at the " \
                                                "drive's overload current (= J·Δω/T_net when T_net is constant)"
        inputs = ("train.inertia_total", "train.speed_max", "train.peak_torque_available", "train.load_torque")
        motor_fn = available
    elif drive in ("direct-on-line", None) and m.get("motor.kind") == "induction":
        tn, tbd, s_n, ns = (m.get(p) for p in ("motor.rated_torque", "motor.breakdown_torque", "motor.slip",
                                               "motor.synchronous_speed"))
        if None in (tn, tbd, s_n, ns) or tbd <= tn or not 0 < s_n < 1:
            return
        motor_fn = dol_motor_torque(tn, tbd, s_n, ns, m.get("motor.locked_rotor_torque"))
        end = DOL_RUN_UP_END * m.get("motor.rated_speed")
        if m.get("train.speed_max"):
            end = min(end, m.get("train.speed_max"))
        method = "dol_acceleration_time"
        note = "J_tot·∫dω/(T_m(ω) − T_L(ω)) on the Kloss curve fitted to T_N, T_bd, s_N (and T_LR), 0 → 95 % n_N"
        inputs = ("train.inertia_total", "motor.rated_torque", "motor.breakdown_torque", "motor.locked_rotor_torque",
                  "motor.slip", "train.load_torque")
    else:
        return
    t = dyn.dol_acceleration_time(jt, motor_fn, load, end, steps=INTEGRATION_STEPS)
    stalls = not math.isfinite(t)
    put(m, "train.acceleration_stalls", stalls, method, inputs,
       "net torque ≤ 0 during the run-up" if stalls else "net torque positive throughout the run-up")
    if not stalls:
        put(m, "train.acceleration_time", t, method, inputs, note)


# --- direct-on-line starting voltage ------------------------------------------------------------


def _starting_voltage(m: Model) -> None:
    if m.get("drive.kind") != "direct-on-line" or m.get("motor.kind") != "induction":
        return
    s_sc, i_lr, v_n = m.get("supply.fault_level"), m.get("motor.locked_rotor_current"), m.get("motor.rated_voltage")
    if None in (s_sc, i_lr, v_n) or s_sc <= 0 or i_lr <= 0:
        return
    v_supply = m.get("supply.voltage", v_n)
    pf = m.get("motor.locked_rotor_power_factor", LOCKED_ROTOR_POWER_FACTOR)
    phi = math.acos(min(max(pf, 0.0), 1.0))
    z_motor = cmath.rect(v_n / (math.sqrt(3.0) * i_lr), phi)  # per phase, star equivalent
    z_source = complex(0.0, v_supply**2 / s_sc)  # source taken as a pure reactance (larger dip: conservative)
    z_cable = 0j
    length, area = m.get("cable.length"), m.get("cable.conductor_area")
    if length is not None and area:
        rho = sp.ANNEX_G_RESISTIVITY.get(m.get("cable.material", "copper"), sp.ANNEX_G_RESISTIVITY["copper"]) * 1e-6
        z_cable = complex(rho * length / area, m.get("cable.reactance", sp.ANNEX_G_REACTANCE) * length)
    u = abs(z_motor) / abs(z_motor + z_source + z_cable) * v_supply / v_n
    put(m, "train.starting_voltage", u, "voltage_divider",
       ("supply.voltage", "supply.fault_level", "motor.locked_rotor_current", "motor.rated_voltage", "cable.length",
        "cable.conductor_area", "motor.locked_rotor_power_factor"),
       f"|Z_m| ÷ |Z_m + Z_supply + Z_cable| × V_supply ÷ V_N, Z_supply = jV²/S_sc, cosφ_LR {pf:.2f}"
       + ("" if m.has("motor.locked_rotor_power_factor") else " (default, common practice)"))
