"""The spec-format reference in docs/ is generated from the schema and kept in step with it; the rule-format
reference documents every key the rule schema allows."""

from pathlib import Path

from rulecheck.docs import spec_format_markdown

ROOT = Path(__file__).resolve().parents[2]


def test_spec_format_reference_is_up_to_date() -> None:
    committed = (ROOT / "docs" / "spec-format.md").read_text(encoding="utf-8")
    assert committed == spec_format_markdown(), "run: rulecheck schema --markdown > docs/spec-format.md"


def test_readme_quick_start_has_exactly_two_commands() -> None:
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    quick = readme.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    commands = [line for line in quick.splitlines() if line.startswith("python3 -m venv")]
    assert len(commands) == 2
    assert "rulecheck check specs_demo/" in commands[0] and "pytest" in commands[1]


def test_readme_configuration_example_is_a_valid_configuration(tmp_path) -> None:
    import datetime as dt

    from rulecheck.config import read_config
    from rulecheck.run import prepare

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    block = readme.split("### Configuration", 1)[1].split("```yaml", 1)[1].split("```", 1)[0]
    (tmp_path / "company-rules").mkdir()
    (tmp_path / ".rulecheck.yaml").write_text(block, encoding="utf-8")
    prepare(read_config(tmp_path / ".rulecheck.yaml"), [], dt.date(2026, 12, 1), "si", None)  # raises if invalid


def _rule_keys(node: dict, path: str = "") -> list[str]:
    """Return every key the rule schema allows, named as docs/rule-format.md does (checks[].when)."""
    keys = []
    for key, sub in (node.get("properties") or {}).items():
        name = f"{path}.{key}" if path else key
        keys.append(name)
        if sub.get("type") == "array" and isinstance(sub.get("items"), dict):
            keys += _rule_keys(sub["items"], name + "[]")
        elif isinstance(sub.get("additionalProperties"), dict):
            keys += _rule_keys(sub["additionalProperties"], name + ".<name>")
        else:
            keys += _rule_keys(sub, name)
    return keys


def test_rule_format_reference_documents_every_key_the_rule_schema_allows() -> None:
    import yaml

    schema = yaml.safe_load((ROOT / "rulecheck" / "schemas" / "rule.schema.yaml").read_text(encoding="utf-8"))
    doc = (ROOT / "docs" / "rule-format.md").read_text(encoding="utf-8")
    rows = {line.split("|")[1].strip().strip("`") for line in doc.splitlines() if line.startswith("| `")}
    keys = _rule_keys(schema)
    assert len(keys) > 40 and "checks[].location" in keys and "examples[].location" in keys
    assert [k for k in keys if k not in rows] == [], "document these keys in docs/rule-format.md"
    assert [r for r in rows if r not in keys] == [], "docs/rule-format.md documents keys the rule schema lacks"
    # the choices the schema allows are named where their key is described
    for choices in (schema["properties"]["topic"]["enum"], schema["properties"]["severity"]["enum"],
                    schema["properties"]["basis"]["items"]["properties"]["status"]["enum"],
                    schema["properties"]["examples"]["items"]["properties"]["outcome"]["enum"]):
        assert all(f"`{c}`" in doc for c in choices), choices
    assert "`outcome: not-applicable`" in doc
