"""``rulecheck rules``: list the rules, show one, or lint a folder of rule files."""

from __future__ import annotations

import sys
import textwrap
from pathlib import Path
from typing import Any

from rulecheck.check import BUILTIN_RULES
from rulecheck.derive import catalogue  # the catalogue rule expressions may read besides the spec's fields
from rulecheck.engine.lint import lint_rule
from rulecheck.engine.ruleset import RuleError, load_rules, rule_files, rules_digest, shipped_rules_dir
from rulecheck.report.common import terminal_safe

__all__ = ["is_shipped_rules", "lint_folder", "list_rules", "show_rule"]

def _say(*parts: object, **options: Any) -> None:
    """Print text from rule files: a rule file comes from a pull request as often as not, so nothing it holds
    reaches the terminal as a control sequence."""
    print(*(terminal_safe(p) for p in parts), **options)


_STATUS = {"V": "verified", "V*": "verified numerically", "P": "derivation", "M": "from memory",
           "C": "common practice"}


def _ruleset(extra: list[str]):  # type: ignore[no-untyped-def]
    ruleset, errors = load_rules([shipped_rules_dir(), *[Path(p) for p in extra]])
    for e in errors:
        _say(f"rulecheck: {e}", file=sys.stderr)
    return ruleset, errors


def list_rules(extra: list[str]) -> int:
    """Print one line per rule: id, topic, severity, safety flag, title."""
    ruleset, errors = _ruleset(extra)
    rows = [(k, v["topic"], v["severity"], v["safety"], v["title"] + " (built in)") for k, v in BUILTIN_RULES.items()]
    rows += [(r.id, r.topic, r.severity, r.safety, r.title) for r in ruleset.rules.values()]
    width = max(len(r[0]) for r in rows)
    for rule_id, topic, severity, safety, title in sorted(rows, key=lambda r: (r[1], r[0])):
        mark = "S" if safety else " "
        _say(f"{rule_id:<{width}}  {topic:<20}  {severity:<7}  {mark}  {title}")
    _say(f"\n{len(rows)} rules; S = safety-relevant (never a silent pass when it cannot be evaluated)")
    return 2 if errors else 0


def show_rule(rule_id: str, extra: list[str]) -> int:
    """Print what a rule checks, why, its formula, parameters, basis and examples."""
    if rule_id in BUILTIN_RULES:
        meta = BUILTIN_RULES[rule_id]
        _say(f"{rule_id}: {meta['title']}\n\n{textwrap.fill(meta['description'], 88)}\n")
        for b in meta["basis"]:
            _say(f"basis: {b['source']} ({_STATUS.get(b['status'], b['status'])})")
        _say("\nBuilt in: checked while the spec is loaded and validated.")
        return 0
    ruleset, _errors = _ruleset(extra)
    resolved = ruleset.resolve(rule_id)
    if resolved is None:
        import difflib

        close = difflib.get_close_matches(rule_id, [*ruleset.rules, *BUILTIN_RULES], n=1)
        _say(f"rulecheck: no rule '{rule_id}'" + (f"; did you mean '{close[0]}'?" if close else ""),
              file=sys.stderr)
        return 2
    r = ruleset.rules[resolved]
    _say(f"{r.id}: {r.title}")
    _say(f"topic {r.topic}, severity {r.severity}" + (", safety-relevant" if r.safety else ""))
    if r.aliases:
        _say("aliases: " + ", ".join(r.aliases))
    _say()
    _print_description(r)
    if r.formula:
        _say(f"formula: {r.formula}")
    if r.applies_text:
        _say(f"applies when: {r.applies_text}")
    if r.values:
        _say("computed:")
        for name, _c, text, _k in r.values:
            _say(f"  {name} = {text}")
    _print_checks(r)
    if r.params:
        _say("parameters (override in configuration or in the spec's 'margins'):")
        for p in r.params.values():
            _say(f"  {p.name} = {p.written}  — {p.description}")
    _say("basis:")
    for b in r.basis:
        _say(f"  {b['source']} ({_STATUS.get(b['status'], b['status'])})")
    _say("examples:")
    for ex in r.examples:
        _say(f"  {ex['outcome']}: {ex['name']}")
    _say(f"\nfile: {r.file}")
    return 0


def _print_checks(r) -> None:  # type: ignore[no-untyped-def]
    """Print the rule's checks in order, each with the spec key its finding points at when it has its own."""
    if r.locations:
        _say("points at: " + " or ".join(r.locations) + " (the first the spec gives)" * (len(r.locations) > 1))
    _say("fails when (first that holds):")
    for c in r.checks:
        _say(f"  [{'not applicable' if c.not_applicable else c.severity}] {c.when_text}")
        if c.location and not c.not_applicable:
            _say("      points at: " + " or ".join(c.location))


def _print_description(r) -> None:  # type: ignore[no-untyped-def]
    """Print the rule's description, paragraph by paragraph, then what it covers (its scope)."""
    for para in r.description.strip().split("\n\n"):
        _say(textwrap.fill(" ".join(para.split()), 88))
        _say()
    if r.scope:
        _say(textwrap.fill(f"scope: {r.scope}", 88, subsequent_indent="  "))
        _say()


def is_shipped_rules(folder: Path) -> bool:
    """Return whether a folder is (a copy of) the shipped rules: the same folder, the same rule files (names
    and bytes), or a source tree's copy holding a file of every shipped rule file's name."""
    shipped = shipped_rules_dir()
    if folder.resolve() == shipped.resolve():
        return True
    mine = {p.name for p in rule_files(folder)}
    theirs = {p.name for p in rule_files(shipped)}
    if not theirs or not theirs <= mine:
        return False
    return mine == theirs and rules_digest([folder]) == rules_digest([shipped]) or (
        folder.resolve().parent / "rulecheck" / "__init__.py").is_file()


def lint_folder(folder: str, strict: bool = False) -> int:
    """Validate and dimension-check every rule file in ``folder``; print problems as file:line:col.

    A folder other than the shipped rules is checked as ``check --rules`` would load it: beside the
    shipped rules, so an id that repeats a shipped rule's is reported. A folder that is the shipped rules
    (the same folder, the same files, or a source tree's copy holding a file of every shipped rule's name,
    such as the repository's ``rules/`` while an installed copy exists) is linted on its own.
    ``strict``: also reject a message, fix or pass message that can show a missing value where the rule still
    ends in a fail or a pass (derived values followed to the inputs they are computed from).
    """
    from rulecheck.authoring.requests import all_links as links

    path = Path(folder)
    if not path.is_dir():
        _say(f"rulecheck: {folder}: not a folder", file=sys.stderr)
        return 2
    shipped = shipped_rules_dir().resolve()
    alone = is_shipped_rules(path)
    folders = [path] if alone else [shipped_rules_dir(), path]
    ruleset, problems = load_rules(folders)
    problems = [p for p in problems if alone or not p.file.startswith(str(shipped))]
    files = rule_files(path)
    for rule in ruleset.rules.values():
        if Path(rule.file).resolve().parent != path.resolve():
            continue
        if rule.id in BUILTIN_RULES:
            problems.append(RuleError(rule.file, f"rule id '{rule.id}' is the id of a built-in check"))
        _kinds, found = lint_rule(rule, catalogue(), ruleset.compile_cache, messages=strict,
                                  links=links() if strict else None)
        problems.extend(found)
        outcomes = {e["outcome"] for e in rule.examples}
        if "pass" not in outcomes or "fail" not in outcomes:
            problems.append(RuleError(rule.file, "examples need at least one pass and one fail case"))
    for p in problems:
        _say(str(p))
    _say(f"{len(files)} rule files, {len(problems)} problems", file=sys.stderr)
    return 1 if problems else 0
