"""The compiled validator that large runs ask first must agree with jsonschema on every spec."""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from rulecheck.schema import _fast_refused, _validator

ROOT = Path(__file__).resolve().parents[2]
SPECS = sorted((ROOT / "specs_demo").glob("*.yaml")) + sorted((ROOT / "tests").rglob("*.yaml"))


def _fast(data: object) -> bool:
    return _fast_refused(data) is None


def _docs() -> list[object]:
    out = []
    for path in SPECS:
        try:
            data = yaml.safe_load(path.read_text(encoding="utf-8"))
        except Exception:
            continue
        if isinstance(data, dict) and "format" in data:
            out.append(data)
    return out


DOCS = _docs()


def test_the_repository_specs_give_jsonschema_both_answers() -> None:
    # agreement is worth something only where the reference (jsonschema) accepts some specs and refuses others
    assert {_validator().is_valid(d) for d in DOCS} == {True, False}


@pytest.mark.parametrize("index", range(len(DOCS)))
def test_agrees_on_every_spec_in_the_repository(index: int) -> None:
    data = DOCS[index]
    assert _fast(data) == _validator().is_valid(data)


_values = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6), st.floats(allow_nan=True),
                    st.text(max_size=12), st.sampled_from(["7.5 kW", "1455 r/min", "induction", "IP55", "50 %"]))


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(DOCS), st.lists(st.tuples(st.integers(0, 40), _values), max_size=4), st.data())
def test_agrees_on_mutated_specs(base: dict, edits: list, data: st.DataObject) -> None:
    import copy

    doc = copy.deepcopy(base)
    for pick, value in edits:
        section = doc
        keys = [k for k, v in section.items()]
        key = keys[pick % len(keys)]
        if isinstance(section[key], dict) and section[key] and data.draw(st.booleans()):
            inner = section[key]
            inner_keys = list(inner)
            inner[inner_keys[pick % len(inner_keys)]] = value
        else:
            section[key] = value
    assert _fast(doc) == _validator().is_valid(doc)


def test_agrees_on_a_generated_corpus(tmp_path: Path) -> None:
    import subprocess
    import sys

    generator = str(ROOT / "bench" / "generate.py")
    subprocess.run([sys.executable, generator, str(tmp_path), "--count", "150", "--seed", "3"], check=True,
                   capture_output=True)
    verdicts: set[bool] = set()
    for path in sorted(tmp_path.rglob("*.yaml")):
        try:
            data = yaml.safe_load(path.read_text(encoding="utf-8"))
        except Exception:
            continue  # files that do not load never reach a validator
        assert _fast(data) == _validator().is_valid(data), path.name
        verdicts.add(_validator().is_valid(data))
    assert verdicts == {True, False}  # the corpus's deliberate mistakes include specs jsonschema refuses


def _error_list(errors: list) -> list[tuple]:
    return [(list(e.path), list(e.schema_path), e.validator, e.validator_value, e.message,
             [(list(c.path), c.validator, c.message) for c in e.context]) for e in errors]


def _invalid_docs() -> list[dict]:
    """The repository's invalid specs, and mistakes made in each section of the valid ones."""
    import copy

    out = [d for d in DOCS if not _validator().is_valid(d)]
    for base in DOCS[:6]:
        for key in base:
            doc = copy.deepcopy(base)
            if isinstance(doc[key], dict) and doc[key]:
                first = next(iter(doc[key]))
                doc[key][first] = {"nested": True}
                doc[key]["no_such_key"] = 1
            else:
                doc[key] = {"no": "good"}
            doc["no_such_section"] = 1
            out.append(doc)
        out.append({**copy.deepcopy(base), "format": 2, "tag": "bad tag", "margins": {"Bad": []}})
        out.append({k: v for k, v in base.items() if k != "motor"})
    return out


def test_only_the_refused_parts_are_explained_with_the_whole_pass_s_errors() -> None:
    """jsonschema runs on the top level and on the sections the compiled validators refuse: the errors are
    the whole pass's, in its order, with the same paths, keywords and messages."""
    from rulecheck import schema

    invalid = _invalid_docs()
    assert not any(_validator().is_valid(doc) for doc in invalid)  # each one is refused by the reference too
    for doc in invalid:
        refused = schema._fast_refused(doc)
        assert refused, doc
        assert _error_list(schema._errors(doc, refused)) == _error_list(list(_validator().iter_errors(doc)))
        assert "*" not in refused and len(refused) < len(doc)  # only a part is validated again


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(DOCS), st.lists(st.tuples(st.integers(0, 40), _values), min_size=1, max_size=4), st.data())
def test_explaining_only_the_refused_parts_gives_the_whole_pass_s_errors_on_mutated_specs(
        base: dict, edits: list, data: st.DataObject) -> None:
    import copy

    from rulecheck import schema

    doc = copy.deepcopy(base)
    for pick, value in edits:
        keys = list(doc)
        key = keys[pick % len(keys)]
        if isinstance(doc[key], dict) and doc[key] and data.draw(st.booleans()):
            inner_keys = list(doc[key])
            doc[key][inner_keys[pick % len(inner_keys)]] = value
        else:
            doc[key] = value
    refused = schema._fast_refused(doc)
    whole = list(_validator().iter_errors(doc))
    assert (refused is None) == (not whole)
    if refused is not None:
        assert _error_list(schema._errors(doc, refused)) == _error_list(whole)
