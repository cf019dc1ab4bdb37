"""Every basis marked V (verified) names the clause, table, annex or worked example that was checked.

docs/references.md, status legend: V means checked against a published source, named with its clause, table or
edition, or a textbook worked example. A V beside a source that names none of these (or that says "from memory")
is not a verified basis; it is P, M or C.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parents[2]
RULES = sorted((ROOT / "rules").glob("*.yaml"))

# a clause or paragraph number (430.32(A)(1), 12.44, 9.3), a table, an annex, a section sign or a worked example
_NAMED = re.compile(r"\b(?:clause|Table|table|Annex|annex|Ex\.|Example|example)\b|§|\b\d{1,4}\.\d{1,3}\b")
_MEMORY = re.compile(r"from memory|common practice", re.I)
_STATUSES = {"V", "V*", "P", "M", "C"}


def _bases() -> list[tuple[str, str, str]]:
    found = []
    for path in RULES:
        for basis in yaml.safe_load(path.read_text(encoding="utf-8")).get("basis") or []:
            found.append((path.stem, str(basis.get("source", "")), str(basis.get("status", ""))))
    return found


def test_there_are_bases_to_check() -> None:
    assert len(RULES) >= 40 and len(_bases()) >= 80


@pytest.mark.parametrize(("rule", "source", "status"), _bases(), ids=lambda v: v[:40] if isinstance(v, str) else v)
def test_every_verified_basis_names_what_was_checked(rule: str, source: str, status: str) -> None:
    assert status in _STATUSES, f"{rule}: unknown basis status {status!r}"
    if status != "V":
        return
    assert _NAMED.search(source), f"{rule}: basis marked V names no clause, table or worked example: {source!r}"
    assert not _MEMORY.search(source), f"{rule}: basis marked V is from memory or common practice: {source!r}"


def test_the_pattern_tells_a_named_clause_from_a_bare_citation() -> None:
    # the test itself can fail: bare citations are refused, named clauses and examples accepted
    assert not _NAMED.search("IEC 60034-1 duty types S1–S8 (definitions)")
    assert not _NAMED.search("torque ∝ (V/f)² (electric-machines textbooks)")
    assert _NAMED.search("NFPA 70 (NEC) 2008, Table 430.250 full-load currents")
    assert _NAMED.search("NEMA MG 1 12.44 running limits")
    assert _NAMED.search("IEC 60364-5-52 Annex G formula")
    assert _NAMED.search("textbook worked example (ISBN 978-81-317-5456-6, Ex. 8.3)")
