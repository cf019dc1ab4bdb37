"""Sample result dicts for the CI-format tests, shaped per the result contract.

The plant is demo data of our own: a raw-water pumping station and a gate hoist of a fictional
weir. Numbers are invented but consistent (rated torque 49.2 N*m = 7.5 kW / (1455 r/min * 2*pi/60)).
Counts and the summary are computed from the outcomes, so the sample cannot contradict itself.
"""

from __future__ import annotations

import copy
from typing import Any

# Every character class a renderer must neutralise: line breaks, workflow-command separators,
# percent signs, commas, XML markup, a CDATA terminator, quotes, control characters (BEL, ESC,
# NUL, form feed, NEL) and a Unicode line separator.
HOSTILE = ('drum brake\n::error file=evil.yaml,line=1::injected\r\n100% of 5%25, a::b <b>&amp;</b> "q" \'s\' '
           '\x07\x1b[31m red\x00 ]]> \x0c\x85\u2028 end')
HOSTILE_PATH = "specs_demo/weir/gate,hoist::west%20 <&> \"h\".yaml"

_SHA = "3f1c0d9a8b7e6f5a4c3b2a1908f7e6d5c4b3a29180f7e6d5c4b3a29180f7e6d5"


def q(value: Any, unit: str, kind: str) -> dict[str, Any]:
    """Return a quantity dict."""
    return {"value": value, "unit": unit, "kind": kind}


def outcome(rule: str, kind: str, severity: str, *, title: str, topic: str, safety: bool = False,
            message: str = "", fix: str | None = None, formula: str | None = None, path: str | None = None,
            line: int | None = None, column: int | None = None, values: dict[str, Any] | None = None,
            limit: dict[str, Any] | None = None, missing: list[str] | None = None,
            waiver: dict[str, Any] | None = None, basis: list[dict[str, str]] | None = None) -> dict[str, Any]:
    """Return one outcome dict with every contract field present."""
    return {
        "rule": rule, "title": title, "topic": topic, "outcome": kind, "severity": severity, "safety": safety,
        "message": message, "fix": fix, "formula": formula,
        "basis": basis if basis is not None else [{"source": "common practice", "status": "C"}],
        "location": {"path": path, "line": line, "column": column},
        "values": values or {}, "limit": limit, "missing": missing or [], "waiver": waiver,
    }


def counts_of(outcomes: list[dict[str, Any]]) -> dict[str, int]:
    """Return the counts block of a spec's outcomes."""
    counts = dict.fromkeys(("error", "warning", "info", "not-checked", "waived", "pass", "not-applicable"), 0)
    for o in outcomes:
        counts[o["severity"] if o["outcome"] == "fail" else o["outcome"]] += 1
    return counts


def spec(file: str, tag: str | None, title: str | None, status: str, outcomes: list[dict[str, Any]],
         **extra: Any) -> dict[str, Any]:
    """Return one spec entry with counts and verdict derived from its outcomes."""
    counts = counts_of(outcomes)
    if status != "checked":
        verdict = "invalid"
    elif counts["error"]:
        verdict = "fail"
    elif counts["warning"] or counts["info"]:
        verdict = "warning"
    else:
        verdict = "pass"
    entry = {"file": file, "tag": tag, "title": title, "spec_status": extra.pop("spec_status", None),
             "sha256": extra.pop("sha256", _SHA), "status": status, "verdict": verdict, "counts": counts,
             "outcomes": outcomes, "derived": extra.pop("derived", {}), "charts": extra.pop("charts", {}),
             "errors": extra.pop("errors", [])}
    entry.update(extra)
    return entry


def _pump() -> dict[str, Any]:
    """Return the checked raw-water pump: an error fail, a warning fail, a safety not-checked, passes."""
    outcomes = [
        outcome("torque-margin-continuous", "fail", "error", topic="torque-and-thermal", safety=True,
                title="Continuous torque within the motor's continuous capability",
                message="required 52.3 N·m exceeds the continuous capability 44.1 N·m at 300 r/min (margin 0.84)",
                fix="choose a motor with at least 57.5 N·m continuous at 300 r/min, or forced ventilation",
                formula="margin = T_cont(n) / (T_L / (i·η))", path="motor.rated_torque", line=12, column=3,
                values={"required": q(52.3, "N*m", "torque"), "capability": q(44.1, "N*m", "torque"),
                        "speed": q(300.0, "r/min", "rotational_speed"), "margin": q(0.84, "1", "ratio")},
                limit=q(1.1, "1", "ratio"),
                basis=[{"source": "IEC TS 60034-25, low-speed derating (from memory)", "status": "M"},
                       {"source": "common practice", "status": "C"}]),
        outcome("drive-current-margin", "fail", "warning", topic="drive-sizing",
                title="Drive output current covers the motor's rated current with margin",
                message="drive rated 16.0 A for a motor of 15.2 A leaves a margin of 1.05, below 1.10",
                fix="choose the next drive frame (23 A)", path="drive.rated_current", line=21, column=3,
                values={"drive": q(16.0, "A", "current"), "motor": q(15.2, "A", "current")},
                limit=q(1.1, "1", "ratio")),
        outcome("supply-voltage-window", "fail", "info", topic="supply",
                title="Motor voltage inside the supply's tolerance band",
                message="400 V motor on a 415 V supply: +3.8 %, within ±10 % but worth noting",
                path="supply.voltage", line=4, column=3,
                values={"deviation": q(0.0375, "1", "fraction")}),
        # an unchecked safety rule is a warning (the engine's level for a safety rule it cannot evaluate)
        outcome("pm-back-emf-uncontrolled", "not-checked", "warning", topic="permanent-magnet", safety=True,
                title="Back-EMF at top speed stays below the DC-bus trip when the drive stops switching",
                path="motor.back_emf_constant", missing=["motor.back_emf_constant", "drive.dc_bus_trip"]),
        outcome("thermal-class-ambient", "pass", "warning", topic="environment",
                title="Insulation class suits the ambient temperature", path="environment.ambient_max",
                line=30, column=3, message="class F at 40 degC ambient"),
        outcome("gearbox-service-factor", "not-applicable", "warning", topic="transmission",
                title="Gearbox service factor covers the duty", message="direct drive: no gearbox"),
    ]
    return spec("specs_demo/p101.yaml", "P-101", "Raw water lift pump 1", "checked", outcomes,
                spec_status="for-review",
                derived={"motor.rated_torque": {"value": 49.22, "unit": "N*m", "kind": "torque",
                                                "from": "rated_power ÷ rated_speed", "method": "torque_from_power",
                                                "source": "derived"}},
                charts={"torque_speed": {"speed_unit": "r/min", "torque_unit": "N*m",
                                         "motor_continuous": [[0, 24.6], [300, 36.9], [1455, 49.2], [2900, 24.7]],
                                         "motor_peak": [[0, 110], [1455, 110], [2900, 55]],
                                         "load_points": [{"speed": 1455, "torque": 38.0, "label": "run"}],
                                         "duty_segments": []}})


def _hoist() -> dict[str, Any]:
    """Return the gate hoist: hostile strings everywhere, a waived fail, a fail with no line known."""
    outcomes = [
        outcome("holding-brake-vertical-load", "fail", "error", topic="vertical-loads", safety=True,
                title=f"Holding brake sized for the suspended gate: {HOSTILE}",
                message=f"brake torque 60 N·m < 1.5 × 48 N·m; note: {HOSTILE}",
                fix=f"fit a brake of at least 72 N·m {HOSTILE}", path="brake.torque", line=40, column=5,
                values={"brake": q(60.0, "N*m", "torque"), "required": q(72.0, "N*m", "torque")},
                limit=q(1.5, "1", "ratio")),
        outcome("overspeed-mechanical-limit", "waived", "warning", topic="speed", safety=True,
                title="Top speed within the mechanical limit of the hoist drum",
                message="1800 r/min exceeds the drum limit 1750 r/min by 2.9 %",
                path="load.max_speed", line=52, column=3,
                values={"speed": q(1800.0, "r/min", "rotational_speed")},
                waiver={"reason": f"drum re-rated by its maker, letter WG-17 {HOSTILE}",
                        "approved_by": "R. Okafor, weir engineer", "expires": "2027-06-30"}),
        outcome("regen-energy-braking-resistor", "fail", "warning", topic="stored-energy",
                title="Braking resistor absorbs the lowering energy",
                message="lowering returns 14 kJ per stroke; no braking resistor is specified",
                path="drive.braking", values={"energy": q(14000.0, "J", "energy")}),
        outcome("ip-rating-outdoor", "not-checked", "info", topic="environment",
                title="Enclosure rating for outdoor use", path="motor.enclosure", missing=["motor.enclosure"]),
        outcome("pm-back-emf-uncontrolled", "pass", "error", topic="permanent-magnet", safety=True,
                title="Back-EMF at top speed stays below the DC-bus trip when the drive stops switching",
                message="436 V peak < 800 V trip"),
    ]
    return spec(HOSTILE_PATH, "WG-2 <hoist>", f"Gate hoist west {HOSTILE}", "checked", outcomes,
                spec_status="draft")


def _invalid() -> dict[str, Any]:
    """Return a spec that loaded as YAML but failed the schema and a unit check."""
    outcomes = [
        outcome("spec-schema", "fail", "error", topic="spec-format", title="Spec follows the spec schema",
                message="motor.rated_speed: required property is missing", path="motor", line=8, column=1),
        outcome("units-and-dimensions", "fail", "error", topic="spec-format",
                title="Every quantity has a unit of the right dimension",
                message="motor.rated_power: '7.5 kN' is a force, not a power (write e.g. '7.5 kW')",
                path="motor.rated_power", line=9, column=16),
    ]
    return spec("specs_demo/p102.yaml", "P-102", "Raw water lift pump 2", "invalid", outcomes,
                errors=[{"rule": "spec-schema", "message": "motor.rated_speed: required property is missing"}])


def _unreadable() -> dict[str, Any]:
    """Return a spec whose YAML does not parse: no tag, no line for the second problem."""
    outcomes = [
        outcome("yaml-syntax", "fail", "error", topic="spec-format", title="Spec is well-formed YAML",
                message="duplicate key 'motor' (first at line 3)", path=None, line=14, column=1),
        outcome("yaml-syntax", "fail", "error", topic="spec-format", title="Spec is well-formed YAML",
                message="file ends inside a quoted string"),
    ]
    return spec("specs_demo/broken.yaml", None, None, "invalid", outcomes, sha256=None)


def _summary(specs: list[dict[str, Any]]) -> dict[str, Any]:
    """Return the summary block of the specs (fail_on error)."""
    total = {"error": 0, "warning": 0, "info": 0, "not-checked": 0, "waived": 0}
    for s in specs:
        for key in total:
            total[key] += s["counts"][key]
    invalid = sum(s["status"] == "invalid" for s in specs)
    return {"specs": len(specs), "checked": sum(s["status"] == "checked" for s in specs), "invalid": invalid,
            "unreadable": sum(s["status"] == "unreadable" for s in specs),
            "fail": {k: total[k] for k in ("error", "warning", "info")}, "not-checked": total["not-checked"],
            "waived": total["waived"], "fail_on": "error",
            "exit_code": 1 if total["error"] or invalid else 0}


def sample_result() -> dict[str, Any]:
    """Return a fresh sample result (safe to mutate)."""
    specs = [_pump(), _hoist(), _invalid(), _unreadable()]
    return copy.deepcopy({
        "format_version": 1,
        "tool": {"name": "rulecheck", "version": "0.1.0", "rules_digest": "sha256:" + "ab" * 32, "rule_count": 38},
        "generated": "2026-12-01T20:00:00Z",
        "settings": {"fail_on": "error", "units": "si"},
        "specs": specs,
        "summary": _summary(specs),
    })


def sample_rules() -> list[dict[str, Any]]:
    """Return rule metadata as the integrator passes it to the SARIF renderer (a subset plus one unused rule)."""
    return [
        {"id": "torque-margin-continuous", "title": "Continuous torque within the motor's continuous capability",
         "topic": "torque-and-thermal", "severity": "error", "safety": True,
         "description": "The load torque at the motor shaft, at every continuous operating speed, stays below the "
                        "motor's continuous torque at that speed with a margin of 1.1.",
         "basis": [{"source": "IEC TS 60034-25, low-speed derating (from memory)", "status": "M"}],
         "fix": "choose a larger motor or forced ventilation"},
        {"id": "holding-brake-vertical-load", "title": f"Holding brake sized for a suspended load {HOSTILE}",
         "topic": "vertical-loads", "severity": "error", "safety": True,
         "description": f"# not a heading\n<script>x</script> [link](javascript:1) {HOSTILE}",
         "basis": [{"source": "common practice", "status": "C"}], "fix": "fit a larger brake"},
        {"id": "cable-length-reflected-wave", "title": "Motor cable short enough for the drive's dv/dt",
         "topic": "installation", "severity": "warning", "safety": False,
         "description": "Long motor cables raise the voltage at the motor terminals.", "basis": [], "fix": None},
    ]
