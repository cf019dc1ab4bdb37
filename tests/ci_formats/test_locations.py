"""Every failing finding of the demo and of the flawed corpus points at the spec key it is about, at that key's line.

The expected key of each finding was read from its message and fix by hand (what the finding is about: the key an
engineer would change, or the limit it is measured against), not taken from the tool; the key's line and column
come from PyYAML's own parser of the spec file, independent of rulecheck's loader. A finding may point at the key
or at its value (both on the key's line). A rule whose checks are about different keys gives each check its own
``location`` (rules/*.yaml); a key the spec may leave out is one of several candidates."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "specs_demo"
FLAWED = ROOT / "tests" / "corpus" / "flawed"

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

# (flawed corpus spec, rule) → the key: every rule that fails there (error, warning or info), the catching rule
# and the others, read from each finding's message.
EXPECTED_FLAWED = {
    ("f01-screw-feeder-low-speed-cooling.yaml", "torque-margin-continuous"):
        "motor.rated_power",
    ("f01-screw-feeder-low-speed-cooling.yaml", "gearbox-peak-speed-thermal"):
        "load.speed_min",  # splash lubrication at the lowest speed
    ("f02-coil-car-rms-duty.yaml", "torque-rms-duty-cycle"):
        "load.duty",
    ("f03-granulator-peak-over-drive-limit.yaml", "drive-overload-duty"):
        "drive.overload.current",
    ("f03-granulator-peak-over-drive-limit.yaml", "torque-peak"):
        "drive.overload.current",  # the drive's overload current limits the torque (T(I) 81.36 N·m < the motor's)
    ("f04-belt-drive-below-motor-fla.yaml", "drive-current-continuous"):
        "drive.rated_current",
    ("f05-cake-screw-breakaway-on-drive.yaml", "breakaway-torque"):
        "load.breakaway_torque",
    ("f06-flywheel-press-missing-rotor-inertia.yaml", "drive-overload-duty"):
        "drive.overload.current",
    ("f06-flywheel-press-missing-rotor-inertia.yaml", "torque-peak"):
        "drive.overload.current",  # T(I) at the drive's overload current is the lower limit
    ("f07-trommel-gearbox-service-factor.yaml", "gearbox-service-factor"):
        "transmission.rated_output_torque",
    ("f08-shredder-gearbox-heavy-shock.yaml", "gearbox-service-factor"):
        "transmission.rated_output_torque",
    ("f09-sand-screw-gearbox-thermal.yaml", "gearbox-peak-speed-thermal"):
        "transmission.thermal_power",  # continuous power above the thermal rating
    ("f10-hoist-brake-without-losses.yaml", "holding-brake-vertical"):
        "motor.brake.static_torque",
    ("f11-hoist-no-overspeed-protection.yaml", "hoist-overspeed-protection"):
        "protection.overspeed_protection",
    ("f12-declining-belt-resistor-undersized.yaml", "regen-braking-energy"):
        "drive.braking.power",  # the resistor's rating 3.5 kW below 20.09 kW
    ("f45-declining-belt-resistor-sized-empty.yaml", "regen-braking-energy"):
        "drive.braking.power",  # case loaded: the resistor's rating 7.5 kW below 20.09 kW
    ("f13-index-belt-dc-bus-reserve.yaml", "regen-braking-energy"):
        "drive.braking.kind",  # no braking means (kind none) for the stop's energy
    ("f14-dol-fan-runup-at-dipped-voltage.yaml", "acceleration-time"):
        "motor.safe_stall_time",  # run-up 28.05 s against 0.8 × the safe-stall time
    ("f14-dol-fan-runup-at-dipped-voltage.yaml", "supply-voltage-frequency"):
        "supply.voltage",
    ("f14-dol-fan-runup-at-dipped-voltage.yaml", "dol-starting"):
        "supply.fault_level",
    ("f15-centrifuge-pm-uncontrolled-generation.yaml", "pm-uncontrolled-generation"):
        "drive.dc_bus_trip",
    ("f15-centrifuge-pm-uncontrolled-generation.yaml", "pm-back-emf-headroom"):
        "motor.back_emf_constant",
    ("f16-extruder-dc-armature-voltage.yaml", "dc-armature-voltage"):
        "motor.armature_voltage",
    ("f17-borehole-pump-cable-drop.yaml", "cable-voltage-drop"):
        "cable.conductor_area",
    ("f17-borehole-pump-cable-drop.yaml", "supply-voltage-frequency"):
        "supply.voltage",
    ("f18-slurry-pump-efficiency-below-ie3.yaml", "efficiency-class"):
        "motor.efficiency",  # the declared efficiency 89.8 % below the IE3 minimum
    ("f19-booster-pump-690v-reflected-wave.yaml", "inverter-insulation-reflected-wave"):
        "cable.length",
    ("f19-booster-pump-690v-reflected-wave.yaml", "torque-margin-continuous"):
        "motor.rated_power",
    ("f20-nec-pump-15hp-conductor.yaml", "conductor-and-protection-sizing"):
        "protection.conductor_ampacity",
    ("f20-nec-pump-15hp-conductor.yaml", "units-and-dimensions"):
        "motor.rated_power",
    ("f21-test-fan-above-max-speed.yaml", "mechanical-max-speed"):
        "motor.max_speed",
    ("f22-incline-belt-overload-relay-60hz.yaml", "motor-overload-protection"):
        "drive.motor_overload.setting",
    ("f22-incline-belt-overload-relay-60hz.yaml", "units-and-dimensions"):
        "motor.rated_power",
    ("f23-rooftop-fan-230v-motor-on-208v.yaml", "supply-voltage-frequency"):
        "supply.voltage",
    ("f23-rooftop-fan-230v-motor-on-208v.yaml", "units-and-dimensions"):
        "motor.rated_power",
    ("f24-dryer-vf-turning-speed.yaml", "speed-range-minimum"):
        "drive.control",
    ("f24-dryer-vf-turning-speed.yaml", "gearbox-peak-speed-thermal"):
        "load.speed_min",  # splash lubrication at the lowest speed
    ("f25-washdown-conveyor-enclosure.yaml", "enclosure-ip"):
        "motor.enclosure",
    ("f26-mixer-overload-duration.yaml", "drive-overload-duty"):
        "drive.overload.duration",  # the peak lasts 90 s, longer than the 60 s overload time
    ("f27-reclaim-belt-dol-starting-torque.yaml", "dol-starting"):
        "motor.locked_rotor_torque",  # the locked-rotor torque at the dipped voltage does not start the belt
    ("f27-reclaim-belt-dol-starting-torque.yaml", "supply-voltage-frequency"):
        "supply.voltage",
    ("f28-process-pump-drive-input-range.yaml", "supply-voltage-frequency"):
        "drive.input_voltage_max",  # 466.4 V > the drive's 456.5 V upper input limit
    ("f29-conveyor-delta-motor-vf-mismatch.yaml", "base-speed-voltage-match"):
        "motor.rated_voltage",
    ("f30-soft-start-belt-current-limit.yaml", "soft-starter-starting"):
        "drive.soft_start.current_limit",
    ("f30-soft-start-belt-current-limit.yaml", "supply-voltage-frequency"):
        "supply.voltage",
    ("f31-small-fan-ie1-eu-market.yaml", "supply-voltage-frequency"):
        "supply.voltage",
    ("f31-small-fan-ie1-eu-market.yaml", "efficiency-class"):
        "motor.efficiency_class",
    ("f32-incline-belt-no-backstop.yaml", "conveyor-runback"):
        "load.incline",  # no backstop nor brake to point at: the incline that makes it run back
    ("f33-pump-drive-short-circuit-rating.yaml", "short-circuit-rating"):
        "drive.short_circuit_rating",
    ("f34-crusher-feed-belt-stopping-time.yaml", "stopping-time"):
        "protection.safety_stop.stopping_time",  # 2.672 s against the required stopping time
    ("f34-crusher-feed-belt-stopping-time.yaml", "torque-peak"):
        "drive.overload.current",  # 95.09 N·m available is T(27 A), the drive's overload current
    ("f35-apartment-pump-emc-category.yaml", "emc-category"):
        "drive.emc_category",
    ("f36-belt-nameplate-transposed-current.yaml", "nameplate-electrical-power"):
        "motor.rated_current",
    ("f40-mould-shop-hoist-s3-rating.yaml", "torque-rms-duty-cycle"):
        "load.duty",
    ("f41-downhill-belt-quick-stop.yaml", "drive-overload-duty"):
        "drive.overload.current",
    ("f41-downhill-belt-quick-stop.yaml", "torque-peak"):
        "drive.overload.current",  # 'the 827 N*m the drive's overload current gives'
    ("f44-screen-feed-chain-sprocket-overhung.yaml", "overhung-load"):
        "transmission.overhung_load.permissible_radial_load",
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


def _failing_findings(*paths: str) -> dict[tuple[str, str], dict]:
    """Return the failing findings (error, warning, info) of a run on ``paths``, by (spec file name, rule)."""
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", *paths, "--format", "json",
                           "--no-cache"], cwd=ROOT, capture_output=True, text=True, timeout=300,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})
    assert proc.returncode == 1, proc.stderr
    found = {}
    for spec in json.loads(proc.stdout)["specs"]:
        for outcome in spec["outcomes"]:
            if outcome["outcome"] == "fail":
                found[(Path(spec["file"]).name, outcome["rule"])] = outcome
    return found


@pytest.fixture(scope="module")
def demo_findings() -> dict[tuple[str, str], dict]:
    return _failing_findings("specs_demo")


@pytest.fixture(scope="module")
def flawed_findings() -> dict[tuple[str, str], dict]:
    return _failing_findings(*sorted(str(p.relative_to(ROOT)) for p in FLAWED.glob("f*.yaml")))


def test_every_failing_finding_of_the_demo_is_listed(demo_findings) -> None:
    assert set(demo_findings) == set(EXPECTED)


@pytest.mark.parametrize("case", sorted(EXPECTED), ids=lambda case: f"{case[0]}:{case[1]}")
def test_a_finding_points_at_the_key_it_is_about(demo_findings, case) -> None:
    _assert_points_at(demo_findings[case], DEMO / case[0], EXPECTED[case])


def test_every_failing_finding_of_the_flawed_corpus_is_listed(flawed_findings) -> None:
    assert set(flawed_findings) == set(EXPECTED_FLAWED)


@pytest.mark.parametrize("case", sorted(EXPECTED_FLAWED), ids=lambda case: f"{case[0]}:{case[1]}")
def test_a_finding_of_the_flawed_corpus_points_at_the_key_it_is_about(flawed_findings, case) -> None:
    _assert_points_at(flawed_findings[case], FLAWED / case[0], EXPECTED_FLAWED[case])


def _assert_points_at(outcome: dict, spec: Path, expected: str) -> None:
    where = outcome["location"]
    positions = _key_positions(spec.read_text(encoding="utf-8"))
    assert expected in positions, f"{expected} is not in {spec.name}"
    assert where["path"] == expected
    assert (where["line"], where["column"]) in positions[expected]
    assert where["line"] > 1  # never the top of the document (a key missing from the spec)
