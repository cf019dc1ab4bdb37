"""Checking a spec leaves no reference cycles behind: everything a check makes is freed as soon as the check
ends, by reference counting, so large runs need the garbage collector's passes hardly ever (each pass
walks every young object; with one spec's sections and field list left in a cycle each time, they cost
about 6 % of a run)."""

from __future__ import annotations

import dataclasses
import gc
import subprocess
import sys
from pathlib import Path

import pytest

from rulecheck import schema
from rulecheck.cache import entry_of
from rulecheck.check import CheckContext, check_file
from tests.robustness.corpus import static_cases

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def specs(tmp_path_factory: pytest.TempPathFactory) -> list[Path]:
    folder = tmp_path_factory.mktemp("cycles")
    # the benchmark's generator: every motor kind and load model, duty cycles, profile CSVs, specs with mistakes
    subprocess.run([sys.executable, str(ROOT / "bench" / "generate.py"), str(folder / "gen"), "--count", "60",
                    "--seed", "5"], check=True, capture_output=True)
    for case in static_cases():  # unreadable and invalid files
        (folder / case.name).write_bytes(case.data)
    return sorted(ROOT.glob("specs_demo/*.yaml")) + sorted(folder.rglob("*.yaml"))


@pytest.mark.parametrize("fast", [False, True], ids=["jsonschema", "compiled validators"])
@pytest.mark.parametrize("charts", [True, False], ids=["charts", "no charts"])
def test_checking_specs_leaves_no_cycles(specs: list[Path], ctx: CheckContext, fast: bool, charts: bool) -> None:
    ctx = dataclasses.replace(ctx, charts=charts)
    was = schema._FAST["enabled"]
    schema.use_fast_validator(fast)
    try:
        statuses = set()
        for spec in specs:  # one-time work (compiled validators, the unit registry, memos) before counting
            result = check_file(spec, ctx)
            statuses.add(result["status"])
            statuses.update(o["rule"] for o in result["outcomes"] if o["rule"] in ("yaml-syntax", "spec-schema"))
            entry_of(result)
        del result
        gc.collect()
        gc.disable()
        try:
            for spec in specs:
                entry_of(check_file(spec, ctx))
            found = gc.collect()
        finally:
            gc.enable()
    finally:
        schema.use_fast_validator(was)
    # the specs went down every path a check takes: checked, refused by the loader, refused by the schema
    assert {"checked", "invalid", "yaml-syntax", "spec-schema"} <= statuses, statuses
    assert found == 0, f"{found} objects were left in reference cycles"
