"""Supply and installation: cable voltage drop, derating, voltage/frequency zones, unbalance, NEC values.

NEC values are those of NFPA 70 (National Electrical Code) 2008 as listed in
docs/references.md (K19–K23); local codes and the adopted edition govern.
"""

from __future__ import annotations

import math

import numpy as np

from rulecheck.physics._method import method
from rulecheck.units import REL_TOL, at_least, at_most

SQRT3 = math.sqrt(3.0)

# IEC 60364-5-52 Annex G: ρ1 = 1.25·ρ20 at the conductor temperature under fault conditions [Ω·mm²/m].
ANNEX_G_RESISTIVITY = {"copper": 0.0225, "aluminium": 0.036, "aluminum": 0.036}
ANNEX_G_REACTANCE = 0.08e-3  # λ [Ω/m], the Annex G default (docs/references.md K34: from memory)


def _annex_g_resistivity(material: str) -> float:
    key = material.strip().lower()
    if key in ("cu",):
        key = "copper"
    if key in ("al",):
        key = "aluminium"
    if key not in ANNEX_G_RESISTIVITY:
        raise ValueError(f"unknown conductor material {material!r}; use copper or aluminium")
    return ANNEX_G_RESISTIVITY[key] * 1e-6  # Ω·mm²/m → Ω·m


@method(
    returns="voltage",
    current="current",
    length="length",
    area="area",
    power_factor="fraction",
    phases="fraction",
    reactance_per_length="resistance_per_length",
)
def voltage_drop_annex_g(
    current: float,
    length: float,
    area: float,
    power_factor: float,
    material: str = "copper",
    phases: int = 3,
    reactance_per_length: float = ANNEX_G_REACTANCE,
) -> float:
    """Return the cable voltage drop u [V] per IEC 60364-5-52 Annex G (phase-to-neutral for three-phase).

    Parameters
    ----------
    current : design current I_B [A]
    length : cable route length L [m]
    area : conductor cross-section S [m^2] (``16 mm^2`` parses to 16e-6)
    power_factor : cos φ of the load [1]
    material : ``copper`` (ρ1 = 0.0225 Ω·mm²/m) or ``aluminium`` (0.036 Ω·mm²/m)
    phases : 3 (b = 1, drop relative to U0) or 1 (b = 2, out and return conductors)
    reactance_per_length : λ [Ω/m]; default 0.08 mΩ/m

    Method: u = b·(ρ1·L·cosφ/S + λ·L·sinφ)·I_B; the relative drop is Δu = u/U0.

    References
    ----------
    IEC 60364-5-52, Annex G (voltage drop in consumers' installations); docs/references.md R37, K33, K34
    (λ from memory).
    """
    if phases not in (1, 3):
        raise ValueError("phases must be 1 or 3")
    b = 1.0 if phases == 3 else 2.0
    sin_phi = (1.0 - power_factor**2) ** 0.5
    rho = _annex_g_resistivity(material)
    return b * (rho * length * power_factor / area + reactance_per_length * length * sin_phi) * current


@method(returns="fraction", voltage_drop="voltage", voltage="voltage")
def relative_voltage_drop(voltage_drop: float, voltage: float) -> float:
    """Return a voltage drop as a fraction [1] of its reference voltage.

    Parameters
    ----------
    voltage_drop : drop [V] (Annex G: phase-to-neutral)
    voltage : reference voltage [V] (Annex G: U0, phase-to-neutral; NEC form: line-to-line)

    Method: Δu = u/U.

    References
    ----------
    IEC 60364-5-52, Annex G; docs/references.md R37.
    """
    return voltage_drop / voltage


@method(
    returns="voltage",
    current="current",
    length="length",
    resistance_per_length="resistance_per_length",
    reactance_per_length="resistance_per_length",
    power_factor="fraction",
    phases="fraction",
)
def voltage_drop_nec(
    current: float,
    length: float,
    resistance_per_length: float,
    reactance_per_length: float,
    power_factor: float,
    phases: int = 3,
) -> float:
    """Return the line-to-line voltage drop [V] of a feeder or branch circuit in the NEC form.

    Parameters
    ----------
    current : load current [A]
    length : one-way circuit length [m]
    resistance_per_length : AC resistance R per conductor [Ω/m] (NEC Chapter 9, Table 9)
    reactance_per_length : reactance X per conductor [Ω/m]
    power_factor : cos φ [1]
    phases : 3 (factor √3) or 1 (factor 2, out and return)

    Method: ΔV = k·I·L·(R·cosφ + X·sinφ), k = √3 for three-phase, 2 for single-phase; R·cosφ + X·sinφ is
    the effective impedance Ze of NEC Chapter 9, Table 9, note 2.

    References
    ----------
    NFPA 70, Chapter 9, Table 9 note 2 (effective Z; from memory for the note number); docs/references.md R37.
    """
    if phases not in (1, 3):
        raise ValueError("phases must be 1 or 3")
    k = SQRT3 if phases == 3 else 2.0
    sin_phi = (1.0 - power_factor**2) ** 0.5
    return k * current * length * (resistance_per_length * power_factor + reactance_per_length * sin_phi)


# --- altitude and ambient derating (docs/references.md R27; common practice, no source) ---------

_REFERENCE_ALTITUDE = 1000.0  # m
_REFERENCE_AMBIENT = 40.0  # degC
_SLOPE_PER_METRE = 0.01 / 100.0  # −1 % of rated output per 100 m
_SLOPE_PER_KELVIN = 0.01  # −1 % per K


def _linear_derating(excess: float, slope: float) -> float:
    return max(0.0, 1.0 - slope * max(0.0, excess))


@method(returns="fraction", altitude="length", ambient="temperature")
def motor_derating_factor(
    altitude: float,
    ambient: float,
    per_metre: float = _SLOPE_PER_METRE,
    per_kelvin: float = _SLOPE_PER_KELVIN,
) -> float:
    """Return the default output derating factor [1] of a motor for site altitude and cooling-air temperature.

    Parameters
    ----------
    altitude : site altitude [m]
    ambient : highest cooling-air temperature [degC]
    per_metre : derating per metre above 1000 m [1/m]; default 0.0001 (1 % per 100 m)
    per_kelvin : derating per kelvin above 40 °C [1/K]; default 0.01

    Method: k = (1 − a·(h − 1000 m)⁺)·(1 − b·(θ − 40 °C)⁺); the factors multiply (pitfall 20). Use the
    manufacturer's table instead whenever the spec gives one, and say a default was used.

    References
    ----------
    docs/references.md R27: reference conditions ≤ 1000 m and ≤ 40 °C (IEC 60034-1 clause 6, from memory; NEMA MG 1
    usual service conditions); the slopes are common practice with no source.
    """
    return _linear_derating(altitude - _REFERENCE_ALTITUDE, per_metre) * _linear_derating(
        ambient - _REFERENCE_AMBIENT, per_kelvin
    )


@method(returns="fraction", altitude="length", ambient="temperature", ambient_max="temperature")
def drive_derating_factor(
    altitude: float,
    ambient: float,
    ambient_max: float = 50.0,
    per_metre: float = _SLOPE_PER_METRE,
    per_kelvin: float = _SLOPE_PER_KELVIN,
) -> float:
    """Return the default current derating factor [1] of a drive for altitude and ambient; 0 beyond its maximum.

    Parameters
    ----------
    altitude : site altitude [m]
    ambient : highest air temperature at the drive [degC]
    ambient_max : highest ambient the drive is stated for [degC]; default 50 °C
    per_metre : derating per metre above 1000 m [1/m]; default 0.0001
    per_kelvin : derating per kelvin from 40 °C to ``ambient_max`` [1/K]; default 0.01

    Method: as :func:`motor_derating_factor`, but the ambient line is not extrapolated beyond the drive's
    stated maximum: above it the drive has no rating at the site (factor 0). Above 2000 m clearances and
    earthing-system limits need a separate check (docs/references.md R27).

    References
    ----------
    docs/references.md R27 (slopes common practice; use the drive manufacturer's curves).
    """
    if ambient > ambient_max:
        return 0.0
    return _linear_derating(altitude - _REFERENCE_ALTITUDE, per_metre) * _linear_derating(
        ambient - _REFERENCE_AMBIENT, per_kelvin
    )


# --- voltage and frequency variation -----------------------------------------------

# IEC 60034-1 zone A as (Δf, ΔV) vertices in per unit, counter-clockwise. From memory (docs/references.md R25):
# the axis values ±5 % / ±2 % and the corner cuts are from memory (clause 7.3 of IEC 60034-1, not checked here).
IEC_ZONE_A_VERTICES = ((-0.02, -0.05), (0.0, -0.05), (0.02, -0.03), (0.02, 0.05), (0.0, 0.05), (-0.02, 0.03))


def _inside_convex(point: tuple[float, float], vertices: tuple[tuple[float, float], ...]) -> bool:
    x, y = point
    n = len(vertices)
    for k in range(n):
        x1, y1 = vertices[k]
        x2, y2 = vertices[(k + 1) % n]
        # counter-clockwise polygon: inside (or on an edge) when every cross product is ≥ 0. On an edge at the
        # data's precision counts as on it: the tolerance is REL_TOL (the rule engine's) of the terms' magnitude,
        # so (Δf, ΔV) = (0, 0.050000000000000044) from 420 V / 400 V lies on the +5 % edge.
        scale = abs(x2 - x1) * (abs(y) + abs(y1)) + abs(y2 - y1) * (abs(x) + abs(x1))
        if (x2 - x1) * (y - y1) - (y2 - y1) * (x - x1) < -REL_TOL * scale:
            return False
    return True


@method(returns="fraction", voltage_deviation="fraction", frequency_deviation="fraction")
def in_iec_zone_a(voltage_deviation: float, frequency_deviation: float) -> bool:
    """Return True [1] if a supply deviation lies in IEC 60034-1 zone A (continuous operation).

    Parameters
    ----------
    voltage_deviation : ΔV/V_N, e.g. −0.04 [1]
    frequency_deviation : Δf/f_N [1]

    Method: point in the hexagon with (Δf, ΔV) vertices (−2,−5), (0,−5), (+2,−3), (+2,+5), (0,+5),
    (−2,+3) %, boundary included. The high-V/low-f and low-V/high-f corners are cut (flux ∝ V/f).

    References
    ----------
    IEC 60034-1, voltage and frequency variations, zone A (clause 7.3, figure; from memory for the clause).
    Axis limits ±5 %/±2 % and the corner vertices are from memory (docs/references.md R25 and open items).
    """
    return _inside_convex((frequency_deviation, voltage_deviation), IEC_ZONE_A_VERTICES)


@method(returns="fraction", voltage_deviation="fraction", frequency_deviation="fraction")
def in_iec_zone_b(voltage_deviation: float, frequency_deviation: float) -> bool:
    """Return True [1] if a supply deviation lies in IEC 60034-1 zone B (limited-duration operation).

    Parameters
    ----------
    voltage_deviation : ΔV/V_N [1]
    frequency_deviation : Δf/f_N [1]

    Method: |ΔV| ≤ 10 %, −5 % ≤ Δf ≤ +3 %, and V/f within 0.90–1.10 of rated, the approximation of the zone B
    polygon in docs/references.md R25 (vertices not held).

    References
    ----------
    IEC 60034-1 zone B axis values (±10 %, −5/+3 %) from memory; the V/f approximation is docs/references.md R25 (M).
    """
    if not (at_most(abs(voltage_deviation), 0.10) and at_least(frequency_deviation, -0.05)
            and at_most(frequency_deviation, 0.03)):
        return False
    v_over_f = (1.0 + voltage_deviation) / (1.0 + frequency_deviation)
    return at_least(v_over_f, 0.90) and at_most(v_over_f, 1.10)


@method(returns="fraction", voltage_deviation="fraction", frequency_deviation="fraction")
def within_nema_variation(voltage_deviation: float, frequency_deviation: float) -> bool:
    """Return True [1] if a supply deviation is within NEMA MG 1 12.44 running limits.

    Parameters
    ----------
    voltage_deviation : ΔV/V_N [1]
    frequency_deviation : Δf/f_N [1]

    Method: |ΔV| ≤ 10 %, |Δf| ≤ 5 %, |ΔV| + |Δf| ≤ 10 %.

    References
    ----------
    NEMA MG 1, 12.44 (variation from rated voltage and frequency); docs/references.md R25 and K25.
    """
    dv, df = abs(voltage_deviation), abs(frequency_deviation)
    return at_most(dv, 0.10) and at_most(df, 0.05) and at_most(dv + df, 0.10)


@method(returns="fraction", voltage_a="voltage", voltage_b="voltage", voltage_c="voltage")
def voltage_unbalance(voltage_a: float, voltage_b: float, voltage_c: float) -> float:
    """Return the NEMA voltage unbalance [1] of three line-to-line voltages.

    Parameters
    ----------
    voltage_a, voltage_b, voltage_c : the three line-to-line RMS voltages [V]

    Method: %VU = max|V_i − V_avg|/V_avg (not (V_max − V_min)/V_avg).

    References
    ----------
    NEMA MG 1 definition of voltage unbalance (14.36, from memory for the clause); docs/references.md R26 and K26.
    """
    v = (voltage_a, voltage_b, voltage_c)
    avg = sum(v) / 3.0
    return max(abs(x - avg) for x in v) / avg


# Approximate NEMA MG 1 derating for unbalance (curve values from memory; sources differ): docs/references.md R26.
_UNBALANCE_POINTS = (0.01, 0.02, 0.03, 0.05)
_UNBALANCE_FACTORS = (1.00, 0.95, 0.88, 0.75)


@method(returns="fraction", unbalance="fraction")
def unbalance_derating_factor(unbalance: float) -> float | None:
    """Return the approximate motor derating factor [1] for a voltage unbalance; None above 5 %.

    Parameters
    ----------
    unbalance : NEMA voltage unbalance [1], e.g. 0.02

    Method: 1.00 up to 1 %, 0.95 at 2 %, 0.88 at 3 % (low end of 0.88–0.90), 0.75 at 5 %, linear between.
    Above 5 % operation is not recommended, so no factor is given.

    References
    ----------
    NEMA MG 1 derating curve for voltage unbalance (curve values from memory; docs/references.md R26).
    """
    if not at_most(unbalance, _UNBALANCE_POINTS[-1]):
        return None
    return float(np.interp(unbalance, _UNBALANCE_POINTS, _UNBALANCE_FACTORS))


# --- NEC Article 430 (NFPA 70, 2008 edition) ---------------------------------------

NEC_EDITION = "NFPA 70 (NEC) 2008"
HP_MECHANICAL = 745.69987158227022  # W, NIST SP 811 (2008) App. B

# Table 430.250, three-phase induction motors: (hp rating, column voltage) -> full-load current [A].
# Only the entries reproduced in docs/references.md K19; other ratings return None.
_NEC_430_250 = {
    (1.0, 460): 2.1,
    (5.0, 460): 7.6,
    (10.0, 460): 14.0,
    (10.0, 230): 28.0,
    (25.0, 460): 34.0,
    (30.0, 460): 40.0,
    (50.0, 460): 65.0,
    (100.0, 460): 124.0,
    (100.0, 230): 248.0,
}

# 746 W (electrical horsepower) and 745.7 W (mechanical, NIST SP 811 B.8) differ by 0.04 %: NEC and NEMA MG 1 tables
# treat them alike. A rating within 0.1 % of a table's hp is that hp; metric horsepower (735.5 W, 1.4 % less) is not.
NEC_HP_MATCH = 0.001


def nec_table_horsepower(rated_power: float, ratings: tuple[float, ...]) -> float | None:
    """Return the hp rating of an hp-keyed table that a power [W] stands for, or None.

    7457 W (10 hp at 745.7 W) and 7460 W (10 hp at 746 W) are both the table's 10 hp (within
    :data:`NEC_HP_MATCH`); 7355 W (10 PS, metric) matches no rating.
    """
    hp = rated_power / HP_MECHANICAL
    for rating in ratings:
        if abs(hp - rating) <= NEC_HP_MATCH * rating:
            return rating
    return None


# The table's voltages are motor ratings; the heading permits them for these system ranges (from memory).
_NEC_VOLTAGE_COLUMNS = ((220.0, 240.0, 230), (440.0, 480.0, 460))


@method(returns="current", rated_power="power", voltage="voltage")
def nec_full_load_current(rated_power: float, voltage: float) -> float | None:
    """Return the NEC Table 430.250 full-load current [A] of a three-phase motor; None if not held.

    Parameters
    ----------
    rated_power : horsepower rating, as power [W] (``10 hp`` parses to 7457 W)
    voltage : motor rated voltage or system voltage [V]; 220–240 V reads the 230 V column, 440–480 V the
        460 V column

    Method: table look-up keyed by hp rating (not by watts; pitfall 5); 746 W and 745.7 W per hp alike. Use
    table FLC for conductors and short-circuit protection, nameplate FLA for overloads (pitfall 18).

    References
    ----------
    NFPA 70 (NEC) 2008, Table 430.250, as reproduced in docs/references.md K19 (only those entries are held).
    """
    for low, high, column in _NEC_VOLTAGE_COLUMNS:
        if at_least(voltage, low) and at_most(voltage, high):
            hp = nec_table_horsepower(rated_power, tuple(h for h, c in _NEC_430_250 if c == column))
            return _NEC_430_250.get((hp, column)) if hp is not None else None
    return None


@method(returns="current", full_load_current="current")
def nec_branch_conductor_ampacity(full_load_current: float) -> float:
    """Return the minimum ampacity [A] of single-motor branch-circuit conductors.

    Parameters
    ----------
    full_load_current : table full-load current, not nameplate [A]

    Method: 125 % of the table FLC.

    References
    ----------
    NFPA 70 (NEC) 2008, 430.22 (and 430.6(A)(1) for using table values); docs/references.md K20.
    """
    return 1.25 * full_load_current


@method(returns="current", rated_current="current")
def nec_drive_conductor_ampacity(rated_current: float) -> float:
    """Return the minimum ampacity [A] of power-conversion-equipment conductors.

    Parameters
    ----------
    rated_current : drive rated input current (supply side, 430.122(A)) or motor table FLC
        (drive-to-motor side, 430.122(B)) [A]

    Method: 125 % of that current.

    References
    ----------
    NFPA 70 (NEC) 2008, 430.122; docs/references.md K21.
    """
    return 1.25 * rated_current


@method(
    returns="current", nameplate_current="current", service_factor="fraction", temperature_rise="temperature_difference"
)
def nec_overload_trip_max(
    nameplate_current: float, service_factor: float = 1.0, temperature_rise: float | None = None
) -> float:
    """Return the largest overload-relay trip current [A] for a continuous-duty motor over 1 hp.

    Parameters
    ----------
    nameplate_current : nameplate full-load current FLA [A]
    service_factor : marked service factor [1]
    temperature_rise : marked temperature rise [K], if any

    Method: 125 % of FLA when SF ≥ 1.15 or the marked rise is ≤ 40 K; 115 % for all other motors.
    (430.32(C) allows up to 140/130 % only where needed to start.)

    References
    ----------
    NFPA 70 (NEC) 2008, 430.32(A)(1); docs/references.md R24 and K22.
    """
    generous = at_least(service_factor, 1.15) or (temperature_rise is not None and at_most(temperature_rise, 40.0))
    return (1.25 if generous else 1.15) * nameplate_current


# Table 430.52, maximum rating of branch-circuit short-circuit and ground-fault devices, % of FLC.
NEC_430_52_PERCENT = {
    "non-time-delay-fuse": 300.0,
    "dual-element-fuse": 175.0,
    "instantaneous-trip-breaker": 800.0,
    "instantaneous-trip-breaker-design-b-energy-efficient": 1100.0,
    "inverse-time-breaker": 250.0,
}


@method(returns="current", full_load_current="current")
def nec_short_circuit_protection_max(full_load_current: float, device: str = "inverse-time-breaker") -> float:
    """Return the largest branch short-circuit and ground-fault protective device rating [A] for a motor.

    Parameters
    ----------
    full_load_current : table FLC [A]
    device : one of ``non-time-delay-fuse``, ``dual-element-fuse``, ``instantaneous-trip-breaker``,
        ``instantaneous-trip-breaker-design-b-energy-efficient``, ``inverse-time-breaker``

    Method: FLC × Table 430.52 percentage (the exceptions that allow the next standard size are not applied).
    A drive's listing decides its own protection (430.130).

    References
    ----------
    NFPA 70 (NEC) 2008, Table 430.52; docs/references.md R38 and K23.
    """
    if device not in NEC_430_52_PERCENT:
        raise ValueError(f"unknown protective device {device!r}; use one of {', '.join(NEC_430_52_PERCENT)}")
    return NEC_430_52_PERCENT[device] / 100.0 * full_load_current
