"""Every failing finding of the demo points at the spec key an engineer would change, at that key's line.

The expected key of each finding was read from its message and fix by hand (what the finding is about), not
taken from the tool; the key's line and column come from PyYAML's own parser of the spec file, independent
of rulecheck's loader. A finding may point at the key or at its value (both on the key's line)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "specs_demo"

# (spec file, rule) → the key the finding is about, as its message and fix name it.
EXPECTED = {
    ("cv-110-incline-conveyor.yaml", "torque-margin-continuous"): "motor.rated_power",  # choose a larger motor
    ("cv-120-stacker-conveyor.yaml", "torque-margin-continuous"): "motor.rated_power",
    ("cv-120-stacker-conveyor.yaml", "gearbox-service-factor"): "transmission.rated_output_torque",
    ("dc-510-crusher-feeder.yaml", "dc-armature-voltage"): "motor.armature_voltage",
    # "the gearbox runs continuously down to 250 r/min input speed …: splash lubrication": the lowest speed
    ("dc-510-crusher-feeder.yaml", "gearbox-peak-speed-thermal"): "load.speed_min",
    ("f-610-dryer-exhaust-fan.yaml", "service-factor-on-inverter"): "motor.rated_power",
    ("f-610-dryer-exhaust-fan.yaml", "torque-margin-continuous"): "motor.rated_power",
    # "inertia ratio 17.5 (load 8.849 kg·m² at the motor shaft …)" on a direct drive: there is no gear ratio
    ("f-610-dryer-exhaust-fan.yaml", "inertia-ratio"): "load.inertia",
    ("h-310-maintenance-hoist.yaml", "regen-braking-energy"): "drive.braking.kind",
    ("h-310-maintenance-hoist.yaml", "holding-brake-vertical"): "motor.brake.static_torque",
    ("m-710-slurry-agitator.yaml", "supply-voltage-frequency"): "supply.voltage",
    ("m-710-slurry-agitator.yaml", "dol-starting"): "supply.fault_level",
    ("m-710-slurry-agitator.yaml", "cable-voltage-drop"): "cable.conductor_area",
    ("p-210-raw-water-pump.yaml", "induction-pole-slip"): "motor.rated_speed",
    ("p-210-raw-water-pump.yaml", "enclosure-ip"): "motor.enclosure",
    ("sv-410-bag-lift-axis.yaml", "pm-uncontrolled-generation"): "drive.dc_bus_trip",
    ("sv-410-bag-lift-axis.yaml", "pm-back-emf-headroom"): "motor.back_emf_constant",
}

def _key_positions(text: str) -> dict[str, set[tuple[int, int]]]:
    """Return each key path's (line, column) of its key and of its value, 1-based (PyYAML's parser)."""
    found: dict[str, set[tuple[int, int]]] = {}

    def walk(node: yaml.Node, prefix: str) -> None:
        if isinstance(node, yaml.MappingNode):
            for key, value in node.value:
                path = f"{prefix}.{key.value}" if prefix else str(key.value)
                found[path] = {(key.start_mark.line + 1, key.start_mark.column + 1),
                               (value.start_mark.line + 1, value.start_mark.column + 1)}
                walk(value, path)

    walk(yaml.compose(text), "")
    return found


@pytest.fixture(scope="module")
def demo_findings() -> dict[tuple[str, str], dict]:
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", "specs_demo", "--format", "json",
                           "--no-cache"], cwd=ROOT, capture_output=True, text=True, timeout=300,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})
    assert proc.returncode == 1, proc.stderr
    found = {}
    for spec in json.loads(proc.stdout)["specs"]:
        for outcome in spec["outcomes"]:
            if outcome["outcome"] == "fail":
                found[(Path(spec["file"]).name, outcome["rule"])] = outcome
    return found


def test_every_failing_finding_of_the_demo_is_listed(demo_findings) -> None:
    assert set(demo_findings) == set(EXPECTED)


@pytest.mark.parametrize("case", sorted(EXPECTED), ids=lambda case: f"{case[0]}:{case[1]}")
def test_a_finding_points_at_the_key_it_is_about(demo_findings, case) -> None:
    outcome = demo_findings[case]
    where = outcome["location"]
    positions = _key_positions((DEMO / case[0]).read_text(encoding="utf-8"))
    expected = EXPECTED[case]
    assert expected in positions, f"{expected} is not in {case[0]}"
    assert where["path"] == expected
    assert (where["line"], where["column"]) in positions[expected]
