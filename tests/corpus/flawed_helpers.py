"""Helpers of the flawed-design corpus test (tests/corpus/test_flawed.py).

Everything goes through the public command line and its JSON result (``specs[].outcomes[].rule/outcome/
severity/values``), never through rulecheck internals: the corpus states what an engineer expects of the tool,
whatever its insides look like.
"""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys
from pathlib import Path
from typing import Any

import yaml

REPO = Path(__file__).resolve().parents[2]
FLAWED = Path(__file__).resolve().parent / "flawed"
EXPECTED = FLAWED / "expected.yaml"

_TOL = re.compile(r"^\s*([0-9.]+)\s*%\s*$")


def load_expectations() -> dict[str, dict[str, Any]]:
    """Return expected.yaml: spec file name → expectation."""
    with EXPECTED.open(encoding="utf-8") as handle:
        data = yaml.safe_load(handle)
    if not isinstance(data, dict):
        raise ValueError(f"{EXPECTED}: expected a mapping of spec file names")
    return data


def spec_files() -> list[Path]:
    """Return the corpus specs (every YAML file beside expected.yaml)."""
    return sorted(p for p in FLAWED.glob("*.yaml") if p.name != EXPECTED.name)


def check_json(paths: list[Path]) -> dict[str, dict[str, Any]]:
    """Run ``python -m rulecheck check PATHS -f json --no-cache`` once; return file name → spec result."""
    cmd = [sys.executable, "-m", "rulecheck", "check", *map(str, paths), "-f", "json", "--no-cache",
           "--no-progress", "--no-color"]
    proc = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True, timeout=600, check=False)
    # 0: nothing at or above error; 1: findings at or above error (the corpus is built of those)
    if proc.returncode not in (0, 1):
        raise RuntimeError(f"rulecheck exited {proc.returncode}:\n{proc.stderr[-4000:]}")
    result = json.loads(proc.stdout)
    return {Path(spec["file"]).name: spec for spec in result["specs"]}


def tolerance(text: Any) -> float:
    """Return a relative tolerance from '0.5 %' (a fraction: 0.005)."""
    match = _TOL.match(str(text))
    if not match:
        raise ValueError(f"tolerance {text!r}: write it as a percentage, e.g. '0.5 %'")
    return float(match.group(1)) / 100.0


def catching_outcome(spec: dict[str, Any], rules: str | list[str], case: str | None = None) -> dict[str, Any] | None:
    """Return the outcome of the catching rule: the first of ``rules`` that fails, else the first present.
    ``case``: the load case whose outcome it must be (None: an outcome that names no case)."""
    wanted = [rules] if isinstance(rules, str) else list(rules)
    by_rule = {o["rule"]: o for o in spec.get("outcomes", []) if o.get("case") == case}
    present = [by_rule[r] for r in wanted if r in by_rule]
    failing = [o for o in present if o.get("outcome") == "fail"]
    return (failing or present or [None])[0]


def value_problems(outcome: dict[str, Any], values: dict[str, Any]) -> list[str]:
    """Return what differs between the outcome's values and the hand-calculated ones (empty: all agree)."""
    shown = outcome.get("values") or {}
    problems = []
    for name, want in (values or {}).items():
        got = shown.get(name)
        if got is None:
            problems.append(f"value {name!r} not shown (shown: {sorted(shown)})")
            continue
        number = got["value"] if isinstance(got, dict) else got
        unit = got.get("unit") if isinstance(got, dict) else None
        if "unit" in want and unit != want["unit"]:
            problems.append(f"{name}: unit {unit!r}, expected {want['unit']!r}")
            continue
        rel = tolerance(want["tol"])
        expected = float(want["value"])
        if not isinstance(number, (int, float)) or not math.isclose(
                float(number), expected, rel_tol=rel, abs_tol=1e-12):
            problems.append(f"{name}: {number} {unit or ''}, hand calculation {expected} ± {want['tol']} "
                            f"({want.get('why', '')})")
    return problems


def other_errors(spec: dict[str, Any], catching: str | None, accepted: dict[str, str] | None) -> list[str]:
    """Return rules other than the catching one (and the accepted co-findings) that fail with severity error."""
    allowed = {catching, *(accepted or {})}
    return [f"{o['rule']}: {o.get('message', '')[:200]}" for o in spec.get("outcomes", [])
            if o.get("outcome") == "fail" and o.get("severity") == "error" and o["rule"] not in allowed]


def header_comment(path: Path) -> str:
    """Return the comment block the spec starts with."""
    lines = []
    for line in path.read_text(encoding="utf-8").splitlines():
        if not line.startswith("#"):
            break
        lines.append(line)
    return "\n".join(lines)
