"""Supply and installation: cable voltage drop, derating, voltage/frequency zones, unbalance, NEC values.

NEC values are those of NFPA 70 (National Electrical Code) 2023 as listed in
docs/references.md (K19–K23); local codes and the adopted edition govern.
"""

from __future__ import annotations

import math
import re

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


# --- NEC Article 430 (NFPA 70, 2023 edition) ---------------------------------------

NEC_EDITION = "NFPA 70 (NEC) 2023"
HP_MECHANICAL = 745.69987158227022  # W, NIST SP 811 (2008) App. B

# The three NEC full-load current tables, as written down from the 2023 edition's layout (docs/references.md K45):
# hp rating -> {column voltage: full-load current [A]}. The values were not checked against a printed copy of the
# 2023 edition (status P): a dash in the table is an absent column here.
_V3 = (115, 200, 208, 230, 460, 575, 2300)
_NEC_430_250_ROWS = (  # Table 430.250, three-phase AC, induction-type squirrel-cage and wound-rotor motors
    (0.5, (4.4, 2.5, 2.4, 2.2, 1.1, 0.9, None)),
    (0.75, (6.4, 3.7, 3.5, 3.2, 1.6, 1.3, None)),
    (1.0, (8.4, 4.8, 4.6, 4.2, 2.1, 1.7, None)),
    (1.5, (12.0, 6.9, 6.6, 6.0, 3.0, 2.4, None)),
    (2.0, (13.6, 7.8, 7.5, 6.8, 3.4, 2.7, None)),
    (3.0, (None, 11.0, 10.6, 9.6, 4.8, 3.9, None)),
    (5.0, (None, 17.5, 16.7, 15.2, 7.6, 6.1, None)),
    (7.5, (None, 25.3, 24.2, 22.0, 11.0, 9.0, None)),
    (10.0, (None, 32.2, 30.8, 28.0, 14.0, 11.0, None)),
    (15.0, (None, 48.3, 46.2, 42.0, 21.0, 17.0, None)),
    (20.0, (None, 62.1, 59.4, 54.0, 27.0, 22.0, None)),
    (25.0, (None, 78.2, 74.8, 68.0, 34.0, 27.0, None)),
    (30.0, (None, 92.0, 88.0, 80.0, 40.0, 32.0, None)),
    (40.0, (None, 120.0, 114.0, 104.0, 52.0, 41.0, None)),
    (50.0, (None, 150.0, 143.0, 130.0, 65.0, 52.0, None)),
    (60.0, (None, 177.0, 169.0, 154.0, 77.0, 62.0, 16.0)),
    (75.0, (None, 221.0, 211.0, 192.0, 96.0, 77.0, 20.0)),
    (100.0, (None, 285.0, 273.0, 248.0, 124.0, 99.0, 26.0)),
    (125.0, (None, 359.0, 343.0, 312.0, 156.0, 125.0, 31.0)),
    (150.0, (None, 414.0, 396.0, 360.0, 180.0, 144.0, 37.0)),
    (200.0, (None, 552.0, 528.0, 480.0, 240.0, 192.0, 49.0)),
    (250.0, (None, None, None, None, 302.0, 242.0, 60.0)),
    (300.0, (None, None, None, None, 361.0, 289.0, 72.0)),
    (350.0, (None, None, None, None, 414.0, 336.0, 83.0)),
    (400.0, (None, None, None, None, 477.0, 382.0, 95.0)),
    (450.0, (None, None, None, None, 515.0, 412.0, 103.0)),
    (500.0, (None, None, None, None, 590.0, 472.0, 118.0)),
)
_V1 = (115, 200, 208, 230)
_NEC_430_248_ROWS = (  # Table 430.248, single-phase AC motors
    (1 / 6, (4.4, 2.5, 2.4, 2.2)),
    (0.25, (5.8, 3.3, 3.2, 2.9)),
    (1 / 3, (7.2, 4.1, 4.0, 3.6)),
    (0.5, (9.8, 5.6, 5.4, 4.9)),
    (0.75, (13.8, 7.9, 7.6, 6.9)),
    (1.0, (16.0, 9.2, 8.8, 8.0)),
    (1.5, (20.0, 11.5, 11.0, 10.0)),
    (2.0, (24.0, 13.8, 13.2, 12.0)),
    (3.0, (34.0, 19.6, 18.7, 17.0)),
    (5.0, (56.0, 32.2, 30.8, 28.0)),
    (7.5, (80.0, 46.0, 44.0, 40.0)),
    (10.0, (100.0, 57.5, 55.0, 50.0)),
)
_VDC = (90, 120, 180, 240, 500, 550)
_NEC_430_247_ROWS = (  # Table 430.247, direct-current motors at base speed (rated armature voltage)
    (0.25, (4.0, 3.1, 2.0, 1.6, None, None)),
    (1 / 3, (5.2, 4.1, 2.6, 2.0, None, None)),
    (0.5, (6.8, 5.4, 3.4, 2.7, None, None)),
    (0.75, (9.6, 7.6, 4.8, 3.8, None, None)),
    (1.0, (12.2, 9.5, 6.1, 4.7, None, None)),
    (1.5, (None, 13.2, 8.3, 6.6, None, None)),
    (2.0, (None, 17.0, 10.8, 8.5, None, None)),
    (3.0, (None, 25.0, 16.0, 12.2, None, None)),
    (5.0, (None, 40.0, 27.0, 20.0, None, None)),
    (7.5, (None, 58.0, None, 29.0, 13.6, 12.2)),
    (10.0, (None, 76.0, None, 38.0, 18.0, 16.0)),
    (15.0, (None, None, None, 55.0, 27.0, 24.0)),
    (20.0, (None, None, None, 72.0, 34.0, 31.0)),
    (25.0, (None, None, None, 89.0, 43.0, 38.0)),
    (30.0, (None, None, None, 106.0, 51.0, 46.0)),
    (40.0, (None, None, None, 140.0, 67.0, 61.0)),
    (50.0, (None, None, None, 173.0, 83.0, 75.0)),
    (60.0, (None, None, None, 206.0, 99.0, 90.0)),
    (75.0, (None, None, None, 255.0, 123.0, 111.0)),
    (100.0, (None, None, None, 341.0, 164.0, 148.0)),
    (125.0, (None, None, None, 425.0, 205.0, 185.0)),
    (150.0, (None, None, None, 506.0, 246.0, 222.0)),
    (200.0, (None, None, None, 675.0, 330.0, 294.0)),
)


def _table(rows: tuple[tuple[float, tuple[float | None, ...]], ...],
           columns: tuple[int, ...]) -> dict[float, dict[int, float]]:
    return {hp: {v: a for v, a in zip(columns, amps, strict=True) if a is not None} for hp, amps in rows}


NEC_TABLES: dict[str, dict[float, dict[int, float]]] = {
    "three-phase": _table(_NEC_430_250_ROWS, _V3),
    "single-phase": _table(_NEC_430_248_ROWS, _V1),
    "dc": _table(_NEC_430_247_ROWS, _VDC),
}
NEC_TABLE_NAMES = {"three-phase": "Table 430.250", "single-phase": "Table 430.248", "dc": "Table 430.247"}

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


# The AC tables' voltages are motor ratings; their headings permit the currents for the system ranges 110-120,
# 220-240, 440-480 and 550-600 V. 200 V and 208 V have their own columns; 2300 V is read for 2300-2400 V.
# The DC table is read at the motor's rated armature voltage (its own column only).
_AC_RANGES = ((110.0, 120.0, 115), (200.0, 200.0, 200), (208.0, 208.0, 208), (220.0, 240.0, 230),
              (440.0, 480.0, 460), (550.0, 600.0, 575), (2300.0, 2400.0, 2300))


def _nec_column(voltage: float, system: str) -> int | None:
    if system == "dc":
        return next((col for col in _VDC if at_least(voltage, col) and at_most(voltage, col)), None)
    return next((col for low, high, col in _AC_RANGES if at_least(voltage, low) and at_most(voltage, high)), None)


@method(returns="current", rated_power="power", voltage="voltage")
def nec_full_load_current(rated_power: float, voltage: float, system: str = "three-phase") -> float | None:
    """Return the NEC table full-load current [A] of a motor; None where the table gives none.

    Parameters
    ----------
    rated_power : horsepower rating, as power [W] (``10 hp`` parses to 7457 W; 746 W and 745.7 W are both 1 hp)
    voltage : motor rated voltage (DC: rated armature voltage) [V]; an AC rating in 110-120, 220-240, 440-480 or
        550-600 V reads the 115, 230, 460 or 575 V column (the tables' headings), 200 and 208 V their own columns
    system : ``three-phase`` (Table 430.250), ``single-phase`` (Table 430.248) or ``dc`` (Table 430.247)

    Method: table look-up keyed by the horsepower rating (within NEC_HP_MATCH: 746 W and 745.7 W per hp alike),
    never by watts (pitfall 5); a size or voltage the table leaves blank returns None. Use the table FLC for
    conductors and short-circuit protection, the nameplate FLA for overloads (pitfall 18; 430.6(A)).

    References
    ----------
    NFPA 70 (NEC) 2023, Tables 430.247, 430.248 and 430.250 (docs/references.md K19, K45; values written from
    the tables' layout, not checked against a printed 2023 copy: status P).
    """
    if system not in NEC_TABLES:
        raise ValueError(f"unknown system {system!r}; use three-phase, single-phase or dc")
    hp = nec_table_horsepower(rated_power, tuple(sorted(NEC_TABLES[system])))
    column = _nec_column(voltage, system)
    if hp is None or column is None:
        return None
    return NEC_TABLES[system].get(hp, {}).get(column)


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


# --- conductors, DC circuits, fault level, harmonics -------------------------------

_AWG_PATTERN = re.compile(r"^\s*(\d{1,2}|[1-4]/0)\s*AWG\s*$", re.IGNORECASE)
_KCMIL_PATTERN = re.compile(r"^\s*([1-9]\d{1,3}(?:\.\d+)?)\s*(kcmil|MCM)\s*$", re.IGNORECASE)
KCMIL = 0.00064516 / 1273.2395447351628  # m², one thousand circular mils: π/4·(0.001 in)²·1000 = 0.5067 mm²


def conductor_size_area(size: str) -> float:
    """Return the cross-section [m²] of an AWG or kcmil conductor size (e.g. ``10 AWG``, ``1/0 AWG``, ``250 kcmil``).

    Method: AWG n (1/0 … 4/0 as 0 … −3): d = 0.127 mm · 92^((36 − n)/39), A = π/4·d² (ASTM B258 definition of
    the gauge); 1 kcmil = 1000 circular mils = π/4 · (0.0254 mm)² · 1000 = 0.506 71 mm².

    References
    ----------
    ASTM B258 (American Wire Gauge definition; from memory for the edition); NEC Chapter 9, Table 8 lists the
    same areas (e.g. 12 AWG 3.31 mm², 1/0 AWG 53.5 mm²; docs/references.md K46).
    """
    m = _AWG_PATTERN.match(size)
    if m:
        token = m.group(1)
        n = 1 - int(token[0]) if "/" in token else int(token)
        if not -3 <= n <= 40:
            raise ValueError(f"AWG size {size!r} out of range (4/0 … 40)")
        d = 0.127e-3 * 92.0 ** ((36 - n) / 39)
        return math.pi / 4.0 * d * d
    m = _KCMIL_PATTERN.match(size)
    if m:
        return float(m.group(1)) * KCMIL
    raise ValueError(f"unknown conductor size {size!r}; write e.g. '10 AWG', '1/0 AWG' or '250 kcmil'")


@method(returns="voltage", current="current", length="length", area="area")
def voltage_drop_dc(current: float, length: float, area: float, material: str = "copper") -> float:
    """Return the voltage drop u [V] of a two-wire DC circuit (out and return conductor).

    Parameters
    ----------
    current : circuit current [A] (DC motor: armature current)
    length : one-way route length L [m]
    area : conductor cross-section S [m²] per pole (parallel conductors: their sum)
    material : ``copper`` or ``aluminium`` (IEC 60364-5-52 Annex G resistivity ρ1)

    Method: u = 2·R·I with R = ρ1·L/S; no reactive term on DC. The relative drop is u/U (rated armature voltage).

    References
    ----------
    Ohm's law over both conductors; ρ1 from IEC 60364-5-52 Annex G (docs/references.md K33, R37).
    """
    return 2.0 * _annex_g_resistivity(material) * length / area * current


@method(returns="current", fault_level="apparent_power", voltage="voltage")
def prospective_short_circuit_current(fault_level: float, voltage: float) -> float:
    """Return the symmetrical prospective short-circuit current [A] from a three-phase fault level.

    Parameters
    ----------
    fault_level : short-circuit power S_k at the point of connection [VA]
    voltage : nominal line-to-line voltage [V]

    Method: I_k = S_k ÷ (√3·U_n), the definition of the short-circuit power S_k = √3·U_n·I_k (IEC 60909-0).
    The impedance of the cable between the point of connection and the equipment is neglected, which can only
    make I_k larger (conservative for a rating check).

    References
    ----------
    IEC 60909-0:2016, definition of the initial symmetrical short-circuit power (from memory for the clause);
    docs/references.md R47.
    """
    return fault_level / (SQRT3 * voltage)


@method(returns="fraction", fault_level="apparent_power", rated_power="apparent_power")
def short_circuit_ratio(fault_level: float, rated_power: float) -> float:
    """Return a short-circuit ratio [1]: the fault level over the equipment's (or load's) apparent power.

    Parameters
    ----------
    fault_level : short-circuit power S_sc at the point of connection [VA]
    rated_power : apparent power of the equipment S_equ = √3·U·I_in (IEC 61000-3-12 R_sce), or of the maximum
        demand load (IEEE 519 I_sc/I_L, the same ratio in currents) [VA]

    Method: R = S_sc ÷ S_equ.

    References
    ----------
    IEC 61000-3-12:2011, definition of R_sce; IEEE 519-2014, I_sc/I_L (docs/references.md R48).
    """
    return fault_level / rated_power


# Typical input current THD of a drive's front end at rated load, by kind. Labelled typical values, common
# practice (manufacturers' application guides give 80-130 % with no choke, 30-50 % with a DC or AC choke of
# about 3-5 %, under 5 % for an active front end): the measured or stated value of the drive replaces them.
TYPICAL_INPUT_THD = {
    "six-pulse-no-choke": 0.90,
    "six-pulse-dc-choke": 0.40,
    "six-pulse-ac-choke": 0.40,
    "twelve-pulse": 0.12,
    "active-front-end": 0.05,
}

# IEC 61000-3-12:2011 Table 3 (balanced three-phase equipment, 16 A < I ≤ 75 A per phase): minimum R_sce →
# limit of the total harmonic current THC/I_ref. From memory (status M); the partial-weighted and the individual
# 5th/7th/11th/13th limits of the same table are not applied.
IEC_61000_3_12_THC = ((33.0, 0.13), (66.0, 0.16), (120.0, 0.22), (250.0, 0.37), (350.0, 0.48))

# IEEE 519-2014 Table 2 (120 V – 69 kV): I_sc/I_L upper bound → total demand distortion TDD limit.
# From memory (status M).
IEEE_519_TDD = ((20.0, 0.05), (50.0, 0.08), (100.0, 0.12), (1000.0, 0.15), (math.inf, 0.20))


@method(returns="fraction", short_circuit_ratio="fraction")
def iec_61000_3_12_thc_limit(short_circuit_ratio: float) -> float | None:
    """Return the IEC 61000-3-12 THC limit [1] for balanced three-phase equipment at a given R_sce; None below 33.

    Parameters
    ----------
    short_circuit_ratio : R_sce of the equipment at its point of connection [1]

    Method: Table 3 step for the largest tabulated R_sce not above the given one (the standard allows linear
    interpolation between rows; the step is the conservative reading); below R_sce = 33 the table gives no limit
    (the equipment needs the network operator's agreement).

    References
    ----------
    IEC 61000-3-12:2011 Table 3 (values from memory, docs/references.md R48: status M).
    """
    limit = None
    for rsce, thc in IEC_61000_3_12_THC:
        if short_circuit_ratio >= rsce * (1 - 1e-9):
            limit = thc
    return limit


@method(returns="fraction", short_circuit_ratio="fraction")
def ieee_519_tdd_limit(short_circuit_ratio: float) -> float:
    """Return the IEEE 519 TDD limit [1] at the point of common coupling for a ratio I_sc/I_L.

    Parameters
    ----------
    short_circuit_ratio : I_sc/I_L at the PCC [1]

    Method: Table 2 row whose I_sc/I_L band holds the ratio: < 20 → 5 %, 20–50 → 8 %, 50–100 → 12 %,
    100–1000 → 15 %, > 1000 → 20 %.

    References
    ----------
    IEEE 519-2014 Table 2, 120 V through 69 kV (values from memory, docs/references.md R48: status M).
    """
    for upper, tdd in IEEE_519_TDD:
        if short_circuit_ratio < upper:
            return tdd
    return IEEE_519_TDD[-1][1]


def typical_input_thd(front_end: str) -> float:
    """Return a typical input current THD [1] at rated load for a drive's front-end kind (labelled typical).

    Parameters
    ----------
    front_end : ``six-pulse-no-choke``, ``six-pulse-dc-choke``, ``six-pulse-ac-choke``, ``twelve-pulse`` or
        ``active-front-end``

    Method: table look-up of typical values (90 %, 40 %, 40 %, 12 %, 5 %); the drive's stated THD replaces it.

    References
    ----------
    Common practice (drive makers' harmonic application notes; ranges 80–130 %, 30–50 %, 30–50 %, 10–15 %, 3–5 %);
    docs/references.md R48 (status C).
    """
    if front_end not in TYPICAL_INPUT_THD:
        raise ValueError(f"unknown front end {front_end!r}; use one of {', '.join(TYPICAL_INPUT_THD)}")
    return TYPICAL_INPUT_THD[front_end]
