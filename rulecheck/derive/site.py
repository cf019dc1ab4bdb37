"""Derive step: the site — motor and drive derating for altitude and ambient temperature, and the ingress
protection and temperature class the site asks for (read piece by piece, for the rules to compare)."""

from __future__ import annotations

from rulecheck.derive.motor import ip_digits
from rulecheck.derive.record import Spec, put
from rulecheck.model import Model
from rulecheck.physics import supply as sp

__all__ = ["DEFAULT_DRIVE_AMBIENT_MAX", "LOCATION_MINIMUM_IP", "REFERENCE_AMBIENT", "derive_site"]

REFERENCE_AMBIENT = 40.0  # °C: ambient assumed when none is given (IEC 60034-1 reference coolant temperature)
DEFAULT_DRIVE_AMBIENT_MAX = 50.0  # °C: highest ambient of a drive with derating, when its data give none (common)

# Default minimum IP code per kind of location (docs/references.md R28; the mapping is common practice).
LOCATION_MINIMUM_IP = {
    "indoor-clean": "IP23",
    "general-industrial": "IP54",
    "outdoor": "IP55",
    "washdown": "IP65",
    "immersion": "IPX7",
}


def derive_site(m: Model, spec: Spec) -> None:
    """Site deratings of motor and drive, and what the site asks of enclosures."""
    alt, amb = m.get("environment.altitude"), m.get("environment.ambient_max")
    outside = (alt is not None and alt > 1000.0) or (amb is not None and amb > REFERENCE_AMBIENT)
    site = ("environment.altitude", "environment.ambient_max")
    ambient = amb if amb is not None else REFERENCE_AMBIENT
    if m.has("environment.motor_derating"):
        put(m, "site.motor_derating", m.get("environment.motor_derating"), "given",
            ("environment.motor_derating",), "manufacturer's factor")
        put(m, "site.derating_default_used", False, "given", ("environment.motor_derating",), "manufacturer data")
    else:
        put(m, "site.motor_derating", sp.motor_derating_factor(alt or 0.0, ambient), "motor_derating_factor", site,
            "−1 %/100 m above 1000 m × −1 %/K above 40 °C (common practice)")
        put(m, "site.derating_default_used", bool(outside), "motor_derating_factor", site,
            "common-practice default used")
    if m.has("drive.derating"):
        put(m, "site.drive_derating", m.get("drive.derating"), "given", ("drive.derating",), "manufacturer's factor")
        put(m, "site.drive_derating_default_used", False, "given", ("drive.derating",), "manufacturer's factor")
    else:
        _drive_default(m, alt or 0.0, ambient, bool(outside))
    _environment_text(m)


def _drive_default(m: Model, altitude: float, ambient: float, outside: bool) -> None:
    site = ("environment.altitude", "environment.ambient_max")
    limit = m.get("drive.ambient_max")
    try:
        k = sp.drive_derating_factor(altitude, ambient, DEFAULT_DRIVE_AMBIENT_MAX if limit is None else limit)
    except ValueError:
        k = 0.0  # beyond the drive's stated range: no capability
    if limit is None:
        put(m, "site.drive_derating", k, "drive_derating_factor", site,
            "−1 %/100 m above 1000 m × −1 %/K from 40 to 50 °C (common practice)")
    else:
        put(m, "site.drive_derating", k, "drive_derating_factor", (*site, "drive.ambient_max"),
            "−1 %/100 m above 1000 m × −1 %/K above 40 °C, 0 above the drive's stated maximum (common practice)")
    put(m, "site.drive_derating_default_used", outside, "drive_derating_factor", site, "common-practice default used")


def _environment_text(m: Model) -> None:
    required = m.get("environment.ingress_required")
    location = m.get("environment.location")
    source = "environment.ingress_required"
    if not isinstance(required, str) and location in LOCATION_MINIMUM_IP:
        required, source = LOCATION_MINIMUM_IP[location], "environment.location"
    digits = ip_digits(required) if isinstance(required, str) else None
    if digits:
        note = "given" if source == "environment.ingress_required" else f"default for {location} (common practice)"
        put(m, "environment.ingress_minimum", required, "ingress_minimum", (source,), note)
        put(m, "environment.ingress_solids_min", digits[0], "ip_digits", (source,), note)
        put(m, "environment.ingress_water_min", digits[1], "ip_digits", (source,), note)
    tclass = m.get("environment.hazardous_area.temperature_class")
    if isinstance(tclass, str):
        put(m, "environment.hazardous_area.temperature_class_number", int(tclass[1:]), "temperature_class",
            ("environment.hazardous_area.temperature_class",), "Tn → n")
