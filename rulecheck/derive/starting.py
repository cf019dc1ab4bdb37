"""Derive step: short-time torque available from motor and drive at the speed of the peak, breakaway torque,
the supply voltage at a direct-on-line start, run-up time (on a drive; direct on line on the Kloss curve at the
dipped voltage; on a soft starter under its ramp and current limit) and the soft starter's starting torque.

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

__all__ = ["DOL_RUN_UP_END", "INTEGRATION_STEPS", "LOCKED_ROTOR_POWER_FACTOR", "RAMP_STEPS", "derive_starting",
           "dol_motor_torque", "dol_starting_curve", "rotor_resistance_ratio", "soft_start_limited_curve",
           "soft_start_run_up"]

# Power factor of an induction motor at locked rotor when the datasheet gives none (docs/references.md R13: 0.3–0.4, C).
LOCKED_ROTOR_POWER_FACTOR = 0.35
# A direct-on-line run-up is taken as finished at 95 % of rated speed: the last few per cent approach the
# running point asymptotically and add little time (common practice).
DOL_RUN_UP_END = 0.95
INTEGRATION_STEPS = 50  # docs/references.md R11 asks for at least 20 speed steps
RAMP_STEPS = 400  # time steps over a soft starter's voltage ramp (midpoint rule)


def derive_starting(m: Model, spec: Spec) -> None:
    """Short-time torque at the peak, breakaway torque, run-up time, starting voltage."""
    _peak_torque(m)
    _breakaway(m)
    _starting_voltage(m)
    _acceleration(m)
    _soft_start(m)


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
        found = dol_starting_curve(m)
        if found is None:
            return
        motor_fn, u = found
        end = _run_up_end(m)
        method = "dol_acceleration_time"
        at = f"at U = {u:.3f}·U_N (the start's dip; torque ∝ U²)" if m.has("train.starting_voltage") else \
            "at full voltage (supply.fault_level not given: the dip is not counted)"
        note = f"J_tot·∫dω/(T_m(ω) − T_L(ω)) on the Kloss curve fitted to T_N, T_bd, s_N (and T_LR), {at}, 0 → 95 % n_N"
        inputs = ("train.inertia_total", "motor.rated_torque", "motor.breakdown_torque", "motor.locked_rotor_torque",
                  "motor.slip", "train.load_torque", "train.starting_voltage")
    else:
        return
    t = dyn.dol_acceleration_time(jt, motor_fn, load, end, steps=INTEGRATION_STEPS)
    stalls = not math.isfinite(t)
    put(m, "train.acceleration_stalls", stalls, method, inputs,
       "net torque ≤ 0 during the run-up" if stalls else "net torque positive throughout the run-up")
    if not stalls:
        put(m, "train.acceleration_time", t, method, inputs, note)


def dol_starting_curve(m: Model) -> tuple[Callable[[float], float], float] | None:
    """Return the motor torque T(ω) [N*m] during a direct-on-line start and the voltage ratio U/U_N it is at, or
    None without the data: the Kloss curve (:func:`dol_motor_torque`) × u², torque falling with the square of the
    terminal voltage, held at the start's locked-rotor dip (``train.starting_voltage``) throughout (the voltage
    recovers as the current falls near full speed: conservative) and never raised above rated. The run-up time
    and the starting chart both use it."""
    curve = _dol_curve(m)
    if curve is None:
        return None
    u = min(m.get("train.starting_voltage", 1.0), 1.0)
    return ((lambda w: u * u * curve(w)) if u < 1.0 else curve), u


def soft_start_limited_curve(m: Model) -> Callable[[float], float] | None:
    """Return the motor torque T(ω) [N*m] a soft starter allows at its current limit, min(T_lim(ω), T_m(ω)) (see
    :class:`_SoftStart`), or None without the data: what the soft-start margin compares with the load, and what
    the starting chart draws."""
    found = _soft_start_voltages(m) if m.get("motor.kind") == "induction" else None
    if found is None or _dol_curve(m) is None:
        return None
    return _SoftStart(m, found[0], 0.0, 0.0).at_limit


def _dol_curve(m: Model) -> Callable[[float], float] | None:
    """Return the motor's full-voltage speed-torque curve T_m(ω) [N*m], or None without the data."""
    tn, tbd, s_n, ns = (m.get(p) for p in ("motor.rated_torque", "motor.breakdown_torque", "motor.slip",
                                           "motor.synchronous_speed"))
    if None in (tn, tbd, s_n, ns) or tbd <= tn or not 0 < s_n < 1:
        return None
    return dol_motor_torque(tn, tbd, s_n, ns, m.get("motor.locked_rotor_torque"))


def _run_up_end(m: Model) -> float:
    """Return the speed [rad/s] at which a start on the motor's own curve counts as finished."""
    end = DOL_RUN_UP_END * m.get("motor.rated_speed")
    return min(end, m.get("train.speed_max")) if m.get("train.speed_max") else end


# --- soft starter ---------------------------------------------------------------------------------


def soft_start_run_up(inertia: float, torque: Callable[[float, float], float], load_torque: Callable[[float], float],
                      breakaway: float, ramp_end: float, speed_to: float) -> float:
    """Return the run-up time [s] of a soft start; ``math.inf`` if the motor cannot get there.

    Parameters
    ----------
    inertia : total inertia at the motor shaft [kg*m^2]
    torque : motor torque [N*m] at a time [s] and shaft speed [rad/s] under the starter's ramp and current limit
    load_torque : load torque at the motor shaft [N*m] as a function of shaft speed [rad/s], running
    breakaway : torque [N*m] the load needs to start moving from rest
    ramp_end : time [s] after which the motor torque depends on the speed only
    speed_to : end speed [rad/s]

    Method: during the ramp J·dω/dt = T_m(t, ω) − T_L(ω) is stepped in time (midpoint rule, RAMP_STEPS steps; the
    shaft stays at rest until T_m exceeds the breakaway torque); after it t = J·∫dω/(T_m(ω) − T_L(ω)) by the
    midpoint rule over INTEGRATION_STEPS speed steps.

    References
    ----------
    Newton's second law for rotation (docs/references.md R11).
    """
    dt = ramp_end / RAMP_STEPS
    w, t = 0.0, 0.0

    def accel(tt: float, speed: float) -> float:
        drive = torque(tt, speed)
        if speed <= 0.0 and drive <= breakaway:
            return 0.0
        return (drive - load_torque(speed)) / inertia

    for _ in range(RAMP_STEPS if dt > 0 else 0):
        mid = max(w + 0.5 * dt * accel(t, w), 0.0)
        w_next = max(w + dt * accel(t + 0.5 * dt, mid), 0.0)
        if w_next >= speed_to:  # reached speed within this step: its share by linear interpolation
            return t + (speed_to - w) / (w_next - w) * dt
        w, t = w_next, t + dt
    if w <= 0.0 and torque(t, 0.0) <= breakaway:
        return math.inf
    h = (speed_to - w) / INTEGRATION_STEPS
    for k in range(INTEGRATION_STEPS):
        speed = w + (k + 0.5) * h
        net = torque(t, speed) - load_torque(speed)
        if net <= 0.0:
            return math.inf
        t += inertia * h / net
    return t


def rotor_resistance_ratio(rated_torque: float, locked_rotor_torque: float, rated_current: float,
                           locked_rotor_current: float, magnetising_current: float, rated_slip: float) -> float:
    """Return R_r at standstill ÷ R_r at rated slip [1] of a cage rotor, from the datasheet (at least 1).

    Parameters
    ----------
    rated_torque, locked_rotor_torque : T_N, T_LR [N*m]
    rated_current, locked_rotor_current, magnetising_current : I_N, I_LR, I_0 [A]
    rated_slip : s_N [1]

    Method: the air-gap torque is T = 3·I_r²·R_r/(s·ω_s), so R_LR/R_N = (T_LR/T_N)·(I_rN²/I_rLR²)/s_N with the
    rotor current I_r² = I² − I_0² (magnetising current at right angles). Deep bars and current displacement
    make it 2–5 for most cage motors.

    References
    ----------
    Induction machine equivalent circuit (electric-machines textbooks; derivation P).
    """
    i_rn = rated_current**2 - magnetising_current**2
    i_rlr = locked_rotor_current**2 - magnetising_current**2
    if i_rn <= 0.0 or i_rlr <= 0.0:
        return 1.0
    return max((locked_rotor_torque / rated_torque) * (i_rn / i_rlr) / rated_slip, 1.0)


def _soft_start_voltages(m: Model) -> tuple[float, float | None, str] | None:
    """Return (highest U/U_N the current limit allows at standstill, initial U/U_N or None, how), or None."""
    i_lr, t_lr = m.get("motor.locked_rotor_current"), m.get("motor.locked_rotor_torque")
    if not i_lr or not t_lr:
        return None
    limit, i_n = m.get("drive.soft_start.current_limit"), m.get("motor.rated_current")
    if limit is None or not i_n:
        return None
    u_lim = min(limit * i_n / i_lr, 1.0)
    u0 = m.get("drive.soft_start.initial_voltage")
    if u0 is None and m.get("drive.soft_start.initial_torque") is not None and m.get("motor.rated_torque"):
        u0 = math.sqrt(m.get("drive.soft_start.initial_torque") * m.get("motor.rated_torque") / t_lr)
    return u_lim, (min(u0, u_lim) if u0 is not None else None), "I_lim ÷ I_LR (current ∝ voltage at locked rotor)"


class _SoftStart:
    """The motor under a soft starter: torque at a time and speed, under the voltage ramp and the current limit.

    Under the ramp the torque is u(t)²·T_m(ω) (torque ∝ U² at a given speed). At the current limit the rotor
    current is held, so T = 3·I_r²·R_r(s)/(s·ω_s) rises as the slip falls: T_lim(s) = T_LR·(I_lim/I_LR)²·ρ(s)/s,
    with ρ(s) = R_r(s)/R_r,LR taken linear in slip between rated slip and standstill (deep-bar rotor). The
    motor gives the smaller of the two, and never more than its full-voltage curve.
    """

    def __init__(self, m: Model, u_lim: float, u0: float, ramp: float) -> None:
        tn, tbd, s_n, ns = (m.get(p) for p in ("motor.rated_torque", "motor.breakdown_torque", "motor.slip",
                                               "motor.synchronous_speed"))
        t_lr, i_lr = m.get("motor.locked_rotor_torque"), m.get("motor.locked_rotor_current")
        self.ns, self.s_n, self.u_lim, self.u0, self.ramp = ns, s_n, u_lim, u0, ramp
        self.t_start = t_lr * u_lim * u_lim
        self.r_ratio = rotor_resistance_ratio(tn, t_lr, m.get("motor.rated_current"), i_lr,
                                              m.get("motor.magnetising_current") or 0.0, s_n)
        self.curve = dol_motor_torque(tn, tbd, s_n, ns, t_lr)

    def ramp_end(self) -> float:
        """Time [s] at which the ramp reaches full voltage (the current limit then sets the torque)."""
        return self.ramp if self.u0 < 1.0 else 0.0

    def limited(self, w: float) -> float:
        """Torque [N*m] at the current limit at a speed [rad/s]."""
        s = min(max(1.0 - w / self.ns, self.s_n), 1.0)
        rho = (1.0 + (self.r_ratio - 1.0) * (s - self.s_n) / (1.0 - self.s_n)) / self.r_ratio
        return self.t_start * rho / s

    def at_limit(self, w: float) -> float:
        """Torque [N*m] at the current limit, never above the full-voltage curve, at a speed [rad/s]."""
        return min(self.limited(w), self.curve(w))

    def torque(self, t: float, w: float) -> float:
        u = min(self.u0 + (1.0 - self.u0) * t / self.ramp, 1.0) if self.ramp > 0 else 1.0
        full = self.curve(w)
        return min(u * u * full, self.limited(w), full)


def _soft_start(m: Model) -> None:
    if m.get("drive.kind") != "soft-starter" or m.get("motor.kind") != "induction":
        return
    found = _soft_start_voltages(m)
    if found is None:
        return
    u_lim, u0, how = found
    t_lr = m.get("motor.locked_rotor_torque")
    inputs = ("drive.soft_start.current_limit", "motor.rated_current", "motor.locked_rotor_current")
    put(m, "train.soft_start_voltage", u_lim, "soft_start_voltage", inputs, how)
    put(m, "train.soft_start_torque", t_lr * u_lim * u_lim, "reduced_voltage_torque",
       (*inputs, "motor.locked_rotor_torque"), "T_LR·(I_lim/I_LR)²: torque ∝ U² ∝ I² at locked rotor")
    if u0 is not None:
        put(m, "train.soft_start_initial_torque", t_lr * u0 * u0, "reduced_voltage_torque",
           ("drive.soft_start.initial_voltage", "drive.soft_start.initial_torque", "motor.locked_rotor_torque"),
           "T_LR·U₀² at the start of the ramp")
    load, jt, breakaway = _load_at_motor(m), m.get("train.inertia_total"), m.get("train.breakaway_torque")
    if _dol_curve(m) is None or load is None or breakaway is None:
        return
    ramp = m.get("drive.soft_start.ramp_time")
    start = u0 if u0 is not None else 0.0  # not given: from zero, the longest start the ramp can give
    motor = _SoftStart(m, u_lim, start, ramp or 0.0)
    end = _run_up_end(m)
    _soft_start_margin(m, motor, load, breakaway, end)
    if jt is None or ramp is None:
        return
    t = soft_start_run_up(jt, motor.torque, load, breakaway, motor.ramp_end(), end)
    stalls = not math.isfinite(t)
    run_inputs = ("train.inertia_total", "drive.soft_start.ramp_time", "drive.soft_start.initial_voltage",
                  "train.soft_start_voltage", "motor.breakdown_torque", "train.load_torque")
    put(m, "train.acceleration_stalls", stalls, "soft_start_run_up", run_inputs,
       "net torque ≤ 0 during the run-up" if stalls else "net torque positive throughout the run-up")
    if stalls:
        return
    first = f"U₀ {start:.0%}" if u0 is not None else "U₀ not given: from 0"
    put(m, "train.acceleration_time", t, "soft_start_run_up", run_inputs,
       f"voltage ramp ({first} → 100 % in {ramp:g} s) under the current limit ({u_lim:.0%} of U_N at standstill), "
       "J·dω/dt = min(u²·T_m, T_lim)(ω) − T_L(ω), 0 → 95 % n_N")
    put(m, "train.soft_start_heating_time", t * u_lim * u_lim, "soft_start_run_up",
       ("train.acceleration_time", "train.soft_start_voltage"),
       "(I_lim/I_LR)² × run-up time: the time at locked-rotor current that heats the rotor as much (I²t; the "
       "current taken at its limit throughout: conservative)")


def _soft_start_margin(m: Model, motor: _SoftStart, load: Callable[[float], float], breakaway: float,
                       top: float) -> None:
    """Smallest ratio of the motor torque at the current limit to the load torque from standstill to ``top``."""
    ratios = []
    for k in range(INTEGRATION_STEPS + 1):
        w = top * k / INTEGRATION_STEPS
        need = breakaway if k == 0 else load(w)
        if need > 0.0:
            ratios.append((motor.at_limit(w) / need, w))
    if not ratios:
        return
    ratio, where = min(ratios)
    inputs = ("train.soft_start_voltage", "motor.breakdown_torque", "motor.locked_rotor_torque",
              "train.breakaway_torque", "train.load_torque")
    put(m, "train.soft_start_margin", ratio, "soft_start_margin", inputs,
       "smallest min(T_lim(ω), T_m(ω)) ÷ T_L(ω) from standstill (breakaway) to 95 % n_N")
    put(m, "train.soft_start_margin_speed", where, "soft_start_margin", inputs, "motor speed of the smallest ratio")


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
