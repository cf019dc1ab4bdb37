"""Derive step: the transmission's ratio and efficiencies (direct coupling when none is given), the application
service factor and the plausible efficiency band for its kind."""

from __future__ import annotations

from rulecheck.derive.record import Spec, default, put
from rulecheck.model import Model
from rulecheck.physics import transmission as tr

__all__ = ["EFFICIENCY_BANDS", "derive_transmission"]

# Plausible efficiency per stage, or per transmission, by kind (docs/references.md R33; bands are common practice).
EFFICIENCY_BANDS = {
    "helical": ((0.97, 0.99), True),
    "bevel": ((0.97, 0.99), True),
    "helical-bevel": ((0.97, 0.99), True),
    "planetary": ((0.95, 0.98), True),
    "worm": ((0.30, 0.92), False),
    "belt": ((0.95, 0.98), False),
    "chain": ((0.95, 0.98), False),
    "coupling": ((0.98, 1.00), False),
}


def derive_transmission(m: Model, spec: Spec) -> None:
    """Ratio, efficiencies, service factor and efficiency band of the transmission."""
    if "transmission" not in spec.data:
        default(m, "transmission.ratio", 1.0, "direct coupling (no transmission given)")
        default(m, "transmission.efficiency", 1.0, "direct coupling (no transmission given)")
    eff, kind = m.get("transmission.efficiency"), m.get("transmission.kind")
    if eff is not None and kind != "worm" and not m.get("transmission.self_locking"):
        put(m, "transmission.reverse_efficiency", eff, "equal", ("transmission.efficiency",),
            "taken equal to the forward efficiency (gear stages, common practice)")
    hours, shock = m.get("transmission.hours_per_day"), m.get("transmission.shock")
    if hours is not None and shock is not None:
        put(m, "transmission.application_service_factor", tr.application_service_factor(hours, shock),
            "application_service_factor", ("transmission.hours_per_day", "transmission.shock"),
            "classic table, electric-motor prime mover (common practice; docs/references.md R31, K32)")
    element = m.get("transmission.overhung_load.element")
    if element in tr.ELEMENT_FACTORS:
        default(m, "transmission.overhung_load.element_factor", tr.ELEMENT_FACTORS[element],
                f"{element} {tr.ELEMENT_FACTORS[element]:g} (common practice; docs/references.md R31)")
    if kind in EFFICIENCY_BANDS:
        (low, high), per_stage = EFFICIENCY_BANDS[kind]
        stages = m.get("transmission.stages") or 1 if per_stage else 1
        inputs = ("transmission.kind", "transmission.stages")
        put(m, "transmission.efficiency_band_low", low**stages, "efficiency_band", inputs,
            f"{low:g} per stage" if per_stage else f"{low:g} for {kind}")
        put(m, "transmission.efficiency_band_high", high**stages, "efficiency_band", inputs,
            f"{high:g} per stage" if per_stage else f"{high:g} for {kind}")
