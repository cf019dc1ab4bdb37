"""The spec-format reference in docs/ is generated from the schema and kept in step with it."""

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
