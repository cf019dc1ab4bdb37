"""A field that fails validation: the rules that depend on it end as not-checked naming it, the others still
report; and the rule lint's --strict check of messages that could show a missing value."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

from .conftest import DEMO, ROOT, run_cli

HOIST = DEMO / "h-310-maintenance-hoist.yaml"


def _outcomes(proc) -> dict[str, dict]:
    return {o["rule"]: o for o in json.loads(proc.stdout)["specs"][0]["outcomes"]}


def test_a_unit_typo_makes_the_rules_that_depend_on_it_not_checked(tmp_path: Path) -> None:
    text = HOIST.read_text(encoding="utf-8")
    assert "rated_speed: 1465 r/min" in text
    spec = tmp_path / "h.yaml"
    spec.write_text(text.replace("rated_speed: 1465 r/min", "rated_speed: 1465 RPM"), encoding="utf-8")
    good = _outcomes(run_cli("check", str(HOIST), "--no-cache", "--format", "json"))
    bad = _outcomes(run_cli("check", str(spec), "--no-cache", "--format", "json"))
    assert bad["units-and-dimensions"]["outcome"] == "fail"
    # with the speed left out, the peak gearbox torque was worked out from the motor's maximum alone (no drive
    # current limit, which needs the rated speed): a spurious safety error about a value the spec does not give
    assert good["gearbox-peak-speed-thermal"]["outcome"] == "pass"
    nc = bad["gearbox-peak-speed-thermal"]
    assert nc["outcome"] == "not-checked" and nc["missing"][0] == "motor.rated_speed"
    assert "motor.rated_speed, which failed validation" in nc["message"]
    # (with a duty cycle the thermal verdict is the RMS rule's; torque-margin-continuous does not apply)
    for rule in ("torque-rms-duty-cycle", "drive-current-continuous", "acceleration-time", "torque-peak"):
        assert bad[rule]["outcome"] == "not-checked" and "motor.rated_speed" in bad[rule]["missing"]
    # findings that do not depend on the speed are still reported, with the same numbers
    for rule in ("regen-braking-energy", "holding-brake-vertical"):
        assert bad[rule]["outcome"] == good[rule]["outcome"] == "fail"
        assert bad[rule]["values"] == good[rule]["values"]


def test_a_valid_spec_is_not_affected() -> None:
    proc = run_cli("check", str(HOIST), "--no-cache", "--format", "json")
    assert not any("failed validation" in o["message"] for o in _outcomes(proc).values())


def test_strict_lint_rejects_a_message_that_can_show_a_missing_value(tmp_path: Path) -> None:
    folder = tmp_path / "own"
    folder.mkdir()
    source = (ROOT / "rules" / "inertia-ratio.yaml").read_text(encoding="utf-8")
    rule = source.replace("id: inertia-ratio", "id: inertia-ratio-local")
    # applied to every drive-controlled train, so the lint's sample specs reach its checks
    applies = next(line for line in rule.splitlines() if line.startswith("applies_when:"))
    rule = rule.replace(applies, "applies_when: \"drive.kind is not defined or drive.kind != 'direct-on-line'\"")
    # a message that shows motor.base_speed, which no value or check of the rule reads
    rule = rule.replace("(load {{ load_inertia }} at the motor shaft, rotor {{ motor.inertia }})",
                        "(load {{ load_inertia }} at the motor shaft, rotor {{ motor.inertia }}, "
                        "base speed {{ motor.base_speed }})", 1)
    assert "motor.base_speed" in rule
    (folder / "inertia-ratio-local.yaml").write_text(rule, encoding="utf-8")
    proc = run_cli("rules", "lint", str(folder), "--strict")
    assert proc.returncode == 1
    # the rotor inertia beside it is not: the inertia ratio the checks read is computed from it
    assert "checks[0].message: shows motor.base_speed, which the rule does not need" in proc.stdout
    assert "motor.inertia" not in proc.stdout
    guarded = rule.replace("base speed {{ motor.base_speed }}",
                           "{{ ('base speed ' ~ motor.base_speed) if motor.base_speed is defined else '' }}")
    (folder / "inertia-ratio-local.yaml").write_text(guarded, encoding="utf-8")
    proc = run_cli("rules", "lint", str(folder), "--strict")
    assert proc.returncode == 0, proc.stdout + proc.stderr


def test_strict_lint_is_off_by_default(tmp_path: Path) -> None:
    shutil.copytree(ROOT / "rules", tmp_path / "rules")
    assert run_cli("rules", "lint", str(tmp_path / "rules")).returncode == 0


def test_a_rule_whose_message_shows_the_invalid_field_is_not_checked(tmp_path: Path) -> None:
    # the supply rule passed on a negative frequency (the field left out) with "(message needs supply.frequency)"
    # as its text: its checks read the frequency only where it is given, its message always
    text = HOIST.read_text(encoding="utf-8")
    spec = tmp_path / "h.yaml"
    assert "frequency: 50 Hz" in text
    spec.write_text(text.replace("frequency: 50 Hz", "frequency: -50 Hz", 1), encoding="utf-8")
    bad = _outcomes(run_cli("check", str(spec), "--no-cache", "--format", "json"))
    assert bad["spec-schema"]["outcome"] == "fail"
    sv = bad["supply-voltage-frequency"]
    assert sv["outcome"] == "not-checked" and "supply.frequency, which failed validation" in sv["message"]
    assert not any("(message needs" in o["message"] for o in bad.values())
