"""docs/first-spec.md, followed as a new user would: every command it shows is run as written, in order,
in an empty folder, and must give the exit code and the output lines the page shows."""

from __future__ import annotations

import os
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import yaml

from rulecheck.authoring.templates import write_template

ROOT = Path(__file__).resolve().parents[2]
PAGE = ROOT / "docs" / "first-spec.md"
FENCE = re.compile(r"^```(\w+)([^\n]*)\n(.*?)^```$", re.M | re.S)


def _keys(data, parts=()):
    if isinstance(data, dict):
        for key, value in data.items():
            yield from _keys(value, (*parts, key))
    else:
        yield ".".join(parts)


def _run(command: str, cwd: Path) -> tuple[int, str, int]:
    line, _sep, comment = command.partition("#")
    expected = int(re.search(r"exit (\d+)", comment).group(1)) if "exit" in comment else 0
    words = shlex.split(line)
    assert words[0] == "rulecheck", command
    env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1"}
    env.pop("GITHUB_ACTIONS", None)
    proc = subprocess.run([sys.executable, "-m", "rulecheck", *words[1:]], cwd=cwd, env=env, capture_output=True,
                          text=True, timeout=300)
    assert "Traceback" not in proc.stdout + proc.stderr
    return proc.returncode, proc.stdout + proc.stderr, expected


def test_the_page_runs_as_written(tmp_path: Path) -> None:
    shutil.copytree(ROOT / "specs_demo" / "motor-list", tmp_path / "specs_demo" / "motor-list")
    page = PAGE.read_text(encoding="utf-8")
    blocks = FENCE.findall(page)
    commands = 0
    for language, info, body in blocks:
        if language == "yaml" and "file=" in info:
            (tmp_path / info.split("file=")[1].strip()).write_text(body, encoding="utf-8")
        elif language == "console":
            steps = re.split(r"^\$ ", body, flags=re.M)[1:]
            for step in steps:
                command, *expected_lines = step.rstrip("\n").split("\n")
                code, output, expected_code = _run(command, tmp_path)
                commands += 1
                assert code == expected_code, (command, output[-2000:])
                for expected in expected_lines:
                    assert expected.strip() in output, (command, expected, output[-3000:])
    assert commands == 7


def test_the_filled_spec_on_the_page_holds_the_templates_fields() -> None:
    """The page's CV-101 fills exactly the fields the template asks for (plus a title and the one override
    it explains), so the page stays in step with the rules."""
    page = PAGE.read_text(encoding="utf-8")
    body = next(b for lang, info, b in FENCE.findall(page) if lang == "yaml" and "file=cv-101.yaml" in info)
    given = set(_keys(yaml.safe_load(body)))
    template = write_template("induction", "inverter", "conveyor")
    asked = set(template.placeholders) | {"format", "motor.kind", "drive.kind", "load.model"}
    assert given - asked == {"title", "drive.output_voltage_max"}
    assert asked - given == set()
    assert "drive.output_voltage_max" in template.optional
