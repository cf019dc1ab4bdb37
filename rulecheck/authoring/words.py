"""The words of ``rulecheck new`` and the spec values they stand for (vocabulary, not a field list).

Kept free of imports: the command line builds its help from them on every start.
"""

from __future__ import annotations

__all__ = ["LOADS", "MOTORS", "STARTERS"]

MOTORS = {"induction": "induction", "pm": "pm-synchronous", "dc": "dc"}
STARTERS = {"inverter": "inverter", "dol": "direct-on-line", "soft-starter": "soft-starter",
            "dc-converter": "dc-converter"}
# load word → (load.model, load.pump_type or None, what it is, in words)
LOADS: dict[str, tuple[str, str | None, str]] = {
    "conveyor": ("conveyor", None, "belt conveyor"),
    "hoist": ("hoist", None, "rope hoist"),
    "pump": ("quadratic", "centrifugal", "centrifugal pump"),
    "fan": ("quadratic", "fan", "fan"),
    "pd-pump": ("constant-torque", "positive-displacement", "positive-displacement pump"),
    "compressor": ("constant-torque", "compressor", "compressor"),
    "extruder": ("constant-torque", "extruder", "extruder"),
    "screw": ("lead-screw", None, "lead-screw axis"),
    "winder": ("constant-power", None, "winder"),
    "constant-torque": ("constant-torque", None, "constant-torque machine"),
    "quadratic": ("quadratic", None, "quadratic-torque machine"),
    "constant-power": ("constant-power", None, "constant-power machine"),
    "points": ("points", None, "machine given by torque-speed points"),
}

