"""The engine's boundaries: what it imports, what its caller gives it, the kinds rules declare, the names
the translator collects and the compile cache the caller owns."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from rulecheck.derive import DERIVED
from rulecheck.engine import expr
from rulecheck.engine.compiler import translate
from rulecheck.engine.lint import catalogue, lint_rule
from rulecheck.engine.ruleset import VALUE_KINDS, RuleError, environment, load_rule_file, load_rules, shipped_rules_dir

ROOT = Path(__file__).resolve().parents[2]
BASE = (ROOT / "rules" / "nameplate-power-torque-speed.yaml").read_text(encoding="utf-8")
DEVIATION = ('deviation: {expr: "abs(motor.rated_power - motor.rated_torque * motor.rated_speed) / '
             'motor.rated_power", kind: fraction}')


def _modules_after(statement: str) -> set[str]:
    code = f"import sys\n{statement}\nprint('\\n'.join(m for m in sys.modules if m.startswith('rulecheck')))"
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True)
    return set(out.stdout.split())


def test_the_model_imports_nothing_from_the_engine() -> None:
    assert not {m for m in _modules_after("import rulecheck.model") if m.startswith("rulecheck.engine")}


def test_the_engine_imports_nothing_from_derive_run_report_or_cli() -> None:
    loaded = _modules_after("import rulecheck.engine.lint, rulecheck.engine.run, rulecheck.engine.ruleset")
    above = {"derive", "derive_machines", "derive_installation", "runner", "run", "check", "report", "cli", "cache"}
    upward = {m for m in loaded if m.split(".")[1:2] and m.split(".")[1] in above}
    assert not upward


def test_the_catalogue_is_what_the_caller_gives() -> None:
    assert "train.peak_torque_required" not in catalogue({})
    assert catalogue({"train.peak_torque_required": "torque"})["train.peak_torque_required"] == ("quantity", "torque")
    # derive's own form (kind, how it is derived) gives the same catalogue
    assert catalogue(DERIVED) == catalogue({p: kind for p, (kind, _how) in DERIVED.items()})


def test_a_rule_reading_a_derived_path_needs_the_derived_catalogue() -> None:
    rule = load_rule_file(shipped_rules_dir() / "torque-peak.yaml")
    assert lint_rule(rule, DERIVED)[1] == []
    problems = [str(p) for p in lint_rule(rule, {})[1]]
    assert any("unknown input 'train.peak_torque_required'" in p for p in problems), problems


# --- kinds ---------------------------------------------------------------------------------------------


def test_every_shipped_value_declares_a_known_kind() -> None:
    for path in sorted(shipped_rules_dir().glob("*.yaml")):
        for name, spec in (yaml.safe_load(path.read_text(encoding="utf-8")).get("values") or {}).items():
            assert isinstance(spec, dict) and spec.get("kind") in VALUE_KINDS, f"{path.name}: values.{name}"


def test_the_schema_lists_the_value_kinds_the_engine_knows() -> None:
    schema = yaml.safe_load((ROOT / "rulecheck" / "schemas" / "rule.schema.yaml").read_text(encoding="utf-8"))
    kind = schema["properties"]["values"]["additionalProperties"]["properties"]["kind"]
    assert set(kind["enum"]) == set(VALUE_KINDS)


def _probe(tmp_path: Path, value_line: str) -> list[str]:
    assert DEVIATION in BASE
    text = BASE.replace("id: nameplate-power-torque-speed", "id: probe").replace(DEVIATION, value_line)
    path = tmp_path / "probe.yaml"
    path.write_text(text, encoding="utf-8")
    return [str(p) for p in lint_rule(load_rule_file(path), DERIVED)[1]]


@pytest.mark.parametrize("value_line,words", [
    ('deviation: {expr: "motor.rated_speed / motor.rated_power", kind: fraction}', "dimensionless"),
    ('deviation: {expr: "motor.rated_torque / motor.rated_torque", kind: torque}', "declared kind torque"),
    ('deviation: {expr: "deviation_error * 2", kind: torque}', "plain number"),
    ('deviation: {expr: "motor.rated_speed * 1.0", kind: torque}', "declared kind torque"),
    ('deviation: {expr: "motor.rated_torque / motor.rated_torque", kind: flag}', "declared kind flag"),
    ('deviation: {expr: "motor.rated_torque > motor.rated_torque", kind: ratio}', "declared kind ratio"),
    ('deviation: {expr: "motor.rated_power * 2", kind: count}', "dimensionless"),
])
def test_the_lint_holds_the_expression_to_its_declared_kind(tmp_path: Path, value_line: str, words: str) -> None:
    problems = _probe(tmp_path, value_line)
    assert any("values.deviation" in p and words in p for p in problems), problems


def test_a_value_without_a_kind_is_refused_where_it_is_written(tmp_path: Path) -> None:
    line = 'deviation: "abs(motor.rated_power - motor.rated_torque * motor.rated_speed) / motor.rated_power"'
    text = BASE.replace("id: nameplate-power-torque-speed", "id: probe").replace(DEVIATION, line)
    (tmp_path / "probe.yaml").write_text(text, encoding="utf-8")
    expected_line = text.splitlines().index("  " + line) + 1
    for validate in (True, False):  # a file taken as linted before is still refused
        with pytest.raises(RuleError) as info:
            load_rule_file(tmp_path / "probe.yaml", validate=validate)
        assert "values.deviation" in str(info.value) and info.value.line == expected_line


def test_a_service_factor_is_shown_as_a_ratio_not_a_percentage() -> None:
    # NEMA MG 1 writes a service factor as 1.15; the rule declares it a ratio, so messages show it so
    from tests.rules.harness import outcome_of, run_example

    rule = load_rule_file(shipped_rules_dir() / "service-factor-on-inverter.yaml")
    example = next(e for e in rule.examples if e["outcome"] == "pass")
    outcome = outcome_of(run_example(example), rule.id)
    assert outcome["values"]["service_factor"] == {"value": 1.15, "unit": "1", "kind": "ratio"}
    assert "service factor 1.15" in outcome["message"]


# --- the names an expression reads ----------------------------------------------------------------------


def _tree(text: str, template: bool = False):  # type: ignore[no-untyped-def]
    return expr.CompileCache().parse(environment(), text, template)


def test_the_translator_returns_the_names_an_expression_reads() -> None:
    env = environment()
    found = translate(_tree("margin * motor.rated_torque + max(a, b.c) if flag else none"), env,
                      sections=frozenset(expr.SECTION_NAMES))
    assert found.names == {"margin", "max", "a", "b", "flag"}  # motor is a section, never a rule's own name
    assert found.bare == frozenset()
    template = translate(_tree("{{ margin }} of {{ limit }} at {{ motor.rated_speed }}, {{ limit * 2 }}", True),
                         env, template=True, sections=frozenset(expr.SECTION_NAMES))
    assert template.names == {"margin", "limit"} and template.bare == {"margin"}


def test_names_do_not_come_from_the_text_of_the_generated_code() -> None:
    # a string constant that looks like generated code reading a name is not a name read
    compiled = expr.compile_expression(environment(), "\"(L['fake'] if \" ~ real")
    assert compiled.names == {"real"}


# --- the compile cache ------------------------------------------------------------------------------------


def test_the_compile_cache_is_the_callers() -> None:
    first = expr.CompileCache()
    ruleset, errors = load_rules([shipped_rules_dir()], cache=first)
    assert not errors and ruleset.compile_cache is first and first.dirty and first.trees
    kept = expr.CompileCache()
    kept.load(first.export())
    assert not kept.dirty and kept.sources == first.sources
    again, _ = load_rules([shipped_rules_dir()], cache=kept)
    assert not kept.trees and not kept.dirty  # nothing parsed, nothing new to keep
    rule = again.rules["torque-peak"]
    assert rule.message.names == ruleset.rules["torque-peak"].message.names
    assert rule.message.bare == ruleset.rules["torque-peak"].message.bare


def test_a_kept_source_without_its_names_is_translated_anew() -> None:
    env = environment()
    cache = expr.CompileCache()
    key = expr.source_key(env, "expr", "margin + 1")
    cache.load({"sources": {key: "def _compiled(L, G):\n    return 0\n"}})
    compiled = expr.compile_expression(env, "margin + 1", cache)
    assert compiled.names == {"margin"} and compiled(margin=1.0) == 2.0
    assert "_NAMES" in cache.sources[key] and cache.dirty


def test_a_cache_entry_gives_only_text() -> None:
    cache = expr.CompileCache()
    cache.load({"sources": {"a": "x", "b": 3, 4: "y"}, "codes": {"a": "z", "c": "w", "b": None}})
    assert cache.sources == {"a": "x"} and not hasattr(cache, "codes")  # marshalled code is never taken
    cache.load(["not", "a", "mapping"])
    assert cache.sources == {"a": "x"}
