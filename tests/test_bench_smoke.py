"""Smoke tests of the benchmark: the corpus generator and ``bench/run.py --quick``.

Timings are never asserted: they depend on the machine and its load, and noise must not fail the build.
What is asserted is that the harness runs end to end, prints its table and writes its JSON.
"""

from __future__ import annotations

import importlib.util
import json
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

REPO = Path(__file__).resolve().parents[1]
BENCH = REPO / "bench"


def _generator():
    spec = importlib.util.spec_from_file_location("bench_generate_test", BENCH / "generate.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules["bench_generate_test"] = module
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def gen():
    return _generator()


def test_same_seed_same_corpus_and_prefix_property(gen):
    a = [gen.generate_one(i, 7) for i in range(20)]
    b = [gen.generate_one(i, 7) for i in range(20)]
    assert [s.text for s in a] == [s.text for s in b]
    other = [gen.generate_one(i, 8) for i in range(20)]
    assert [s.text for s in a] != [s.text for s in other]


def test_corpus_covers_every_motor_drive_and_load_model(gen, tmp_path):
    manifest = gen.generate(tmp_path, 60, 3)
    assert {m["motor"] for m in manifest} == {"induction", "pm-synchronous", "dc"}
    assert {m["drive"] for m in manifest} == {"inverter", "direct-on-line", "soft-starter", "dc-converter"}
    assert {m["load"] for m in manifest} == {"constant-torque", "quadratic", "constant-power", "conveyor", "hoist",
                                             "lead-screw", "points"}
    tags = [m["tag"] for m in manifest]
    assert len(set(tags)) == len(tags)
    folders = {Path(m["file"]).parent for m in manifest}
    assert len(folders) > 5 and all(len(f.parts) >= 2 for f in folders)  # nested, like a spec repository
    assert json.loads((tmp_path / "manifest.json").read_text())["count"] == 60


def test_specs_read_back_as_intended(gen):
    """Every spec without a duplicate-key mistake is plain YAML with the sections the format names."""
    for i in range(80):
        spec = gen.generate_one(i, 1)
        if spec.meta["mistake"] == "duplicate-key":
            with pytest.raises(yaml.constructor.ConstructorError, match="duplicate key"):
                _strict_load(spec.text)
            continue
        data = _strict_load(spec.text)
        assert data["format"] == 1 and data["tag"] == spec.meta["tag"]
        assert data["motor"]["kind"] == spec.meta["motor"]
        assert data["load"]["model"] == spec.meta["load"]
        duty = data["load"].get("duty")
        if duty is not None:
            assert 4 <= len(duty) <= 50
        if spec.profile:
            name, text = spec.profile
            assert data["load"]["duty_profile"] == name
            lines = [ln for ln in text.splitlines() if ln and not ln.startswith("#")]
            assert lines[0].startswith("time [s],speed [r/min],torque [")
            assert 300 <= len(lines) - 1 <= 3000


def _strict_load(text: str):
    """Load YAML refusing duplicate keys (PyYAML keeps the last one silently)."""

    class Strict(yaml.SafeLoader):
        pass

    def mapping(loader, node):
        keys = [loader.construct_object(k) for k, _ in node.value]
        if len(keys) != len(set(keys)):
            raise yaml.constructor.ConstructorError(None, None, "duplicate key", node.start_mark)
        return loader.construct_mapping(node)

    Strict.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, mapping)
    return yaml.load(text, Loader=Strict)


def test_quick_run_completes_and_prints_its_table(tmp_path):
    out = tmp_path / "out"
    proc = subprocess.run([sys.executable, str(BENCH / "run.py"), "--quick", "--work-dir", str(tmp_path / "work"),
                           "--out", str(out)], cwd=REPO, capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr[-3000:]
    for label in ("(a) floor", "(b) schema only", "(c) check, 1 worker", "(d) cached re-run", "(e) cold start",
                  "(f) peak memory", "x floor", "target", "verdict"):
        assert label in proc.stdout, label
    document = json.loads((out / "latest.json").read_text())
    assert document["sizes"] == [30]
    measurements = {r["measurement"] for r in document["rows"]}
    assert "(a) floor: C YAML parse" in measurements
    assert document["facts"][0]["files"] == 30
