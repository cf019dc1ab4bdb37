"""Sample result dicts for the report tests, shaped as the result contract describes.

The drive trains belong to an invented plant (the Harrowgate bulk terminal);
every number here is demo data chosen to look plausible, not a checked design.
The values are internally consistent only as far as the reports need: renderers
format what they are given and compute nothing.
"""

from __future__ import annotations

import copy
from typing import Any

HOSTILE_SCRIPT = "<script>alert(1)</script>"
HOSTILE_IMG = '"><img src=x onerror=alert(2)>'
HOSTILE_MD = "Belt | *bold* _x_ [link](http://example.invalid) `code` # @reviewer"

DIGEST = "sha256:" + "5a" * 32


def _v(value: float, unit: str, kind: str) -> dict[str, Any]:
    return {"value": value, "unit": unit, "kind": kind}


def _outcome(rule: str, outcome: str, **kw: Any) -> dict[str, Any]:
    base = {
        "rule": rule,
        "title": kw.pop("title", rule.replace("-", " ").capitalize()),
        "topic": kw.pop("topic", "torque-and-thermal"),
        "outcome": outcome,
        "severity": kw.pop("severity", "error"),
        "safety": kw.pop("safety", False),
        "message": kw.pop("message", ""),
        "fix": kw.pop("fix", ""),
        "formula": kw.pop("formula", ""),
        "basis": kw.pop("basis", [{"source": "common practice", "status": "C"}]),
        "location": kw.pop("location", {"path": "motor", "line": 3, "column": 1}),
        "values": kw.pop("values", {}),
        "limit": kw.pop("limit", None),
        "missing": kw.pop("missing", []),
        "waiver": kw.pop("waiver", None),
    }
    assert not kw, kw
    return base


def _counts(outcomes: list[dict[str, Any]]) -> dict[str, int]:
    c = {"error": 0, "warning": 0, "info": 0, "not-checked": 0, "waived": 0, "pass": 0, "not-applicable": 0}
    for o in outcomes:
        if o["outcome"] == "fail":
            c[o["severity"]] += 1
        else:
            c[o["outcome"]] += 1
    return c


def _verdict(counts: dict[str, int]) -> str:
    if counts["error"]:
        return "fail"
    if counts["warning"]:
        return "warning"
    return "pass"


def _spec(file: str, tag: str, title: str, outcomes: list, **kw: Any) -> dict[str, Any]:
    counts = _counts(outcomes)
    status = kw.pop("status", "checked")
    return {
        "file": file,
        "tag": tag,
        "title": title,
        "spec_status": kw.pop("spec_status", "for-review"),
        "sha256": kw.pop("sha256", (tag.encode().hex() * 64)[:64]),
        "status": status,
        "verdict": "invalid" if status != "checked" else _verdict(counts),
        "counts": counts,
        "outcomes": outcomes,
        "derived": kw.pop("derived", {}),
        "charts": kw.pop("charts", {}),
        "errors": kw.pop("errors", []),
    }


def conveyor() -> dict[str, Any]:
    """Return an induction-motor belt conveyor with one torque warning and a waived rule."""
    outcomes = [
        _outcome(
            "torque-margin-continuous", "fail", severity="warning", safety=True,
            title="Continuous torque within the motor's continuous capability",
            message="required 44.7 N·m against the continuous capability 47.8 N·m at 1455 r/min (margin 1.07)",
            fix="choose a motor with at least 49.2 N·m continuous at 1455 r/min, or confirm with the motor curve",
            formula="margin = T_cont(n) / (T_L / (i·η))",
            basis=[{"source": "IEC TS 60034-25, low-speed derating (from memory)", "status": "M"},
                   {"source": "common practice", "status": "C"}],
            location={"path": "motor.rated_torque", "line": 14, "column": 5},
            values={"required": _v(44.7, "N*m", "torque"), "capability": _v(47.8, "N*m", "torque"),
                    "speed": _v(1455.0, "r/min", "rotational_speed"), "margin": _v(1.069, "1", "ratio")},
            limit=_v(1.1, "1", "ratio"),
        ),
        _outcome(
            "torque-peak", "pass", safety=True, title="Peak torque within the motor and drive capability",
            message="peak 70.0 N·m against 110 N·m at 900 r/min (margin 1.57)",
            formula="margin = min(T_max(n), T(I_max)) / T_req(n)",
            values={"required": _v(70.0, "N*m", "torque"), "capability": _v(110.0, "N*m", "torque"),
                    "margin": _v(1.571, "1", "ratio")},
            limit=_v(1.25, "1", "ratio"),
        ),
        _outcome(
            "nameplate-power-torque-speed", "pass", topic="data-integrity",
            message="P_N 7.5 kW against T_N·ω_N 7.5 kW (deviation 0.04 %)",
            values={"rated_power": _v(7500.0, "W", "power"), "deviation": _v(0.0004, "1", "fraction")},
        ),
        _outcome(
            "cable-voltage-drop", "waived", severity="warning", topic="installation",
            message="drop 5.6 % over 140 m exceeds 5 %",
            values={"drop": _v(0.056, "1", "fraction"), "length": _v(140.0, "m", "length")},
            waiver={"reason": "site transformer tap raised; measured 4.1 % at commissioning",
                    "approved_by": "R. Okafor (electrical lead)", "expires": "2027-06-30"},
        ),
        _outcome(
            "supply-unbalance", "not-checked", severity="info", topic="supply-and-environment",
            message="phase voltages not given", missing=["supply.phase_voltages"],
        ),
        _outcome(
            "altitude-ambient-derating", "not-checked", severity="warning", safety=True,
            topic="supply-and-environment",
            message="site altitude and cooling-air temperature are missing",
            missing=["environment.altitude", "environment.ambient_max"],
        ),
        _outcome("holding-brake-vertical", "not-applicable", topic="regeneration-and-holding"),
        _outcome("pm-back-emf-headroom", "not-applicable", topic="speed-and-voltage"),
    ]
    return _spec(
        "specs_demo/cv201.yaml", "CV-201", "Overburden belt conveyor, transfer tower 2", outcomes,
        derived={
            "motor.rated_torque": {"value": 49.22, "unit": "N*m", "kind": "torque", "from": "rated_power ÷ rated_speed",
                                   "method": "torque_from_power", "source": "derived"},
            "load.inertia_reflected": {"value": 0.184, "unit": "kg*m^2", "kind": "inertia",
                                       "from": "belt mass and pulley radius ÷ i²", "method": "reflected_inertia",
                                       "source": "derived"},
        },
        charts={
            "torque_speed": {
                "speed_unit": "r/min", "torque_unit": "N*m",
                "motor_continuous": [[0, 24.6], [300, 36.9], [728, 41.8], [1164, 49.2], [1455, 49.2], [2900, 24.7]],
                "motor_peak": [[0, 110], [1455, 110], [2900, 55]],
                "load_points": [{"speed": 1455, "torque": 44.7, "label": "run"},
                                {"speed": 300, "torque": 30.0, "label": "inspection"}],
                "duty_segments": [{"speed_from": 0, "speed_to": 1455, "torque": 70.0, "label": "accelerate"},
                                  {"speed_from": 1455, "speed_to": 0, "torque": -20.0, "label": "stop"}],
            },
            "duty": {"time_unit": "s", "speed_unit": "r/min", "torque_unit": "N*m",
                     "samples": [[0, 0, 70], [2, 1455, 70], [2, 1455, 44.7], [42, 1455, 44.7], [42, 1455, -20],
                                 [44, 0, -20], [60, 0, 0]]},
        },
    )


def servo() -> dict[str, Any]:
    """Return a PM servo axis with a back-EMF chart and an uncontrolled-generation error."""
    outcomes = [
        _outcome(
            "pm-uncontrolled-generation", "fail", safety=True, topic="speed-and-voltage",
            title="Rectified back-EMF below the DC-bus trip level at the highest speed",
            message="rectified back-EMF 862 V at 6000 r/min exceeds the DC-bus trip level 800 V",
            fix="limit the speed to 5560 r/min, or add an active short circuit or a voltage-limiting module",
            formula="V_UCG = √2 · Ke · n_max / 1000 · k_cold",
            basis=[{"source": "rectified DC = √2 × back-EMF", "status": "V"}, {"source": "k_cold", "status": "M"}],
            location={"path": "motor.back_emf_constant", "line": 21, "column": 5},
            values={"rectified_peak": _v(862.0, "V", "voltage"), "trip_level": _v(800.0, "V", "voltage"),
                    "speed": _v(6000.0, "r/min", "rotational_speed")},
            limit=_v(800.0, "V", "voltage"),
        ),
        _outcome(
            "pm-back-emf-headroom", "pass", topic="speed-and-voltage",
            message="back-EMF 294 V at 3000 r/min is below 0.9 × 380 V",
            values={"back_emf": _v(294.0, "V", "voltage"), "available": _v(380.0, "V", "voltage")},
        ),
        _outcome(
            "inertia-ratio", "fail", severity="info", topic="dynamics",
            message="inertia ratio 7.8 above the preferred 5 for high dynamics",
            values={"inertia_ratio": _v(7.8, "1", "ratio")}, limit=_v(5.0, "1", "ratio"),
        ),
        _outcome(
            "mechanical-max-speed", "pass", safety=True, topic="speed-and-voltage",
            message="6000 r/min × 1.1 within the motor's 7000 r/min",
            values={"max_speed": _v(6600.0, "r/min", "rotational_speed")},
        ),
    ]
    return _spec(
        "specs_demo/ax3.yaml", "AX-3", "Bag-sealer jaw axis", outcomes,
        derived={"motor.ke_si": {"value": 1.62, "unit": "V*s/rad", "kind": "back_emf_constant",
                                 "from": "98 V/krpm, line-to-line RMS", "method": "ke_normalise", "source": "derived"}},
        charts={
            "back_emf": {"speed_unit": "r/min", "voltage_unit": "V",
                         "speed": [0, 1000, 2000, 3000, 4000, 5000, 6000],
                         "emf_line_rms": [0, 98, 196, 294, 392, 490, 588],
                         "rectified_peak": [0, 145, 291, 436, 582, 727, 862],
                         "available_voltage": 380.0, "dc_bus_trip": 800.0},
            "torque_speed": {"speed_unit": "r/min", "torque_unit": "N*m",
                             "motor_continuous": [[0, 6.4], [3000, 5.9], [6000, 4.1]],
                             "motor_peak": [[0, 19.0], [3000, 19.0], [6000, 9.5]],
                             "load_points": [{"speed": 2400, "torque": 3.8, "label": "seal"}]},
        },
    )


def hoist() -> dict[str, Any]:
    """Return a hoist with a missing holding brake (safety error) and a regeneration error."""
    outcomes = [
        _outcome(
            "holding-brake-vertical", "fail", safety=True, topic="regeneration-and-holding",
            title="Vertical load held by a spring-applied brake",
            message="suspended load 2500 kg on the hoist drum, no holding brake declared",
            fix="add a spring-applied brake rated at least 1.25 × the static torque at the brake shaft",
            formula="T_br ≥ k · T_static",
            basis=[{"source": "OSHA 1910.179 (brake torque 125 %)", "status": "V"}],
            location={"path": "transmission.brake", "line": 30, "column": 3},
            values={"static_torque": _v(412.0, "N*m", "torque"), "mass": _v(2500.0, "kg", "mass")},
        ),
        _outcome(
            "regen-braking-energy", "fail", safety=True, topic="regeneration-and-holding",
            message="lowering regenerates 16.4 kW continuously; no braking resistor or active front end declared",
            fix="add a braking chopper and resistor rated for 16.4 kW continuous, or an active front end",
            formula="P = m·g·v·η",
            values={"regen_power": _v(16400.0, "W", "power"), "energy_per_cycle": _v(328000.0, "J", "energy")},
        ),
        _outcome(
            "torque-rms-duty-cycle", "pass", safety=True,
            values={"utilisation": _v(0.82, "1", "ratio")}, limit=_v(0.909, "1", "ratio"),
            message="utilisation 0.82",
        ),
    ]
    return _spec(
        "specs_demo/h1.yaml", "H-1", "Wagon-tippler service hoist", outcomes,
        charts={"torque_speed": {"speed_unit": "r/min", "torque_unit": "N*m",
                                 "motor_continuous": [[0, 180], [1470, 243], [2200, 162]],
                                 "motor_peak": [[0, 486], [1470, 486], [2200, 320]],
                                 "load_points": [{"speed": 1470, "torque": 190, "label": "lift"},
                                                 {"speed": 1470, "torque": -170, "label": "lower"}]}},
    )


def invalid() -> dict[str, Any]:
    """Return a spec that failed to load (a YAML syntax error)."""
    outcomes = [
        _outcome("yaml-syntax", "fail", topic="data-integrity", title="The spec is valid YAML",
                 message="mapping values are not allowed here", fix="check the indentation on line 7",
                 location={"path": "", "line": 7, "column": 12}),
    ]
    return _spec("specs_demo/broken.yaml", "", "", outcomes, status="invalid",
                 errors=[{"message": "mapping values are not allowed here", "line": 7, "column": 12}])


def hostile() -> dict[str, Any]:
    """Return a spec whose strings try to inject markup into the reports."""
    outcomes = [
        _outcome(
            "torque-peak", "fail", safety=True,
            title=f"Peak {HOSTILE_SCRIPT}",
            message=f"label {HOSTILE_IMG} {HOSTILE_SCRIPT} | *x*",
            fix=f"fix {HOSTILE_IMG}",
            formula=f"T = {HOSTILE_SCRIPT}",
            basis=[{"source": HOSTILE_IMG, "status": "C"}],
            location={"path": f"load.{HOSTILE_IMG}", "line": 2, "column": 1},
            values={HOSTILE_IMG: {"value": HOSTILE_SCRIPT, "unit": HOSTILE_IMG, "kind": "torque"},
                    "required": _v(12.5, "N*m", "torque")},
        ),
        _outcome("supply-unbalance", "not-checked", severity="info", missing=[HOSTILE_SCRIPT]),
        _outcome("cable-voltage-drop", "waived", severity="warning",
                 waiver={"reason": HOSTILE_SCRIPT, "approved_by": HOSTILE_IMG, "expires": "2027-01-01"}),
    ]
    return _spec(
        f"specs_demo/{HOSTILE_IMG}.yaml", HOSTILE_SCRIPT, f"{HOSTILE_MD} {HOSTILE_IMG}", outcomes,
        spec_status=HOSTILE_IMG,
        derived={HOSTILE_IMG: {"value": 1.0, "unit": "N*m", "kind": "torque", "from": HOSTILE_SCRIPT,
                               "method": HOSTILE_IMG, "source": "derived"}},
        charts={"torque_speed": {"speed_unit": "r/min", "torque_unit": "N*m",
                                 "motor_continuous": [[0, 10], [1000, 10]],
                                 "load_points": [{"speed": 500, "torque": 12.5, "label": HOSTILE_SCRIPT},
                                                 {"speed": 600, "torque": 5, "label": "$\\frac{1}{0}$ -->"}]}},
    )


def result(*specs: dict[str, Any]) -> dict[str, Any]:
    """Return a whole result dict around the given specs, with a summary computed from their counts."""
    specs = [copy.deepcopy(s) for s in specs]
    fail = {"error": 0, "warning": 0, "info": 0}
    for s in specs:
        for k in fail:
            fail[k] += s["counts"][k]
    return {
        "format_version": 1,
        "tool": {"name": "rulecheck", "version": "0.1.0", "rules_digest": DIGEST, "rule_count": 40},
        "generated": "2026-12-01T20:00:00Z",
        "settings": {"fail_on": "error", "units": "si"},
        "specs": specs,
        "summary": {
            "specs": len(specs),
            "checked": sum(s["status"] == "checked" for s in specs),
            "invalid": sum(s["status"] == "invalid" for s in specs),
            "unreadable": sum(s["status"] == "unreadable" for s in specs),
            "fail": fail,
            "not-checked": sum(s["counts"]["not-checked"] for s in specs),
            "waived": sum(s["counts"]["waived"] for s in specs),
            "fail_on": "error",
            "exit_code": 1 if fail["error"] or any(s["status"] != "checked" for s in specs) else 0,
        },
    }


def plant() -> dict[str, Any]:
    """Return the full sample: conveyor, servo axis, hoist and an invalid spec."""
    return result(conveyor(), servo(), hoist(), invalid())


def all_samples() -> dict[str, dict[str, Any]]:
    """Return every sample result by name (one spec each, plus the whole plant)."""
    return {
        "conveyor": result(conveyor()),
        "servo": result(servo()),
        "hoist": result(hoist()),
        "invalid": result(invalid()),
        "hostile": result(hostile()),
        "plant": plant(),
    }
