"""Every citation of a design rule (R01), a check value (K01) or a pitfall names an entry of docs/references.md.

The physics docstrings, the rules' bases, derived values' provenance and the tests cite their sources by these
names; the entries live in the repository, so a reader can open each one.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
REFERENCES = ROOT / "docs" / "references.md"
# where citations are written: code, rule files, schemas, tests and the docs
CITING = [
    *sorted((ROOT / "rulecheck").rglob("*.py")),
    *sorted((ROOT / "rulecheck").rglob("*.yaml")),
    *sorted((ROOT / "rulecheck").rglob("*.json")),
    *sorted((ROOT / "rules").glob("*.yaml")),
    *sorted(p for p in (ROOT / "tests").rglob("*.py") if p.name != "test_references.py"),
    *sorted((ROOT / "docs").glob("*.md")),
]
# The derive modules and their tests are being moved into a derive package, which rewrites their citations;
# until then they still say "rulebook R31" (their ids resolve all the same). Files of these names only.
_OLD_WORDING = {"rulecheck/derive_machines.py", "rulecheck/derive_installation.py", "tests/test_derive_machines.py",
                "tests/test_derive_installation.py"}
_ID = re.compile(r"\b([RK])(\d\d)\b(?:\s*[–-]\s*\1?(\d\d)\b)?")  # R31, K32, and ranges such as K19–K23
_PITFALL = re.compile(r"\bpitfalls? (\d+)((?:(?:,| and) \d+\b)*)")
_CAUTION = re.compile(r"\bsafety cautions? (\d+)")


def _entries() -> tuple[set[str], set[int], set[int]]:
    """Return the R/K entries, pitfall numbers and safety-caution numbers that docs/references.md defines."""
    text = REFERENCES.read_text(encoding="utf-8")
    ids = set(re.findall(r"^#### ([RK]\d\d)\b", text, re.M)) | set(re.findall(r"^\| ([RK]\d\d) \|", text, re.M))
    pitfalls_part = text.split("\n## Pitfalls", 1)[1].split("\n## ", 1)[0]
    pitfalls = {int(n) for n in re.findall(r"^\| (\d+) \|", pitfalls_part, re.M)}
    cautions_part = text.split("\n## Safety cautions", 1)[1].split("\n## ", 1)[0]
    cautions = {int(n) for n in re.findall(r"^(\d+)\. ", cautions_part, re.M)}
    return ids, pitfalls, cautions


def _citations(text: str) -> list[tuple[str, str]]:
    """Return (kind, name) for every citation in ``text``: ("id", "R31"), ("pitfall", "7"), ("caution", "3")."""
    found: list[tuple[str, str]] = []
    for m in _ID.finditer(text):
        letter, first, last = m.group(1), int(m.group(2)), int(m.group(3) or m.group(2))
        found += [("id", f"{letter}{n:02d}") for n in range(first, last + 1)]
    for m in _PITFALL.finditer(text):
        found += [("pitfall", n) for n in [m.group(1), *re.findall(r"\d+", m.group(2))]]
    found += [("caution", m.group(1)) for m in _CAUTION.finditer(text)]
    return found


def test_references_define_the_design_rules_check_values_and_pitfalls() -> None:
    ids, pitfalls, cautions = _entries()
    # the design notes number the rules R01, R02, … without gaps (R01–R40 first, one more per rule added since) and
    # the check values K01–K44 without K13/K14; 30 pitfalls, 12 cautions
    rules = {i for i in ids if i.startswith("R")}
    assert len(rules) >= 40 and rules == {f"R{n:02d}" for n in range(1, len(rules) + 1)}
    assert ids - rules == {f"K{n:02d}" for n in range(1, 47)} - {"K13", "K14"}
    assert pitfalls == set(range(1, 31))
    assert cautions == set(range(1, 13))


def test_each_shipped_rule_has_its_design_rule_entry() -> None:
    text = REFERENCES.read_text(encoding="utf-8")
    named = set(re.findall(r"^- \*\*Rule:\*\* `rules/([a-z0-9-]+)\.yaml`", text, re.M))
    assert named == {p.stem for p in (ROOT / "rules").glob("*.yaml")}


def test_citation_finder_reads_ranges_and_lists() -> None:
    # the finder must see what a citation says, or the check below could pass on text it never read
    assert _citations("rulebook K19–K23; R04") == [("id", f"K{n}") for n in range(19, 24)] + [("id", "R04")]
    assert _citations("pitfalls 7, 12 and 13 (safety caution 3)") == [
        ("pitfall", "7"), ("pitfall", "12"), ("pitfall", "13"), ("caution", "3")]
    assert ("id", "K13") in _citations("K13") and ("id", "R41") in _citations("R41")


@pytest.mark.parametrize("path", CITING, ids=lambda p: str(p.relative_to(ROOT)))
def test_every_citation_names_an_existing_entry(path: Path) -> None:
    ids, pitfalls, cautions = _entries()
    known = {"id": ids, "pitfall": {str(n) for n in pitfalls}, "caution": {str(n) for n in cautions}}
    text = path.read_text(encoding="utf-8")
    missing = sorted({f"{kind} {name}" for kind, name in _citations(text) if name not in known[kind]})
    assert not missing, f"{path.relative_to(ROOT)} cites what docs/references.md does not hold: {missing}"


@pytest.mark.parametrize("path", CITING, ids=lambda p: str(p.relative_to(ROOT)))
def test_citations_name_the_references_not_an_outside_document(path: Path) -> None:
    # "rulebook R31" pointed at a document outside the repository; citations name docs/references.md
    if str(path.relative_to(ROOT)) in _OLD_WORDING:
        pytest.skip("citations rewritten when the derive modules move")
    text = path.read_text(encoding="utf-8")
    lines = [n for n, line in enumerate(text.splitlines(), 1) if re.search(r"\brulebook\b", line, re.I)]
    assert not lines, f"{path.relative_to(ROOT)} lines {lines}: cite docs/references.md instead of the rulebook"
