"""Write a seeded corpus of realistic drive specifications, for the benchmark and for load tests.

Run: python bench/generate.py OUT_DIR --count N --seed S

Each spec is drawn from its own generator seeded by (seed, index), so the corpus of
1000 specs is the first 1000 files of the corpus of 10000 with the same seed. The
specs are set in invented plants; every figure is invented, but follows the trade's
rules of thumb so that a drives engineer reads them as plausible: induction-motor slip
falling with size, efficiency near the IE3 values, torque from power and speed, gear
ratios 5–60, servo back-EMF below the DC bus at top speed, DC armature voltage within
the bridge's reach. About 15 % of the specs carry one deliberate mistake, and
``manifest.json`` in OUT_DIR says which (the benchmark and tests read it).
"""

from __future__ import annotations

import argparse
import json
import math
import random
import re
import sys
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # the repository, when run as a script
from rulecheck.physics.efficiency_tables import RATED_OUTPUTS_50HZ_KW, TABLE_50HZ  # noqa: E402

G = 9.80665  # standard gravity [m/s^2] (CGPM 1901)
RPM = 2 * math.pi / 60  # rad/s per r/min
HP = 745.69987  # W per mechanical horsepower (NIST SP 811 B.8)
LBF_FT = 1.3558179  # N*m per lbf*ft (NIST SP 811 B.8)
LB_FT2 = 0.04214011  # kg*m^2 per lb*ft^2 (NIST SP 811 B.8)
LB = 0.45359237  # kg per lb
LBF = 4.4482216  # N per lbf
INCH = 0.0254  # m
FOOT = 0.3048  # m

MISTAKE_RATE = 0.15
PROFILE_RATE = 0.12

__all__ = ["GeneratedSpec", "generate", "generate_one", "main"]


# --- figures of the trade --------------------------------------------------------------------------------

# IE3 efficiency of 4-pole 50 Hz motors by rated power, 1.5 kW up: the table the efficiency rule uses (demo data)
_IE3_4POLE = [(p, e) for p, e in zip(RATED_OUTPUTS_50HZ_KW, TABLE_50HZ[3][4], strict=True) if p >= 1.5]
_IEC_POWERS_KW = [p for p, _ in _IE3_4POLE]
_NEMA_POWERS_HP = [2, 3, 5, 7.5, 10, 15, 20, 25, 30, 40, 50, 60, 75, 100, 125, 150, 200, 250]
# IEC frame of a 4-pole motor by rated power (common practice, IEC 60072-1 sizes)
_IEC_FRAMES = ["90L", "100L", "100L", "112M", "132S", "132M", "160M", "160L", "180M", "180L", "200L", "225S",
               "225M", "250M", "280S", "280M", "315S", "315M", "315L", "315L"]
_NEMA_FRAMES = ["145T", "182T", "184T", "213T", "215T", "254T", "256T", "284T", "286T", "324T", "326T", "364T",
                "365T", "404T", "405T", "444T", "445T", "447T"]
_DRIVE_CURRENTS = [2.6, 4.1, 5.6, 7.2, 9.5, 12.5, 16, 23, 31, 38, 46, 61, 72, 87, 105, 145, 170, 205, 245, 300,
                   370, 440, 530, 640]
_CABLE_AREAS = [1.5, 2.5, 4, 6, 10, 16, 25, 35, 50, 70, 95, 120, 150, 185, 240]
_SERVO_TORQUES = [1.3, 2.4, 3.2, 4.8, 6.4, 9.5, 12, 16, 22, 28, 35]
_DC_POWERS_KW = [15, 22, 30, 45, 55, 75, 90, 110, 132, 160, 200, 250]
_DC_POWERS_HP = [20, 30, 40, 50, 60, 75, 100, 125, 150, 200, 250, 300]


@dataclass
class Archetype:
    """A kind of drive train: machine, drive, load model, where it sits in the plant, how common it is."""

    name: str
    motor: str  # induction | pm-synchronous | dc
    drive: str  # inverter | direct-on-line | soft-starter | dc-converter
    load: str  # load model
    folders: tuple[str, ...]
    weight: float
    titles: tuple[str, ...]


ARCHETYPES = [
    Archetype("pump-inverter", "induction", "inverter", "quadratic",
              ("northfield-works/water-treatment", "harbour-terminal/utilities/pumps"), 14,
              ("Raw water lift pump", "Filter backwash pump", "Cooling water circulation pump", "Sump pump")),
    Archetype("fan-dol", "induction", "direct-on-line", "quadratic",
              ("northfield-works/hvac", "eastgate-mill/ventilation"), 8,
              ("Boiler house supply fan", "Dust extraction fan", "Roof exhaust fan")),
    Archetype("pump-soft-starter", "induction", "soft-starter", "quadratic",
              ("harbour-terminal/utilities/pumps", "quarry-ridge/dewatering"), 7,
              ("Dewatering pump", "Fire water jockey pump", "Ballast transfer pump")),
    Archetype("compressor-dol", "induction", "direct-on-line", "constant-torque",
              ("eastgate-mill/utilities", "quarry-ridge/workshop"), 5,
              ("Instrument air compressor", "Reciprocating service-air compressor")),
    Archetype("conveyor", "induction", "inverter", "conveyor",
              ("harbour-terminal/bulk-handling", "quarry-ridge/crushing/conveyors"), 14,
              ("Clinker belt conveyor", "Stacker feed conveyor", "Crusher discharge conveyor", "Ship loader belt")),
    Archetype("hoist", "induction", "inverter", "hoist",
              ("harbour-terminal/cranes", "eastgate-mill/maintenance-bay"), 10,
              ("Main hoist, bay crane", "Auxiliary hoist", "Goods lift hoist")),
    Archetype("winder", "induction", "inverter", "constant-power",
              ("eastgate-mill/paper-line-2", "foil-plant/slitting"), 7,
              ("Rewinder drum drive", "Slitter rewind shaft", "Centre winder, reel 2")),
    Archetype("mixer", "induction", "inverter", "points",
              ("northfield-works/batch-plant",), 6,
              ("Paddle mixer", "Dough kneader", "Slurry agitator")),
    Archetype("screw-axis", "pm-synchronous", "inverter", "lead-screw",
              ("foil-plant/packaging/line-3", "northfield-works/assembly/cell-4"), 9,
              ("Press ram axis", "Vertical pick axis Z", "Carriage feed axis X")),
    Archetype("index-table", "pm-synchronous", "inverter", "constant-torque",
              ("foil-plant/packaging/line-3", "northfield-works/assembly/cell-4"), 6,
              ("Rotary index table", "Cutter drum drive", "Labeller turret")),
    Archetype("extruder-dc", "dc", "dc-converter", "constant-torque",
              ("foil-plant/extrusion",), 5, ("Extruder main drive", "Compounder screw drive")),
    Archetype("mill-dc", "dc", "dc-converter", "points",
              ("eastgate-mill/rolling-stand",), 4, ("Roughing stand drive", "Calender roll drive")),
    Archetype("winder-dc", "dc", "dc-converter", "constant-power",
              ("eastgate-mill/paper-line-2", "foil-plant/slitting"), 5, ("Unwind stand", "Foil rewind drive")),
]

MISTAKES = ("rated-torque-off", "synchronous-speed", "missing-unit", "efficiency-no-percent", "unknown-key",
            "duplicate-key", "gearbox-too-small", "back-emf-over-bus")
# the check that should find each mistake (loader and schema checks, then design rules)
EXPECTED_FINDING = {"rated-torque-off": "nameplate-power-torque-speed", "synchronous-speed": "induction-pole-slip",
                    "missing-unit": "units-and-dimensions", "efficiency-no-percent": "spec-schema",
                    "unknown-key": "spec-schema", "duplicate-key": "yaml-syntax",
                    "gearbox-too-small": "gearbox-service-factor", "back-emf-over-bus": "pm-uncontrolled-generation"}


# --- number and quantity text ----------------------------------------------------------------------------

def sig(x: float, n: int = 3) -> str:
    """Return ``x`` rounded to ``n`` significant digits, written without an exponent."""
    if x == 0 or not math.isfinite(x):
        return "0"
    places = n - 1 - math.floor(math.log10(abs(x)))
    text = f"{round(x, places):.{max(0, places)}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def q(value: float, unit: str, n: int = 3) -> str:
    """Return a quantity string such as '7.5 kW' from a value already in ``unit``."""
    return f"{sig(value, n)} {unit}"


@dataclass
class Units:
    """How one spec writes its quantities: SI or US customary, with a writer's own habits."""

    customary: bool
    rng: random.Random
    speed_unit: str = "r/min"
    hp: str = "hp"  # 'hp' as most datasheets write it, or the explicit 'hp_mech'

    def power(self, w: float) -> str:
        if self.customary:
            return q(w / HP, self.hp)
        return q(w, "W") if w < 1000 else q(w / 1000, "kW")

    def torque(self, nm: float, n: int = 3) -> str:
        if self.customary:
            return q(nm / LBF_FT * 12, "lbf*in", n) if nm < 5 else q(nm / LBF_FT, "lbf*ft", n)
        return q(nm / 1000, "kN*m", n) if nm >= 20000 else q(nm, "N*m", n)

    def speed(self, rad_s: float, n: int = 4) -> str:
        return q(rad_s / RPM, self.speed_unit, n)

    def inertia(self, j: float) -> str:
        if self.customary:
            return q(j / LB_FT2 * 144, "lb*in^2") if j < 0.005 else q(j / LB_FT2, "lb*ft^2")
        return q(j * 1e4, "kg*cm^2") if j < 0.01 else q(j, "kg*m^2")

    def mass(self, kg: float) -> str:
        if self.customary:
            return q(kg / LB, "lb")
        return q(kg / 1000, "t") if kg >= 10000 else q(kg, "kg")

    def length(self, m: float) -> str:
        if self.customary:
            return q(m / INCH, "in") if m < 3 else q(m / FOOT, "ft")
        return q(m * 1000, "mm") if m < 0.1 else q(m, "m")

    def altitude(self, m: float) -> str:
        return q(m / FOOT, "ft", 2) if self.customary else q(m, "m", 2)

    def velocity(self, m_s: float) -> str:
        if self.customary:
            return q(m_s / FOOT * 60, "ft/min")
        return q(m_s * 60, "m/min") if self.rng.random() < 0.3 else q(m_s, "m/s")

    def force(self, n: float) -> str:
        if self.customary:
            return q(n / LBF, "lbf")
        return q(n / 1000, "kN") if n >= 10000 else q(n, "N")

    def temperature(self, deg_c: float) -> str:
        return q(deg_c * 9 / 5 + 32, "degF", 3) if self.customary else q(deg_c, "degC", 2)

    def torque_constant(self, nm_a: float) -> str:
        return q(nm_a / LBF_FT * 12, "lbf*in/A") if self.customary else q(nm_a, "N*m/A")


def pick_at_least(series: list[float], value: float) -> float:
    """Return the first member of ``series`` that is at least ``value`` (the largest if none)."""
    for s in series:
        if s >= value:
            return s
    return series[-1]


def round_up(x: float, n: int = 2) -> float:
    """Return ``x`` rounded up to ``n`` significant digits (catalogue sizes round up)."""
    if x <= 0:
        return x
    step = 10 ** (math.floor(math.log10(x)) - n + 1)
    return math.ceil(x / step - 1e-9) * step


# --- one spec ----------------------------------------------------------------------------------------------

@dataclass
class Train:
    """SI facts of the drive train being generated, kept beside the YAML mapping."""

    t_n: float = 0.0  # motor rated torque [N*m]
    w_n: float = 0.0  # motor rated speed [rad/s]
    w_max: float = 0.0  # motor max safe speed [rad/s]
    w_top: float = 0.0  # motor speed at the load's top speed [rad/s]
    j_motor: float = 0.0  # [kg*m^2]
    t_peak: float = 0.0  # motor peak torque [N*m]
    ratio: float = 1.0
    gear_eff: float = 1.0
    gearbox: bool = False
    t_run_motor: float = 0.0  # running load torque at the motor shaft [N*m]
    j_load_motor: float = 0.0  # load inertia referred to the motor shaft [kg*m^2]
    reversing: bool = False  # duty runs in both directions (hoists lower)
    w_fw: float = 0.0  # DC: top of the field-weakening range [rad/s]
    title: str = ""
    ambient: float = 40.0  # site ambient [degC]
    altitude: float = 0.0  # site altitude [m]
    k_site: float = 1.0  # conservative estimate of the site's motor derating, sized for by the designer
    t_motor_max: float = 0.0  # most torque the motor can give (breakdown or peak) [N*m]
    vertical: bool = False  # gravity acts on the load; the motor brake holds it at rest


@dataclass
class GeneratedSpec:
    """One generated spec: where it goes, its YAML text, an optional profile CSV, and what it is."""

    path: str
    text: str
    profile: tuple[str, str] | None  # (file name beside the spec, CSV text)
    meta: dict[str, Any] = field(default_factory=dict)


def _supply(u: Units, rng: random.Random, dol: bool) -> dict[str, Any]:
    s: dict[str, Any] = {"voltage": "480 V" if u.customary else "400 V", "frequency": "60 Hz" if u.customary else
                         "50 Hz", "phases": 3}
    if dol:
        # a motor on the line sees the whole band: such sites declare a tight one (IEC zone B, NEMA MG 1 12.44)
        s["voltage_tolerance"] = "4 %" if u.customary else "5 %"
        s["frequency_tolerance"] = "1 %"
    else:
        s["voltage_tolerance"] = "10 %"
        if rng.random() < 0.3:
            s["frequency_tolerance"] = "2 %"
    if dol or rng.random() < 0.2:
        s["fault_level"] = f"{rng.choice([8, 10, 15, 20, 25, 35, 50])} MVA"
    if rng.random() < 0.15:
        s["source"] = "grid"
    return s


def _induction(a: Archetype, u: Units, rng: random.Random, tr: Train) -> dict[str, Any]:
    f = 60.0 if u.customary else 50.0
    v = 460.0 if u.customary else 400.0
    poles = rng.choice([2, 4, 4, 4, 6]) if a.load == "quadratic" else rng.choice([4, 4, 4, 6])
    if a.load == "hoist":
        poles = 4
    if u.customary:
        hp = rng.choice(_NEMA_POWERS_HP[:14])
        p, k = hp * HP, _NEMA_POWERS_HP.index(hp)
        frame = _NEMA_FRAMES[min(k, len(_NEMA_FRAMES) - 1)]
    else:
        p_kw = rng.choice(_IEC_POWERS_KW[:17])
        p, k = p_kw * 1000, _IEC_POWERS_KW.index(p_kw)
        frame = _IEC_FRAMES[k]
    p_kw = p / 1000
    # slip falls with size (common practice): ~5 % at 1.5 kW, ~1.2 % at 200 kW
    slip = 0.06 / p_kw ** 0.3 * rng.uniform(0.9, 1.1)
    sync = 120 * f / poles
    n_rated = round(sync * (1 - slip))
    eff_table = _interp_log([(pp, e) for pp, e in _IE3_4POLE], p_kw)
    eff = max(85.0, min(96.5, eff_table + rng.uniform(0.0, 0.6) - (0.5 if poles != 4 else 0.0)))
    pf = min(0.9, 0.76 + 0.03 * math.log(p_kw)) + {2: 0.03, 4: 0.0, 6: -0.05}[poles]
    current = p / (math.sqrt(3) * v * eff / 100 * pf)
    w_n = n_rated * RPM
    t_n = p / w_n
    j = 0.0035 * p_kw ** 1.15 * {2: 0.5, 4: 1.0, 6: 1.6}[poles] * rng.uniform(0.85, 1.15)
    n_max = {2: rng.choice([3600, 4200, 4500]), 4: rng.choice([3000, 3000, 3600]), 6: rng.choice([2400, 3000])}[poles]
    if p_kw > 100:
        n_max = min(n_max, 2 * sync)
    tr.t_n, tr.w_n, tr.w_max, tr.j_motor = t_n, w_n, n_max * RPM, j
    breakdown = t_n * rng.uniform(2.3, 3.1)
    tr.t_motor_max = breakdown
    tr.t_peak = min(breakdown * 0.7, 1.5 * t_n) if a.drive == "inverter" else breakdown * 0.8
    m: dict[str, Any] = {
        "kind": "induction", "rated_power": u.power(p), "rated_voltage": f"{v:.0f} V",
        "rated_current": q(current, "A"), "rated_frequency": f"{f:.0f} Hz", "rated_speed": u.speed(w_n),
        "poles": poles,
    }
    if rng.random() < 0.7:
        m["rated_torque"] = u.torque(t_n)
    m["power_factor"] = round(pf, 2)
    m["efficiency"] = f"{eff:.1f} %"
    if poles == 4 and not u.customary and eff >= eff_table:
        m["efficiency_class"] = "IE3"
    m["connection"] = "delta" if p_kw >= 4 or u.customary else "star"
    m["design"] = "B" if u.customary else "N"
    m["frame"] = frame
    m["breakdown_torque"] = u.torque(breakdown)
    if a.drive != "inverter":
        m["locked_rotor_torque"] = u.torque(t_n * rng.uniform(1.8, 2.6))
        m["locked_rotor_current"] = q(current * rng.uniform(6.0, 7.6), "A")
        m["safe_stall_time"] = f"{rng.choice([8, 10, 12, 15, 20])} s"
    m["max_speed"] = u.speed(n_max * RPM)
    m["inertia"] = u.inertia(j)
    m["service_factor"] = 1.15 if u.customary else 1.0
    if a.drive == "inverter":
        m["inverter_rated"] = True
        # reinforced inverter-grade winding insulation, chosen for the cable length (common practice)
        m["insulation_peak_voltage"] = "2000 V" if u.customary else "1800 V"
        if a.load == "constant-power" or (a.load in ("hoist", "points") and rng.random() < 0.5):
            m["cooling"] = "forced"  # winders and slow heavy drives get a separate fan (common practice)
        else:
            m["cooling"] = "self-ventilated"
        if rng.random() < 0.3:
            m["insulated_bearing"] = p_kw >= 55
    else:
        m["cooling"] = "self-ventilated"
    m["enclosure"] = rng.choice(["IP55", "IP55", "IP56"]) if a.load != "quadratic" or rng.random() < 0.8 else "IP65"
    m["thermal_protection"] = rng.choice(["ptc", "ptc", "pt100", "none"]) if a.drive == "inverter" else \
        rng.choice(["ptc", "none"])
    if a.load == "hoist":
        m["duty_type"] = "S3"
        m["duty_cdf"] = rng.choice(["40 %", "60 %"])
        m["brake"] = {"kind": "spring-applied", "static_torque": u.torque(t_n * rng.uniform(1.6, 2.2), 2)}
    return m


def _interp_log(table: list[tuple[float, float]], x: float) -> float:
    """Return the table value at ``x``, interpolated on log(x) (efficiency curves are near-linear there)."""
    if x <= table[0][0]:
        return table[0][1]
    for (x0, y0), (x1, y1) in zip(table, table[1:], strict=False):
        if x <= x1:
            return y0 + (y1 - y0) * math.log(x / x0) / math.log(x1 / x0)
    return table[-1][1]


def _pm(a: Archetype, u: Units, rng: random.Random, tr: Train, v_supply: float) -> dict[str, Any]:
    t_n = rng.choice(_SERVO_TORQUES)
    n_rated = rng.choice([2000, 3000, 3000]) if t_n > 10 else rng.choice([3000, 3000, 4500])
    n_max = round(n_rated * rng.uniform(1.15, 1.3) / 100) * 100
    # Ke so that the line-to-line RMS back-EMF at top speed is 50–68 % of the supply voltage (common practice:
    # headroom for the IR and L drops, and uncontrolled generation stays below the bus)
    ke = v_supply * rng.uniform(0.50, 0.68) / (n_max / 1000)
    kt = ke / 60.46  # Kt = √3·Ke[V·s/rad]; 1000 r/min = 104.72 rad/s, √3/104.72 = 1/60.46
    current = t_n / kt
    w_n = n_rated * RPM
    p = t_n * w_n
    j = 1.2e-4 * t_n ** 1.1 * rng.uniform(0.7, 1.4)
    peak = t_n * rng.uniform(3.0, 4.0)
    tr.t_n, tr.w_n, tr.w_max, tr.j_motor, tr.t_peak, tr.t_motor_max = t_n, w_n, n_max * RPM, j, peak * 0.9, peak
    m: dict[str, Any] = {
        "kind": "pm-synchronous", "rated_power": u.power(p), "rated_voltage": "400 V" if not u.customary else
        "460 V", "rated_current": q(current, "A"), "rated_speed": u.speed(w_n), "poles": rng.choice([8, 10]),
        "rated_torque": u.torque(t_n), "efficiency": f"{rng.uniform(88, 94):.1f} %",
        "peak_torque": u.torque(peak), "stall_torque": u.torque(t_n * rng.uniform(1.05, 1.15)),
        "max_speed": u.speed(n_max * RPM), "inertia": u.inertia(j),
        "back_emf_constant": q(ke, "V/krpm"), "back_emf_convention": "line-to-line-rms",
        "torque_constant": u.torque_constant(kt), "peak_current": q(peak / kt * 1.1, "A"),
        "inverter_rated": True, "insulation_peak_voltage": "1600 V", "cooling": "non-ventilated", "enclosure": "IP65",
        "thermal_protection": rng.choice(["pt1000", "kty", "ptc"]),
        "thermal_time_constant": f"{rng.choice([15, 20, 25, 30, 40])} min",
    }
    m["rated_frequency"] = q(n_rated * m["poles"] / 120, "Hz")
    if "vertical" in tr.title.lower() or (a.load == "lead-screw" and rng.random() < 0.3):
        m["brake"] = {"kind": "spring-applied", "static_torque": u.torque(t_n * rng.uniform(1.3, 1.8), 2),
                      "inertia": u.inertia(j * rng.uniform(0.05, 0.15))}
    return m


def _dc(a: Archetype, u: Units, rng: random.Random, tr: Train) -> dict[str, Any]:
    if u.customary:
        hp = rng.choice(_DC_POWERS_HP)
        p = hp * HP
        va = 500.0
    else:
        p = rng.choice(_DC_POWERS_KW) * 1000
        va = 420.0
    p_kw = p / 1000
    eff = min(93.0, 85.0 + 2.0 * math.log(p_kw / 15) + rng.uniform(0, 1))
    ia = p / (va * eff / 100)
    ra = va * rng.uniform(0.03, 0.07) / ia
    n_base = rng.choice([1000, 1150, 1500, 1750, 2000])
    weakening = a.load == "constant-power" or rng.random() < 0.3
    n_fw = round(n_base * rng.uniform(1.5, 2.0) / 50) * 50 if weakening else n_base
    n_max = round(max(n_fw, n_base) * 1.2 / 100) * 100
    w_n = n_base * RPM
    t_n = p / w_n
    j = 0.01 * p_kw ** 1.1 * rng.uniform(0.8, 1.2)
    tr.t_n, tr.w_n, tr.w_max, tr.j_motor, tr.w_fw = t_n, w_n, n_max * RPM, j, n_fw * RPM
    tr.t_peak = t_n * 1.5
    tr.t_motor_max = t_n * rng.uniform(1.6, 2.0)
    field_: dict[str, Any] = {"kind": "separate"}
    if weakening:
        field_["weakening_speed_max"] = u.speed(n_fw * RPM)
    m: dict[str, Any] = {
        "kind": "dc", "rated_power": u.power(p), "rated_voltage": f"{va:.0f} V", "rated_current": q(ia, "A"),
        "rated_speed": u.speed(w_n), "poles": 4,
        "efficiency": f"{eff:.1f} %", "peak_torque": u.torque(tr.t_motor_max),
        "max_speed": u.speed(n_max * RPM), "inertia": u.inertia(j),
        "armature_voltage": f"{va:.0f} V", "armature_current": q(ia, "A"), "armature_resistance": q(ra, "ohm"),
        "field": field_, "cooling": "forced", "enclosure": rng.choice(["IP23", "IP44", "IP54"]),
        "thermal_protection": rng.choice(["ptc", "thermostat"]),
    }
    if rng.random() < 0.6:
        m["rated_torque"] = u.torque(t_n)
    if rng.random() < 0.3:
        m["brush_drop"] = "2 V"
    return m


def _drive(a: Archetype, u: Units, rng: random.Random, motor: dict[str, Any], current: float, tr: Train,
           braking: bool) -> dict[str, Any]:
    v_class = 480 if u.customary else 400
    if a.drive == "direct-on-line":
        d: dict[str, Any] = {"kind": "direct-on-line", "rated_current": q(pick_at_least(_DRIVE_CURRENTS, current * 1.1),
                                                                          "A")}
        d["motor_overload"] = {"kind": "relay", "setting": q(current * rng.uniform(1.0, 1.05), "A")}
        return d
    if a.drive == "soft-starter":
        return {"kind": "soft-starter", "rated_current": q(pick_at_least(_DRIVE_CURRENTS, current * 1.05), "A"),
                "overload": {"current": "350 %", "duration": f"{rng.choice([10, 15, 20])} s"},
                "ambient_max": u.temperature(rng.choice([t for t in (40, 45, 50) if t >= tr.ambient])),
                "motor_overload": {"kind": "electronic", "setting": q(current, "A")}}
    if a.drive == "dc-converter":
        d = {"kind": "dc-converter", "rated_current": q(pick_at_least(_DRIVE_CURRENTS, current * rng.uniform(1.0, 1.3)),
                                                        "A"),
             "overload": {"current": "150 %", "duration": "60 s"},
             "quadrants": 1 if a.name == "extruder-dc" else 4}
        if rng.random() < 0.5:
            d["firing_angle_min"] = rng.choice(["15 deg", "20 deg"])
        d["ambient_max"] = u.temperature(rng.choice([t for t in (40, 45, 50) if t >= tr.ambient]))
        d["motor_overload"] = {"kind": "electronic", "setting": q(current, "A")}
        return d
    servo = motor["kind"] == "pm-synchronous"
    normal = a.load == "quadratic"
    rated = pick_at_least(_DRIVE_CURRENTS, current * rng.uniform(1.0, 1.4))
    d = {"kind": "inverter", "rated_current": q(rated, "A"), "duty_class": "normal" if normal else "heavy"}
    if servo:
        d["overload"] = {"current": "300 %", "duration": f"{rng.choice([2, 3, 5])} s"}
    else:
        d["overload"] = {"current": "110 %" if normal else "150 %", "duration": "60 s", "period": "300 s"}
    f_needed = tr.w_top / tr.w_n * (60 if u.customary else 50)
    d["output_voltage_max"] = f"{v_class} V"
    if not servo:
        d["output_frequency_max"] = f"{max(f_needed * 1.1, rng.choice([60, 80, 100, 120])):.0f} Hz"
    d["switching_frequency"] = f"{rng.choice([4, 4, 8] if not servo else [8, 10, 16])} kHz"
    d["control"] = ("servo" if servo else "closed-loop-vector" if a.load == "hoist" else
                    rng.choice(["sensorless-vector", "v-f"]) if normal else "sensorless-vector")
    if a.load == "constant-power":
        d["field_weakening"] = True
    d["dc_bus_trip"] = f"{rng.choice([830, 850, 860]) if u.customary else rng.choice([800, 810, 820])} V"
    if rng.random() < 0.4:
        d["dc_bus_capacitance"] = q(rated * rng.uniform(0.03, 0.06), "mF", 2)
    if servo and rng.random() < 0.6:
        d["active_short_circuit"] = True
    d["ambient_max"] = u.temperature(rng.choice([t for t in (40, 45, 50) if t >= tr.ambient]))
    if braking:
        p_n = tr.t_n * tr.w_n
        chopper = 780.0 if not u.customary else 820.0
        r = chopper ** 2 / (1.6 * p_n) * rng.uniform(0.8, 0.95)
        d["braking"] = {"kind": "resistor", "resistance": q(r, "ohm", 2),
                        "power": u.power(p_n * rng.uniform(0.2, 0.5)),
                        "chopper_threshold": f"{chopper:.0f} V",
                        "resistance_min": q(r * rng.uniform(0.4, 0.8), "ohm", 2)}
    elif rng.random() < 0.5:
        d["braking"] = {"kind": "none"}
    d["motor_overload"] = {"kind": "electronic", "setting": q(current, "A")}
    return d


def _gearbox(a: Archetype, u: Units, rng: random.Random, tr: Train, kind: str, ratio: float) -> dict[str, Any]:
    eff = {"helical": rng.uniform(96, 97.5), "helical-bevel": rng.uniform(94, 96), "planetary": rng.uniform(95, 97),
           "worm": rng.uniform(70, 88), "belt": rng.uniform(95, 97)}[kind]
    tr.ratio, tr.gear_eff, tr.gearbox = ratio, eff / 100, kind != "belt"
    g: dict[str, Any] = {"kind": kind, "ratio": ratio}
    if kind != "belt":
        g["stages"] = 1 if kind in ("worm",) or ratio < 6 else (2 if ratio < 30 else 3)
    g["efficiency"] = f"{eff:.1f} %"
    if a.load == "hoist":
        g["reverse_efficiency"] = f"{eff - rng.uniform(0.5, 2.0):.1f} %"
        g["self_locking"] = False
    if kind != "belt":
        g["shock"] = {"hoist": "moderate", "points": "moderate"}.get(a.load, "uniform")
        g["hours_per_day"] = rng.choice([8, 16, 24])
    return g


def _gearbox_limits(rng: random.Random, u: Units, tr: Train, g: dict[str, Any], brake_torque: float) -> None:
    """Size the gearbox's ratings once the motor, brake and load are known (a catalogue size that fits)."""
    if g["kind"] == "belt":
        return
    # application service factor by shock and hours (AGMA-style table, common practice) plus the designer's margin
    sf_app = {"uniform": {8: 1.0, 16: 1.15, 24: 1.25}, "moderate": {8: 1.25, 16: 1.4, 24: 1.5}}[g["shock"]]
    sf = sf_app[g["hours_per_day"]] * rng.uniform(1.15, 1.5)
    through = tr.t_n * tr.ratio * tr.gear_eff
    rated = round_up(through * sf)
    # the momentary limit covers the motor's maximum torque and the brake's, whichever is larger
    momentary = max(tr.t_motor_max, brake_torque) * tr.ratio * rng.uniform(1.1, 1.3)
    g["rated_output_torque"] = u.torque(rated, 2)
    g["max_output_torque"] = u.torque(round_up(max(momentary, rated * 1.6)), 2)
    g["input_speed_max"] = u.speed(pick_at_least([3000, 3600, 4000, 4500, 6000], tr.w_top / RPM * 1.15) * RPM)
    g["inertia"] = u.inertia(tr.j_motor * rng.uniform(0.04, 0.15))


def _ratio(rng: random.Random, lo: float, hi: float) -> float:
    """Return a catalogue-like ratio in [lo, hi] (one or two decimals, as on gearbox nameplates)."""
    r = math.exp(rng.uniform(math.log(lo), math.log(hi)))
    return round(r, 2) if r < 10 else round(r, 1)


def _quadratic_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                    w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a pump or fan (torque rising with the square of speed), direct or on a belt.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    if a.drive == "inverter" or rng.random() < 0.6:
        ratio = 1.0
    else:
        ratio = round(rng.uniform(1.2, 2.5), 2)
        trans = _gearbox(a, u, rng, tr, "belt", ratio)
    w_top = tr.w_n if a.drive != "inverter" else w_top
    t_load = tr.t_n * util * ratio * tr.gear_eff
    w_l = w_top / ratio
    load["pump_type"] = "fan" if "fan" in a.name else "centrifugal"
    load["torque_at_speed_max"] = u.torque(t_load)
    load["breakaway_torque"] = u.torque(t_load * rng.uniform(0.05, 0.15), 2)
    load["speed_max"] = u.speed(w_l)
    if a.drive == "inverter":
        load["speed_min"] = u.speed(w_l * rng.uniform(0.4, 0.6))
    load["inertia"] = u.inertia(tr.j_motor * ratio ** 2 * rng.uniform(0.5, 8))
    tr.t_run_motor = t_load / ratio / tr.gear_eff
    tr.j_load_motor = tr.j_motor * rng.uniform(0.5, 8)
    if a.drive != "inverter":
        load["starts_per_hour"] = rng.choice([1, 2, 4, 6])
    return trans, w_l


def _constant_torque_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                          w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a constant-torque load (compressor, extruder, positioning axis) behind a gearbox or belt.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    if a.motor == "pm-synchronous":
        trans = _gearbox(a, u, rng, tr, "planetary", rng.choice([5, 7, 8, 10]))
    elif a.motor == "dc":
        trans = _gearbox(a, u, rng, tr, "helical", _ratio(rng, 8, 25))
    else:
        trans = _gearbox(a, u, rng, tr, "belt", round(rng.uniform(1.5, 3.0), 2))
        w_top = tr.w_n
    t_load = tr.t_n * util * tr.ratio * tr.gear_eff
    w_l = w_top / tr.ratio
    load["pump_type"] = {"compressor-dol": "compressor", "extruder-dc": "extruder"}.get(a.name, None)
    if load["pump_type"] is None:
        del load["pump_type"]
        load["application"] = "positioning"
    load["torque"] = u.torque(t_load)
    load["breakaway_torque"] = u.torque(t_load * rng.uniform(1.1, 1.4))
    load["speed_max"] = u.speed(w_l)
    j_ratio = rng.uniform(1, 8) if a.motor == "pm-synchronous" else rng.uniform(1, 20)
    tr.j_load_motor = tr.j_motor * j_ratio
    load["inertia"] = u.inertia(tr.j_load_motor * tr.ratio ** 2)
    tr.t_run_motor = t_load / tr.ratio / tr.gear_eff
    if a.drive == "direct-on-line":
        load["starts_per_hour"] = rng.choice([4, 6, 10, 15])
    return trans, w_l


def _conveyor_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                   w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a belt conveyor, level or inclined, behind a helical or helical-bevel gearbox.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    trans = _gearbox(a, u, rng, tr, rng.choice(["helical-bevel", "helical-bevel", "helical"]), _ratio(rng, 10, 60))
    d = rng.choice([0.4, 0.5, 0.63, 0.8, 1.0]) if not u.customary else rng.choice([16, 20, 24, 30, 36]) * INCH
    v = w_top / tr.ratio * d / 2
    v = float(sig(v, 3))
    w_l = 2 * v / d
    incline = rng.choice([0, 0, 0, 3, 5, 8, 12])
    mu = rng.choice([0.02, 0.025, 0.03, 0.035])
    eff_l = rng.uniform(0.9, 0.96)
    t_load = tr.t_n * util * tr.ratio * tr.gear_eff * (0.8 if incline else 1.0)
    mass = t_load * 2 / d * eff_l / (G * (math.sin(math.radians(incline)) + mu * math.cos(math.radians(incline))))
    load.update({"mass": u.mass(mass), "incline": f"{incline} deg", "friction_coefficient": mu,
                 "pulley_diameter": u.length(d), "line_speed": u.velocity(v), "efficiency": f"{eff_l * 100:.0f} %"})
    load["speed_min"] = u.speed(w_l * rng.uniform(0.6, 0.8))
    load["inertia"] = u.inertia(tr.j_motor * tr.ratio ** 2 * rng.uniform(1, 4))
    tr.t_run_motor = t_load / tr.ratio / tr.gear_eff
    tr.j_load_motor = mass * (d / 2) ** 2 / tr.ratio ** 2 + tr.j_motor * rng.uniform(1, 4)
    if incline:
        load["vertical"] = True
    return trans, w_l


def _hoist_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a hoist or lift (with counterweight) behind a helical gearbox.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    trans = _gearbox(a, u, rng, tr, "helical", _ratio(rng, 20, 60))
    d = rng.choice([0.3, 0.4, 0.5, 0.63]) if not u.customary else rng.choice([12, 16, 20, 24]) * INCH
    reeving = rng.choice([2, 2, 4, 4, 6])
    w_l = w_top / tr.ratio
    v = float(sig(w_l * d / 2 / reeving, 3))
    w_l = v * reeving * 2 / d
    eff_l = rng.uniform(0.9, 0.95)
    t_load = tr.t_n * util * tr.ratio * tr.gear_eff
    lift = "lift" in tr.title.lower()
    payload = t_load * 2 * reeving * eff_l / (G * d)
    load.update({"mass": u.mass(payload), "drum_diameter": u.length(d), "reeving": reeving,
                 "line_speed": u.velocity(v), "efficiency": f"{eff_l * 100:.0f} %"})
    if lift:
        # counterweight balances the car plus half the payload (common practice); payload figure includes car
        load["counterweight"] = u.mass(payload * 0.5)
        load["mass"] = u.mass(payload * 1.5)
    load["runaway_speed"] = u.speed(w_l * rng.uniform(1.3, 1.6))
    load["acceleration_time"] = f"{rng.choice([2, 3, 4, 5])} s"
    load["deceleration_time"] = load["acceleration_time"]
    tr.t_run_motor = t_load / tr.ratio / tr.gear_eff
    tr.j_load_motor = payload * (d / 2 / reeving) ** 2 / tr.ratio ** 2 + tr.j_motor * 0.5
    load["inertia"] = u.inertia(tr.j_motor * 0.5 * tr.ratio ** 2)
    tr.reversing = True
    return trans, w_l


def _constant_power_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                         w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a centre winder (constant tension, so constant power) behind a helical gearbox.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    trans = _gearbox(a, u, rng, tr, "helical", _ratio(rng, 5, 20))
    if a.motor == "dc":
        w_top = tr.w_fw * rng.uniform(0.9, 1.0)
    else:
        w_top = min(tr.w_n * rng.uniform(1.2, 1.5), tr.w_max * 0.9)
    d_min = rng.choice([0.076, 0.1, 0.15]) if not u.customary else rng.choice([3, 4, 6]) * INCH
    build = rng.uniform(4, 8)
    d_max = d_min * build
    v = float(sig(w_top / tr.ratio * d_min / 2, 3))
    # torque at full roll is the sizing case; it must be within the motor's rated torque
    tension = tr.t_n * util * tr.ratio * tr.gear_eff * 2 / d_max
    load.update({"power": u.power(tension * v), "tension": u.force(tension), "diameter_min": u.length(d_min),
                 "diameter_max": u.length(d_max), "line_speed": u.velocity(v)})
    load["inertia"] = u.inertia(tr.j_motor * tr.ratio ** 2 * rng.uniform(2, 10))
    tr.t_run_motor = tension * d_max / 2 / tr.ratio / tr.gear_eff
    tr.j_load_motor = tr.j_motor * rng.uniform(2, 10)
    w_l = 2 * v / d_min
    return trans, w_l


def _lead_screw_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                     w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a lead-screw axis, direct or on a belt.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    if rng.random() < 0.5:
        ratio = 1.0
    else:
        trans = _gearbox(a, u, rng, tr, "belt", rng.choice([1.5, 2.0, 2.5, 3.0]))
        ratio = tr.ratio
    lead = rng.choice([0.005, 0.01, 0.016, 0.02, 0.025, 0.032]) if not u.customary else rng.choice(
        [0.2, 0.25, 0.5, 1.0]) * INCH
    eta = rng.uniform(0.85, 0.92)
    w_l = w_top / ratio
    v = float(sig(w_l / (2 * math.pi) * lead, 3))
    thrust = tr.t_n * util * ratio * tr.gear_eff * 2 * math.pi * eta / lead
    vertical = "vertical" in tr.title.lower()
    moving = thrust * rng.uniform(0.05, 0.2) / G
    load.update({"thrust": u.force(thrust), "lead": u.length(lead), "screw_efficiency": f"{eta * 100:.0f} %",
                 "moving_mass": u.mass(moving), "line_speed": u.velocity(v), "application": "positioning"})
    if vertical:
        load["vertical"] = True
    load["inertia"] = u.inertia(tr.j_motor * rng.uniform(0.3, 2) * ratio ** 2)
    tr.t_run_motor = tr.t_n * util
    tr.j_load_motor = tr.j_motor * rng.uniform(0.5, 4)
    w_l = 2 * math.pi * v / lead
    return trans, w_l


def _points_load(a: Archetype, u: Units, rng: random.Random, tr: Train, load: dict[str, Any], util: float,
                 w_top: float) -> tuple[dict[str, Any] | None, float]:
    """Fill ``load`` for a load given as torque-speed points.

    Returns the transmission (or None) and the load's top speed [rad/s].
    """
    trans: dict[str, Any] | None = None
    if a.motor == "dc":
        trans = _gearbox(a, u, rng, tr, "helical", _ratio(rng, 5, 15))
    else:
        trans = _gearbox(a, u, rng, tr, rng.choice(["planetary", "helical", "helical-bevel"]), _ratio(rng, 5, 40))
    t_load = tr.t_n * util * tr.ratio * tr.gear_eff
    w_l = w_top / tr.ratio
    a0, a1, a2 = rng.uniform(0.3, 0.6), rng.uniform(0, 0.3), rng.uniform(0, 0.4)
    count = rng.randint(3, 8)
    pts = []
    for k in range(count):
        x = k / (count - 1)
        shape = (a0 + a1 * x + a2 * x * x) / (a0 + a1 + a2)  # rises with speed to t_load at the top
        pts.append({"speed": u.speed(w_l * x), "torque": u.torque(t_load * shape)})
    load["points"] = pts
    load["speed_max"] = u.speed(w_l)
    load["inertia"] = u.inertia(tr.j_motor * tr.ratio ** 2 * rng.uniform(1, 10))
    tr.t_run_motor = t_load / tr.ratio / tr.gear_eff
    tr.j_load_motor = tr.j_motor * rng.uniform(1, 10)
    return trans, w_l


_LOADS = {
    "quadratic": _quadratic_load,
    "constant-torque": _constant_torque_load,
    "conveyor": _conveyor_load,
    "hoist": _hoist_load,
    "constant-power": _constant_power_load,
    "lead-screw": _lead_screw_load,
}


def _load_and_transmission(a: Archetype, u: Units, rng: random.Random, tr: Train
                           ) -> tuple[dict[str, Any], dict[str, Any] | None]:
    """Return the load and transmission sections, sized to the motor already chosen."""
    vertical = a.load == "hoist" or "vertical" in tr.title.lower()
    # share of rated torque the running load takes, sized for the site's derating; loads that the motor also
    # holds at standstill get more headroom because the rms rules count the holding torque
    util = (rng.uniform(0.4, 0.6) if vertical else rng.uniform(0.6, 0.8) if a.load == "quadratic" else
            rng.uniform(0.45, 0.7)) * tr.k_site
    w_top = tr.w_n * rng.uniform(0.9, 1.0)
    load: dict[str, Any] = {"model": a.load}
    load_kind = _LOADS.get(a.load, _points_load)
    trans, w_l = load_kind(a, u, rng, tr, load, util, w_top)
    tr.w_top = w_l * tr.ratio
    load["_w_top"] = w_l  # removed before writing
    return load, trans


def _duty(rng: random.Random, u: Units, tr: Train, w_l: float, w_min: float, count: int, dol: bool,
          cdf_max: float | None = None, braking: bool = True
          ) -> tuple[list[dict[str, Any]], list[tuple[float, float]], float]:
    """Return duty segments at the load shaft, the same as (duration [s], speed_to [rad/s]), and the ramp time [s]."""
    j_total = tr.j_motor + tr.j_load_motor
    w_m = w_l * tr.ratio
    # ramp so that acceleration takes 20–50 % of rated torque (keeps the peak within the overload), never < 0.2 s
    ramp = float(sig(max(0.2, j_total * w_m / (rng.uniform(0.2, 0.4) * tr.t_n), rng.uniform(0.5, 3.0)), 2))
    # without a braking resistor the stop is slow enough for the load to absorb the kinetic energy
    stop_ramp = ramp if braking or tr.t_run_motor <= 0 else float(sig(max(ramp, 3 * j_total * w_m / tr.t_run_motor), 2))
    segs: list[dict[str, Any]] = []
    si: list[tuple[float, float]] = []
    intermittent = cdf_max is not None
    runs = [4, 6, 8, 10, 15, 20, 30] if intermittent else [3, 5, 8, 12, 20, 30, 45, 60, 120]
    dwells = [10, 15, 20, 30, 45, 60] if intermittent else [2, 5, 10, 20, 30]

    def add(duration: float, speed_to: float, label: str, minutes: bool = False) -> None:
        text = f"{duration / 60:.0f} min" if minutes else f"{sig(duration, 2)} s"
        seg = {"duration": text, "speed_to": u.speed(speed_to, 3), "label": label}
        if label == "dwell" and tr.vertical:
            seg["torque"] = u.torque(0.0)  # the holding brake carries the load; the motor is off
        segs.append(seg)
        si.append((float(sig(duration, 2)), speed_to))

    speed = 0.0
    last_run = False
    body = count - 1  # the cycle always ends with a dwell at rest
    while len(segs) < body:
        remaining = body - len(segs)
        if speed == 0.0:
            if remaining >= 3:
                level = w_l if dol or w_min >= w_l else w_l * rng.choice([1.0, 1.0, 0.8, 0.6, 0.5])
                level = max(level, w_min)
                if tr.reversing and rng.random() < 0.5:
                    level = -level  # lowering
                add(max(0.2, ramp * abs(level) / w_l), level, "accelerate")
                speed, last_run = level, False
            else:
                add(rng.choice(dwells), 0.0, "dwell")
            continue
        choice = rng.random()
        if remaining == 1 or (remaining == 2 and last_run) or (last_run and choice < 0.5) or choice < 0.1:
            add(max(0.2, stop_ramp * abs(speed) / w_l), 0.0, "stop")
            speed = 0.0
        elif not last_run or dol:
            run = rng.choice(runs)
            add(run, speed, "run", minutes=run >= 100)
            last_run = True
        else:
            new = math.copysign(max(w_min, w_l * rng.choice([1.0, 0.7, 0.5])), speed)
            if abs(new - speed) < 1e-9:
                new = math.copysign(max(w_min, abs(speed) * 0.6), speed)
            add(max(0.2, ramp * abs(new - speed) / w_l), new, "change speed")
            speed, last_run = new, False
    add(rng.choice(dwells), 0.0, "dwell")
    if cdf_max is not None:
        _stretch_dwells(segs, si, cdf_max)
    for s in segs:
        if rng.random() < 0.6:
            del s["label"]
        elif s["label"] == "dwell" and "torque" in s:
            s["label"] = "dwell, brake set"
    return segs, si, ramp


def _stretch_dwells(segs: list[dict[str, Any]], si: list[tuple[float, float]], cdf_max: float) -> None:
    """Stretch the dwells until the cyclic duration factor is within the motor's rated S3 duty ``cdf_max``."""
    on = sum(d for (d, _), seg in zip(si, segs, strict=True) if seg["label"] != "dwell")
    off = sum(d for (d, _), seg in zip(si, segs, strict=True) if seg["label"] == "dwell")
    needed = on / cdf_max - on
    if needed > off:
        factor = needed / off
        for k, seg in enumerate(segs):
            if seg["label"] == "dwell":
                longer = math.ceil(si[k][0] * factor)
                seg["duration"] = f"{longer} s"
                si[k] = (float(longer), 0.0)


def _segment_count(rng: random.Random) -> int:
    """Return a duty-cycle length: mostly short cycles, some long recorded ones (4–50 segments)."""
    r = rng.random()
    if r < 0.6:
        return rng.randint(4, 10)
    if r < 0.9:
        return rng.randint(11, 25)
    return rng.randint(26, 50)


def _profile_csv(rng: random.Random, u: Units, tr: Train, si: list[tuple[float, float]], rows: int) -> str:
    """Return a measured-looking profile at the motor shaft: the duty cycle sampled, with inertia torque and noise."""
    times, speeds = [0.0], [0.0]
    for duration, speed_to in si:
        times.append(times[-1] + duration)
        speeds.append(speed_to * tr.ratio)
    total = times[-1]
    j = tr.j_motor + tr.j_load_motor
    customary = u.customary and rng.random() < 0.7
    header = "time [s],speed [r/min],torque [lbf*ft]" if customary else "time [s],speed [r/min],torque [N*m]"
    out = [f"# recorded at the motor shaft, {rows} samples", header]
    k = 0
    prev_w = 0.0
    dt = total / (rows - 1)
    for r in range(rows):
        t = r * dt
        while k < len(times) - 2 and t > times[k + 1]:
            k += 1
        t0, t1 = times[k], times[k + 1]
        frac = 0.0 if t1 == t0 else min(1.0, max(0.0, (t - t0) / (t1 - t0)))
        w = speeds[k] + (speeds[k + 1] - speeds[k]) * frac
        accel = 0.0 if r == 0 else (w - prev_w) / dt
        prev_w = w
        moving = abs(w) > 1e-6
        # gravity and friction act whichever way the load moves; at rest only a small holding torque remains
        at_rest = 0.0 if tr.vertical else 0.1 * tr.t_run_motor  # a vertical load rests on its brake
        torque = (tr.t_run_motor if moving else at_rest) + j * accel + rng.gauss(0, 0.01 * tr.t_n)
        measured = w / RPM + rng.gauss(0, 0.5) if moving else 0.0
        out.append(f"{t:.3f},{measured:.1f},{(torque / LBF_FT if customary else torque):.2f}")
    return "\n".join(out) + "\n"


def _site(rng: random.Random, tr: Train) -> None:
    """Choose the site's ambient and altitude; most sites are at reference conditions (≤ 40 °C, ≤ 1000 m)."""
    tr.ambient = rng.choice([25, 30, 35, 40, 40, 40, 45, 50])
    tr.altitude = rng.choice([20, 80, 150, 300, 600, 900, 1200, 1800, 2400])
    # conservative derating estimate (common practice tables run about 0.96 at 45 °C and 0.95 at 1500 m)
    k_ambient = {45: 0.92, 50: 0.85}.get(int(tr.ambient), 1.0)
    k_altitude = {1200: 0.96, 1800: 0.91, 2400: 0.86}.get(int(tr.altitude), 1.0)
    tr.k_site = k_ambient * k_altitude


def _environment(u: Units, rng: random.Random, tr: Train, enclosure: str) -> dict[str, Any]:
    env: dict[str, Any] = {"ambient_max": u.temperature(tr.ambient)}
    if rng.random() < 0.5:
        env["ambient_min"] = u.temperature(rng.choice([-20, -10, 0, 5]))
    env["altitude"] = u.altitude(tr.altitude)
    location = rng.choice(["indoor-clean", "general-industrial", "general-industrial", "outdoor"])
    required = {"indoor-clean": "IP21", "general-industrial": "IP54", "outdoor": "IP55"}[location]
    if required[2] > enclosure[2] or required[3] > enclosure[3]:
        location, required = "indoor-clean", "IP21"  # an open (IP23) machine stands in a clean electrical room
    env["location"] = location
    env["ingress_required"] = required
    return env


def _cable(u: Units, rng: random.Random, current: float, drive: str, servo: bool) -> dict[str, Any]:
    density = lambda a: 8.0 if a <= 10 else 5.0 if a <= 50 else 3.5  # noqa: E731 - A/mm^2, common practice
    area = next((a for a in _CABLE_AREAS if a * density(a) >= 1.25 * current), _CABLE_AREAS[-1])
    length = rng.choice([5, 10, 15, 25]) if servo else rng.choice([15, 25, 40, 60, 80, 120, 150])
    c: dict[str, Any] = {"length": u.length(length) if not u.customary else q(length / FOOT, "ft", 2),
                         "conductor_area": f"{area:g} mm^2", "material": "copper"}
    if drive in ("inverter",):
        c["shielded"] = True
    return c


def _protection(u: Units, rng: random.Random, current: float, hoist: bool) -> dict[str, Any] | None:
    p: dict[str, Any] = {}
    if u.customary and rng.random() < 0.6:
        p = {"code": "nec-2023", "device": "inverse-time-breaker",
             "device_rating": q(pick_at_least([15, 20, 25, 30, 40, 50, 60, 70, 80, 100, 125, 150, 175, 200, 225, 250,
                                               300, 350, 400, 450, 500, 600], current * 2.3), "A"),
             "conductor_ampacity": q(current * rng.uniform(1.7, 2.0), "A")}
    if hoist:
        p.update({"holding_brake_count": rng.choice([1, 2]), "brake_sequencing": True, "brake_test": True,
                  "overspeed_protection": True})
    return p or None


def _duty_or_profile(a: Archetype, u: Units, rng: random.Random, tr: Train, tag: str, motor: dict[str, Any],
                     drive: dict[str, Any], load: dict[str, Any], w_l: float) -> tuple[tuple[str, str] | None, int]:
    """Add the duty to ``load``: segments for most, a measured profile for ~10 %, none for continuous pumps and fans.

    Returns the profile (file name, CSV text) or None, and the number of duty segments written.
    """
    profile = None
    meta_segments = 0
    want_profile = rng.random() < PROFILE_RATE and a.drive != "direct-on-line"
    continuous = a.load == "quadratic" and rng.random() < 0.5
    if want_profile or not continuous:
        w_min = 0.0
        if a.load in ("quadratic",) and a.drive == "inverter":
            w_min = w_l * 0.5
        count = _segment_count(rng)
        cdf = motor.get("duty_cdf")
        segs, si, ramp = _duty(rng, u, tr, w_l, w_min, count, a.drive in ("direct-on-line", "soft-starter"),
                               float(cdf.split()[0]) / 100 * 0.9 if cdf else None,
                               braking=drive.get("braking", {}).get("kind", "none") != "none")
        if want_profile:
            name = f"{tag.lower()}-profile.csv"
            profile = (name, _profile_csv(rng, u, tr, si, rng.randint(300, 3000)))
            load["duty_profile"] = name
        else:
            load["duty"] = segs
            meta_segments = len(segs)
        if "acceleration_time" not in load and a.drive in ("inverter", "dc-converter") and rng.random() < 0.5:
            load["acceleration_time"] = f"{sig(ramp, 2)} s"
    return profile, meta_segments


def generate_one(index: int, seed: int) -> GeneratedSpec:
    """Return spec number ``index`` (0-based) of the corpus with ``seed``; the same inputs give the same spec."""
    rng = random.Random(f"{seed}:{index}")
    if index < len(ARCHETYPES):
        a = ARCHETYPES[index]  # every archetype appears in any corpus of at least 13 specs
    else:
        a = rng.choices(ARCHETYPES, weights=[x.weight for x in ARCHETYPES])[0]
    u = Units(customary=rng.random() < 0.3, rng=rng, speed_unit=rng.choice(["r/min"] * 6 + ["rpm", "min^-1"]),
              hp=rng.choice(["hp", "hp_mech"]))
    tr = Train()
    tag = f"G-{index + 1:06d}"
    tr.title = f"{rng.choice(a.titles)} {rng.randint(1, 9)}"
    _site(rng, tr)
    v_supply = 480.0 if u.customary else 400.0
    motor = (_induction(a, u, rng, tr) if a.motor == "induction" else _pm(a, u, rng, tr, v_supply)
             if a.motor == "pm-synchronous" else _dc(a, u, rng, tr))
    load, trans = _load_and_transmission(a, u, rng, tr)
    w_l = load.pop("_w_top")
    tr.vertical = a.load == "hoist" or bool(load.get("vertical"))
    if tr.vertical and "brake" not in motor:
        motor["brake"] = {"kind": "spring-applied", "static_torque": u.torque(tr.t_n * rng.uniform(1.5, 2.0), 2)}
    brake_torque = tr.t_n * 2.2 if "brake" in motor else 0.0  # upper end of the brake sizes chosen above
    if tr.w_max < 1.15 * tr.w_top:
        # the mechanical limit keeps a margin over the top operating speed (overspeed trip at about +10 %)
        tr.w_max = math.ceil(1.15 * tr.w_top / RPM / 100) * 100 * RPM
        motor["max_speed"] = u.speed(tr.w_max)
    if trans:
        _gearbox_limits(rng, u, tr, trans, brake_torque)
    current = float(motor["rated_current"].split()[0])
    braking = a.load in ("hoist", "constant-power") or (a.load == "conveyor" and "vertical" in load) or \
        a.name == "index-table"
    drive = _drive(a, u, rng, motor, current, tr, braking)
    spec: dict[str, Any] = {"format": 1, "tag": tag, "title": tr.title,
                            "status": rng.choice(["draft", "for-review", "for-review", "approved"])}
    spec["supply"] = _supply(u, rng, a.drive in ("direct-on-line", "soft-starter"))
    spec["drive"] = drive
    spec["motor"] = motor
    if trans:
        spec["transmission"] = trans
    spec["load"] = load
    profile, meta_segments = _duty_or_profile(a, u, rng, tr, tag, motor, drive, load, w_l)
    if a.drive == "inverter" and drive.get("braking", {}).get("kind", "none") == "none" and tr.t_run_motor > 0:
        # no braking resistor: the stop ramp is set long enough for the load to absorb the kinetic energy
        coast = 3 * (tr.j_motor + tr.j_load_motor) * tr.w_top / tr.t_run_motor
        load.setdefault("deceleration_time", f"{sig(max(10.0, coast), 2)} s")
    spec["environment"] = _environment(u, rng, tr, motor["enclosure"])
    if a.drive != "direct-on-line" or rng.random() < 0.5:
        spec["cable"] = _cable(u, rng, current, a.drive, a.motor == "pm-synchronous")
    prot = _protection(u, rng, current, a.load == "hoist")
    if prot:
        spec["protection"] = prot
    if rng.random() < 0.1:
        spec["x-notes"] = rng.choice(["Replaces the unit removed at the last outage.",
                                      "Figures from the supplier's offer, to be confirmed on delivery.",
                                      "Site survey of the cable route pending."])
    mistake = None
    if rng.random() < MISTAKE_RATE:
        mistake = _apply_mistake(rng, u, spec, tr, a)
    text = emit(spec, header=f"Drive train {tag}: {spec['title']}")
    if mistake == "duplicate-key":
        text = _duplicate_key(text, u, tr)
    folder = rng.choice(a.folders)
    slug = re.sub(r"[^a-z0-9]+", "-", spec["title"].lower()).strip("-")
    meta = {"tag": tag, "archetype": a.name, "motor": a.motor, "drive": a.drive, "load": a.load,
            "units": "customary" if u.customary else "si", "mistake": mistake,
            "expected_finding": EXPECTED_FINDING.get(mistake or ""), "segments": meta_segments,
            "profile": profile[0] if profile else None, "profile_rows": profile[1].count("\n") - 2 if profile else 0}
    return GeneratedSpec(f"{folder}/{tag.lower()}-{slug}.yaml", text, profile, meta)


def _apply_mistake(rng: random.Random, u: Units, spec: dict[str, Any], tr: Train, a: Archetype) -> str:
    """Put one typical error into ``spec``; return its name."""
    motor = spec["motor"]
    options: list[tuple[str, Callable[[], None]]] = []

    def torque_off() -> None:
        motor["rated_torque"] = u.torque(tr.t_n * rng.choice([0.8, 1.2]))

    def synchronous() -> None:
        f = 60 if u.customary else 50
        motor["rated_speed"] = u.speed(120 * f / motor["poles"] * RPM)
        motor.setdefault("rated_torque", u.torque(tr.t_n))

    def missing_unit() -> None:
        field_ = rng.choice(["rated_power", "rated_current", "inertia", "max_speed"])
        motor[field_] = float(motor[field_].split()[0])

    def efficiency_bare() -> None:
        motor["efficiency"] = float(motor["efficiency"].split()[0])

    def unknown_key() -> None:
        section, wrong, right = rng.choice([("motor", "rated_curent", "rated_current"),
                                            ("motor", "inertia_kgm2", "inertia"),
                                            ("environment", "ambiant_max", "ambient_max"),
                                            ("drive", "overlaod", "overload"),
                                            ("supply", "volts", "voltage")])
        block = spec[section]
        spec[section] = {(wrong if k == right else k): v for k, v in block.items()}

    def gearbox_small() -> None:
        g = spec["transmission"]
        g["rated_output_torque"] = u.torque(tr.t_n * tr.ratio * tr.gear_eff * rng.uniform(0.4, 0.5), 2)
        g.pop("max_output_torque", None)

    def back_emf() -> None:
        trip = float(spec["drive"]["dc_bus_trip"].split()[0])
        n_max_krpm = tr.w_max / RPM / 1000
        ke = trip * rng.uniform(1.1, 1.4) / (math.sqrt(2) * n_max_krpm)  # peak line-to-line EMF above the trip
        kt = ke / 60.46
        motor["back_emf_constant"] = q(ke, "V/krpm")
        motor["torque_constant"] = u.torque_constant(kt)
        motor["rated_current"] = q(tr.t_n / kt, "A")
        spec["drive"].pop("active_short_circuit", None)

    options += [("rated-torque-off", torque_off), ("missing-unit", missing_unit),
                ("efficiency-no-percent", efficiency_bare), ("unknown-key", unknown_key),
                ("duplicate-key", lambda: None)]
    if motor["kind"] == "induction":
        options.append(("synchronous-speed", synchronous))
    if tr.gearbox and "transmission" in spec:
        options.append(("gearbox-too-small", gearbox_small))
    if motor["kind"] == "pm-synchronous":
        options += [("back-emf-over-bus", back_emf)] * 2
    name, apply = rng.choice(options)
    apply()
    return name


def _duplicate_key(text: str, u: Units, tr: Train) -> str:
    """Write the motor's rated speed a second time, as happens when two datasheet revisions are merged."""
    lines = text.split("\n")
    for k, line in enumerate(lines):
        if line.startswith("  rated_speed:"):
            lines.insert(k + 3, f"  rated_speed: {u.speed(tr.w_n * 1.004)}")
            break
    return "\n".join(lines)


# --- YAML text -------------------------------------------------------------------------------------------

_PLAIN = re.compile(r"^(?:[A-Za-z(][A-Za-z0-9 ._/*^%()+,'-]*|[+-]?\d[\d.]*(?:\s+[A-Za-z%°(][A-Za-z0-9 ._/*^%()+-]*))$")
_RESERVED = {"yes", "no", "on", "off", "true", "false", "null", "y", "n", "~"}


def scalar(value: Any, flow: bool = False) -> str:
    """Return ``value`` as a YAML scalar: plain where that reads back as the same string, else double-quoted."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    text = str(value)
    plain = _PLAIN.match(text) and text.lower() not in _RESERVED and ": " not in text and " #" not in text
    if plain and flow and any(c in text for c in ",[]{}"):
        plain = False
    return text if plain else json.dumps(text, ensure_ascii=False)


def _flow(mapping: dict[str, Any]) -> str:
    return "{" + ", ".join(f"{k}: {scalar(v, flow=True)}" for k, v in mapping.items()) + "}"


def emit(data: dict[str, Any], header: str = "") -> str:
    """Return ``data`` as block-style YAML; small mappings of scalars and list items are written in flow style."""
    lines = [f"# {header}"] if header else []

    def block(obj: dict[str, Any], indent: int) -> None:
        pad = " " * indent
        for key, value in obj.items():
            if isinstance(value, dict):
                if indent and len(value) <= 4 and all(not isinstance(v, (dict, list)) for v in value.values()):
                    lines.append(f"{pad}{key}: {_flow(value)}")
                else:
                    lines.append(f"{pad}{key}:")
                    block(value, indent + 2)
            elif isinstance(value, list):
                lines.append(f"{pad}{key}:")
                for item in value:
                    lines.append(f"{pad}  - {_flow(item) if isinstance(item, dict) else scalar(item)}")
            else:
                lines.append(f"{pad}{key}: {scalar(value)}")
            if indent == 0 and isinstance(value, (dict, list)):
                lines.append("")

    block(data, 0)
    return "\n".join(lines).rstrip("\n") + "\n"


# --- corpus ------------------------------------------------------------------------------------------------

def generate(out_dir: Path, count: int, seed: int) -> list[dict[str, Any]]:
    """Write ``count`` specs (and their profile CSVs) under ``out_dir``; return the manifest entries."""
    manifest = []
    for index in range(count):
        spec = generate_one(index, seed)
        path = out_dir / spec.path
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(spec.text, encoding="utf-8")
        if spec.profile:
            (path.parent / spec.profile[0]).write_text(spec.profile[1], encoding="utf-8")
        manifest.append({"file": spec.path, **spec.meta})
    (out_dir / "manifest.json").write_text(json.dumps({"seed": seed, "count": count, "specs": manifest}, indent=1),
                                           encoding="utf-8")
    return manifest


def main(argv: list[str] | None = None) -> int:
    """Run the generator from the command line; return the exit code."""
    parser = argparse.ArgumentParser(description="Write a seeded corpus of drive specifications.")
    parser.add_argument("out_dir", type=Path, help="folder to write into (created)")
    parser.add_argument("--count", type=int, default=100, help="number of specs (default 100)")
    parser.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    args = parser.parse_args(argv)
    if args.count < 0:
        parser.error("--count must not be negative")
    manifest = generate(args.out_dir, args.count, args.seed)
    wrong = sum(1 for m in manifest if m["mistake"])
    profiles = sum(1 for m in manifest if m["profile"])
    print(f"wrote {len(manifest)} specs to {args.out_dir} ({wrong} with a deliberate mistake, {profiles} with a "
          f"duty-profile CSV)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
