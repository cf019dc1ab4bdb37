"""Bad spec files through the library: each gives an error finding with a clear message and its line, fast."""

from __future__ import annotations

import time
import warnings
from pathlib import Path

import pytest

from rulecheck.check import CheckContext, check_document, check_file
from rulecheck.load import LoadError, load_text
from rulecheck.report import jsonout
from rulecheck.result import assemble
from tests.robustness.corpus import Case, huge_file, static_cases, truncations
from tests.robustness.specs import CONVEYOR, PUMP

# Every file here is a few kB to 1 MiB; one second is generous on a slow 2-core machine (a good spec takes ~10 ms),
# and far below what a hang or an alias expansion would take.
PER_FILE_SECONDS = 10.0  # a hang guard, not a benchmark: typically 0.05 s; an expanded bomb takes minutes

CASES = static_cases()


def _errors(result: dict) -> list[dict]:
    return [o for o in result["outcomes"] if o["outcome"] == "fail" and o["severity"] == "error"]


def _as_json(result: dict) -> dict:
    """Return a one-spec run result after a round trip through the JSON renderer and its schema."""
    return jsonout.load(jsonout.render(assemble([result], "error", "si", "sha256:" + "0" * 64, 1)))


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_bad_file_gives_a_clear_error_at_its_line(case: Case, ctx: CheckContext, tmp_path: Path) -> None:
    path = tmp_path / case.name
    path.write_bytes(case.data)
    start = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a NaN reaching numpy would warn: bad values must stop before physics
        result = check_file(path, ctx)
    assert time.perf_counter() - start < PER_FILE_SECONDS
    errors = _errors(result)
    assert errors, f"{case.name}: no error finding"
    assert result["status"] in ("invalid", "unreadable") and result["verdict"] == "invalid"
    assert not any(o["rule"] == "internal-error" for o in result["outcomes"]), errors
    matching = [o for o in errors if (case.rule is None or o["rule"] == case.rule)
                and all(w.lower() in (o["message"] + " " + o["fix"]).lower() for w in case.words)]
    got = [(o["rule"], o["message"][:200]) for o in errors]
    assert matching, f"{case.name}: expected {case.rule} {case.words}, got {got}"
    if case.line is not None:
        assert any(o["location"]["line"] == case.line for o in matching), [o["location"] for o in matching]
    for o in errors:
        assert 10 <= len(o["message"]) <= 600, o["message"][:300]  # a sentence, not a dump of the input
    _as_json(result)


def test_utf8_bom_is_read_like_plain_utf8(ctx: CheckContext) -> None:
    plain = check_document(load_text(CONVEYOR.encode(), "a.yaml"), ctx)
    bom = check_document(load_text(b"\xef\xbb\xbf" + CONVEYOR.encode(), "a.yaml"), ctx)
    assert [o["outcome"] for o in bom["outcomes"]] == [o["outcome"] for o in plain["outcomes"]]
    assert bom["status"] == "checked" and bom["tag"] == "CV-210"


def test_file_over_the_size_limit_is_refused_before_parsing(ctx: CheckContext, tmp_path: Path) -> None:
    path = tmp_path / "huge.yaml"
    path.write_bytes(huge_file())
    start = time.perf_counter()
    result = check_file(path, ctx)
    assert time.perf_counter() - start < PER_FILE_SECONDS
    (error,) = _errors(result)
    assert error["rule"] == "yaml-syntax" and "more than the limit of 1048576" in error["message"]


@pytest.mark.parametrize("text", [CONVEYOR, PUMP], ids=["conveyor", "pump"])
def test_spec_cut_at_every_third_byte_never_crashes(text: str, ctx: CheckContext) -> None:
    """A half-saved file: each prefix loads with a positioned error, or checks with findings; never an exception."""
    start = time.perf_counter()
    for cut, data in truncations(text, 3):
        try:
            doc = load_text(data, "cut.yaml")
        except LoadError as exc:
            # positioned: a line within the prefix (or the line after its last), unless the file is empty
            lines = data.count(b"\n") + 1
            assert exc.line is None and not data.strip() or 1 <= (exc.line or 0) <= lines + 1, (cut, exc.line)
            continue
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            result = check_document(doc, ctx)
        assert not any(o["rule"] == "internal-error" for o in result["outcomes"]), (cut, _errors(result))
        if cut < len(text.encode()) - 1:
            assert _errors(result) or result["status"] == "checked", cut
    assert time.perf_counter() - start < 20  # ~650 prefixes at ~1-10 ms each


def test_invalid_values_are_left_out_of_the_model_not_passed_to_physics(ctx: CheckContext) -> None:
    """A value the schema refuses (a ratio written as text) is reported once, and rules see it as missing."""
    doc = load_text(CONVEYOR.replace("ratio: 23.8", "ratio: 1e400"), "r.yaml")  # YAML 1.1: no dot, so text
    result = check_document(doc, ctx)
    (error,) = [o for o in _errors(result) if o["rule"] == "spec-schema"]
    assert error["location"]["path"] == "transmission.ratio" and "expected a number" in error["message"]
    assert not any(o["rule"] == "internal-error" or "rule error" in o["message"] for o in result["outcomes"])
    assert "transmission.ratio" not in result["derived"]


def test_checker_fault_is_a_finding_not_a_crash(ctx: CheckContext, monkeypatch: pytest.MonkeyPatch) -> None:
    """A bug in a later stage stops one spec with an internal-error finding; the result still validates."""
    import rulecheck.derive

    def broken(*_args: object, **_kwargs: object) -> None:
        raise TypeError("simulated fault")

    monkeypatch.setattr(rulecheck.derive, "build_model", broken)
    result = check_document(load_text(CONVEYOR, "a.yaml"), ctx)
    (error,) = _errors(result)
    assert error["rule"] == "internal-error" and "simulated fault" in error["message"]
    assert result["tag"] == "CV-210" and result["verdict"] == "invalid"
    _as_json(result)
