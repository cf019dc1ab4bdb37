"""The command line: exit codes, formats, baselines, changed-only runs, the cache and workers."""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import pytest

from rulecheck.report import jsonout

from .conftest import DEMO, ROOT, run_cli

CLEAN = DEMO / "cv-110-incline-conveyor.yaml"


def _spec(tmp: Path, name: str, text: str) -> Path:
    path = tmp / name
    path.write_text(text, encoding="utf-8")
    return path


GOOD = "format: 1\ntag: T-1\nmotor:\n  kind: induction\n  rated_power: 7.5 kW\n  rated_speed: 1455 r/min\n"
BAD_TORQUE = GOOD + "  rated_torque: 59 N*m\n"


def test_version_and_help() -> None:
    assert run_cli("--version").stdout.startswith("rulecheck ")
    assert "check" in run_cli("--help").stdout


def test_usage_errors_exit_2() -> None:
    proc = run_cli("check", "--formt", "json", "x")
    assert proc.returncode == 2 and "did you mean '--format'" in proc.stderr
    proc = run_cli("check", "no/such/path.yaml")
    assert proc.returncode == 2 and "no such file" in proc.stderr
    proc = run_cli("check", str(CLEAN), "--config", "missing.yaml")
    assert proc.returncode == 2


def test_clean_demo_spec_exits_0(tmp_path: Path) -> None:
    proc = run_cli("check", str(CLEAN), "--no-cache")
    assert proc.returncode == 0, proc.stdout


def test_demo_folder_exits_1_with_locations() -> None:
    proc = run_cli("check", "specs_demo/", "--no-cache")
    assert proc.returncode == 1
    lines = [line for line in proc.stdout.splitlines() if ": error " in line]
    assert lines and all(line.startswith("specs_demo/") and line.split(":")[1].isdigit() for line in lines)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("format: 1\ntag: A\nmotor:\n  kind: dc\n  poles: 4\n  poles: 6\n", "duplicate key 'poles'"),
        ("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_speed: 1455\n", "no unit"),
        ("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_power: 9**9**9 kW\n", "arithmetic"),
        ("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_power: 1e400 kW\n", "finite"),
    ],
)
def test_one_clear_finding_at_the_right_line(tmp_path: Path, text: str, words: str) -> None:
    spec = _spec(tmp_path, "s.yaml", text)
    proc = run_cli("check", str(spec), "--no-cache", cwd=tmp_path)
    assert proc.returncode == 1
    findings = [line for line in proc.stdout.splitlines() if line.startswith("s.yaml:")]
    matching = [line for line in findings if words in line or (words == "no unit" and "unit" in line)]
    assert len(matching) == 1, proc.stdout
    assert matching[0].startswith(("s.yaml:5:", "s.yaml:6:")), matching[0]


def test_json_output_validates_and_reads_back(tmp_path: Path) -> None:
    out = tmp_path / "r.json"
    proc = run_cli("check", "specs_demo/", "--format", "json", "-o", str(out), "--no-cache")
    assert proc.returncode == 1
    result = jsonout.load(out.read_text(encoding="utf-8"))
    assert result["summary"]["specs"] == len(list(DEMO.glob("*.yaml")))
    assert jsonout.load(jsonout.render(result)) == result


def test_several_reports_in_one_run(tmp_path: Path) -> None:
    proc = run_cli("check", "specs_demo/", "--no-cache", "--report", f"sarif={tmp_path / 'o.sarif'}",
                   "--report", f"junit={tmp_path / 'o.xml'}", "--report", f"annotations={tmp_path / 'o.txt'}")
    assert proc.returncode == 1
    sarif = json.loads((tmp_path / "o.sarif").read_text(encoding="utf-8"))
    assert sarif["version"] == "2.1.0" and sarif["runs"][0]["results"]
    import xml.etree.ElementTree as ET

    assert ET.parse(tmp_path / "o.xml").getroot().tag == "testsuites"
    assert (tmp_path / "o.txt").read_text(encoding="utf-8").startswith("::")


def test_fail_on_threshold(tmp_path: Path) -> None:
    spec = _spec(tmp_path, "s.yaml", GOOD + "  rated_torque: 50.3 N*m\n")  # 2.2 % off: a warning of R02
    assert run_cli("check", str(spec), "--no-cache", cwd=tmp_path).returncode == 0
    assert run_cli("check", str(spec), "--no-cache", "--fail-on", "warning", cwd=tmp_path).returncode == 1


def test_baseline_survives_a_line_moving_edit(tmp_path: Path) -> None:
    spec = _spec(tmp_path, "s.yaml", BAD_TORQUE)
    assert run_cli("check", "s.yaml", "--no-cache", cwd=tmp_path).returncode == 1
    assert run_cli("baseline", "s.yaml", "--no-cache", cwd=tmp_path).returncode == 0
    base = tmp_path / ".rulecheck-baseline.json"
    assert base.is_file()
    # move every line down: the finding keeps its identity (rule + file + spec path)
    spec.write_text("# a comment\n# another\n" + BAD_TORQUE.replace("format: 1\n", "format: 1\ntitle: moved\n"),
                    encoding="utf-8")
    proc = run_cli("check", "s.yaml", "--no-cache", "--baseline", str(base), cwd=tmp_path)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    assert " known, 0 new, 0 fixed" in proc.stderr
    # a new mistake fails the run again
    spec.write_text(BAD_TORQUE + "  efficiency: 150 %\n", encoding="utf-8")
    proc = run_cli("check", "s.yaml", "--no-cache", "--baseline", str(base), cwd=tmp_path)
    assert proc.returncode == 1
    # fixing the known mistake reports it as fixed
    spec.write_text(GOOD, encoding="utf-8")
    proc = run_cli("check", "s.yaml", "--no-cache", "--baseline", str(base), cwd=tmp_path)
    assert proc.returncode == 0 and "1 fixed" in proc.stderr


def _git(cwd: Path, *args: str) -> None:
    subprocess.run(["git", *args], cwd=cwd, check=True, capture_output=True,
                   env={"GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@t.invalid", "GIT_COMMITTER_NAME": "t",
                        "GIT_COMMITTER_EMAIL": "t@t.invalid", "HOME": str(cwd), "PATH": "/usr/bin:/bin"})


def test_changed_since_checks_only_changed_specs(tmp_path: Path) -> None:
    repo = tmp_path / "repo"
    (repo / "specs").mkdir(parents=True)
    _spec(repo / "specs", "a.yaml", BAD_TORQUE.replace("T-1", "A-1"))
    _spec(repo / "specs", "b.yaml", GOOD.replace("T-1", "B-1"))
    _git(repo, "init", "-q", "-b", "main")
    _git(repo, "add", "-A")
    _git(repo, "commit", "-q", "-m", "specs")
    proc = run_cli("check", "specs", "--no-cache", "--changed-since", "HEAD", "--format", "json", cwd=repo)
    assert proc.returncode == 0 and json.loads(proc.stdout)["summary"]["specs"] == 0
    _spec(repo / "specs", "b.yaml", GOOD.replace("T-1", "B-1") + "  poles: 4\n")
    proc = run_cli("check", "specs", "--no-cache", "--changed-since", "HEAD", "--format", "json", cwd=repo)
    files = [s["file"] for s in json.loads(proc.stdout)["specs"]]
    assert files == ["specs/b.yaml"]
    # a changed configuration re-checks everything
    (repo / ".rulecheck.yaml").write_text("fail_on: error\n", encoding="utf-8")
    proc = run_cli("check", "specs", "--no-cache", "--changed-since", "HEAD", "--format", "json", cwd=repo)
    assert len(json.loads(proc.stdout)["specs"]) == 2
    assert run_cli("check", "specs", "--changed-since", "no-such-rev", cwd=repo).returncode == 2


def test_cache_hits_and_invalidation_by_rule_change(tmp_path: Path) -> None:
    spec = _spec(tmp_path, "s.yaml", BAD_TORQUE)
    rules = tmp_path / "more-rules"
    rules.mkdir()
    shutil.copy(ROOT / "rules" / "nameplate-power-torque-speed.yaml", rules / "copy-of-r02.yaml")
    text = (rules / "copy-of-r02.yaml").read_text(encoding="utf-8").replace("id: nameplate-power-torque-speed",
                                                                              "id: copy-of-r02")
    (rules / "copy-of-r02.yaml").write_text(text, encoding="utf-8")
    args = ("check", str(spec), "--rules", str(rules), "--format", "json", "--cache-dir", str(tmp_path / "c"))
    first = json.loads(run_cli(*args, cwd=tmp_path).stdout)
    second = json.loads(run_cli(*args, cwd=tmp_path).stdout)
    assert first["summary"]["cache"] == {"hits": 0, "misses": 1}
    assert second["summary"]["cache"] == {"hits": 1, "misses": 0}
    assert first["specs"] == second["specs"]
    (rules / "copy-of-r02.yaml").write_text(text.replace('default: "5 %"', 'default: "30 %"'), encoding="utf-8")
    third = json.loads(run_cli(*args, cwd=tmp_path).stdout)
    assert third["summary"]["cache"]["misses"] == 1
    outcome = next(o for o in third["specs"][0]["outcomes"] if o["rule"] == "copy-of-r02")
    assert outcome["severity"] == "warning"  # the changed threshold took effect


def test_corrupt_cache_entries_are_ignored(tmp_path: Path) -> None:
    spec = _spec(tmp_path, "s.yaml", BAD_TORQUE)
    cache = tmp_path / "c"
    args = ("check", str(spec), "--format", "json", "--cache-dir", str(cache))
    first = json.loads(run_cli(*args, cwd=tmp_path).stdout)
    damaged = [*cache.rglob("*.json"), *cache.rglob("*.pack")]
    assert any(p.suffix == ".pack" for p in damaged)  # spec results live in packs
    for entry in damaged:
        entry.write_text("{not json", encoding="utf-8")
    second = json.loads(run_cli(*args, cwd=tmp_path).stdout)
    assert second["summary"]["cache"]["misses"] == 1 and second["specs"] == first["specs"]


def test_jobs_1_and_2_give_identical_results(tmp_path: Path) -> None:
    folder = tmp_path / "many"
    folder.mkdir()
    for src in DEMO.glob("*.yaml"):
        for k in range(3):
            (folder / f"{k}-{src.name}").write_text(src.read_text(encoding="utf-8").replace("tag: HR-", f"tag: X{k}-"),
                                                    encoding="utf-8")
    one = json.loads(run_cli("check", str(folder), "--format", "json", "--no-cache", "-j", "1").stdout)
    two = json.loads(run_cli("check", str(folder), "--format", "json", "--no-cache", "-j", "2").stdout)
    for r in (one, two):
        r.pop("generated")
    assert one == two


def test_spec_files_are_never_modified(tmp_path: Path) -> None:
    folder = tmp_path / "d"
    shutil.copytree(DEMO, folder)
    before = {p.relative_to(folder): p.read_bytes() for p in folder.rglob("*") if p.is_file()}
    run_cli("check", str(folder), "--format", "html", "-o", str(tmp_path / "r.html"), cwd=tmp_path)
    assert {p.relative_to(folder): p.read_bytes() for p in folder.rglob("*") if p.is_file()} == before


def test_mail_dry_run_and_eml(tmp_path: Path) -> None:
    eml = tmp_path / "r.eml"
    proc = run_cli("mail", str(CLEAN), "--to", "lead@example.invalid", "--eml", str(eml), "--dry-run", "--no-cache")
    assert proc.returncode == 0, proc.stderr
    assert "Dry run" in proc.stdout
    from email import policy
    from email.parser import BytesParser

    message = BytesParser(policy=policy.default).parsebytes(eml.read_bytes())
    assert message["To"] == "lead@example.invalid"
    assert {part.get_content_type() for part in message.walk()} >= {"text/plain", "text/html"}


def test_mail_to_a_wrong_host_is_one_clear_error_and_the_report_is_written(tmp_path: Path) -> None:
    html = tmp_path / "r.html"
    proc = run_cli("mail", str(CLEAN), "--to", "lead@example.invalid", "--html", str(html), "--send", "--no-cache",
                   env={"RULECHECK_SMTP_HOST": "127.0.0.1", "RULECHECK_SMTP_PORT": "9",
                        "RULECHECK_SMTP_SECURITY": "none", "RULECHECK_SMTP_PASSWORD": "s3cret-value"})
    assert proc.returncode == 2
    errors = [line for line in proc.stderr.splitlines() if line.startswith("rulecheck:") and "wrote" not in line]
    assert len(errors) == 1, proc.stderr
    assert "s3cret-value" not in proc.stdout + proc.stderr
    assert html.is_file() and "<html" in html.read_text(encoding="utf-8")[:500].lower()


def test_mail_delivers_to_a_local_smtp_server(tmp_path: Path) -> None:
    import socket
    import time

    from aiosmtpd.controller import Controller

    received = []

    class Handler:
        async def handle_DATA(self, server, session, envelope):  # noqa: N802 - aiosmtpd's hook name
            received.append(envelope.content)
            return "250 OK"

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    controller = Controller(Handler(), hostname="127.0.0.1", port=port)
    controller.start()
    try:
        proc = run_cli("mail", str(CLEAN), "--to", "lead@example.invalid", "--send", "--no-cache",
                       env={"RULECHECK_SMTP_HOST": "127.0.0.1", "RULECHECK_SMTP_PORT": str(port),
                            "RULECHECK_SMTP_SECURITY": "none"})
        for _ in range(50):
            if received:
                break
            time.sleep(0.1)
    finally:
        controller.stop()
    assert proc.returncode == 0, proc.stderr
    assert received and b"HR-CV-110" in received[0]


def test_sarif_of_the_demo_validates_against_the_oasis_schema(tmp_path: Path) -> None:
    import jsonschema

    out = tmp_path / "demo.sarif"
    run_cli("check", "specs_demo/", "--no-cache", "--format", "sarif", "-o", str(out))
    schema_file = ROOT / "tests" / "ci_formats" / "data" / "sarif-schema-2.1.0.json"
    schema = json.loads(schema_file.read_text(encoding="utf-8"))
    log = json.loads(out.read_text(encoding="utf-8"))
    jsonschema.Draft7Validator(schema).validate(log)
    rules = {r["id"] for r in log["runs"][0]["tool"]["driver"]["rules"]}
    assert {"torque-margin-continuous", "pm-uncontrolled-generation", "yaml-syntax"} <= rules
    assert all(r["locations"][0]["physicalLocation"]["region"]["startLine"] >= 1 for r in log["runs"][0]["results"]
               if "region" in r["locations"][0]["physicalLocation"])


def test_configuration_from_pyproject_is_found_by_walking_up(tmp_path: Path) -> None:
    (tmp_path / "pyproject.toml").write_text('[tool.rulecheck]\nfail_on = "warning"\n', encoding="utf-8")
    sub = tmp_path / "plant" / "area"
    sub.mkdir(parents=True)
    _spec(sub, "s.yaml", GOOD + "  rated_torque: 50.3 N*m\n")  # a warning only
    proc = run_cli("check", str(sub), "--no-cache", cwd=tmp_path)
    assert proc.returncode == 1 and "failing at warning" in proc.stdout
    (tmp_path / "pyproject.toml").write_text('[tool.rulecheck]\nfail_on = "sometimes"\n', encoding="utf-8")
    bad = run_cli("check", str(sub), "--no-cache", cwd=tmp_path)
    assert bad.returncode == 2 and "pyproject.toml" in bad.stderr and "fail_on" in bad.stderr


@pytest.mark.parametrize("cached", [False, True], ids=["no cache", "cache"])
def test_the_json_of_a_run_is_the_same_bytes_whatever_other_reports_it_writes(tmp_path: Path, cached: bool) -> None:
    """`-f json` alone and with HTML, SARIF and Markdown reports beside it give byte-identical JSON: chart series
    are computed for the HTML report beside the result, never written into it, and there is one layout
    (SOURCE_DATE_EPOCH fixes the time a result states). With a cache, the JSON-only run reads the results the
    HTML run stored (they share the entries; the chart series are kept beside them) and gives the same bytes."""
    env = {"SOURCE_DATE_EPOCH": "1796083200"}  # 2026-12-01T00:00:00Z
    cache = ["--cache-dir", str(tmp_path / "cache")] if cached else ["--no-cache"]
    alone, beside = tmp_path / "alone.json", tmp_path / "beside.json"
    run_cli("check", "specs_demo", "-f", "json", "-o", str(beside), *cache, "--report", f"html={tmp_path / 'r.html'}",
            "--report", f"sarif={tmp_path / 'r.sarif'}", "--report", f"markdown={tmp_path / 'r.md'}", env=env)
    run_cli("check", "specs_demo", "-f", "json", "-o", str(alone), *cache, env=env)
    first, second = beside.read_bytes(), alone.read_bytes()
    if cached:  # the cache counts differ (the first run stored, the second read): the rest is the same
        cut = first.index(b'"cache"')
        assert second[:cut] == first[:cut]
        assert json.loads(second)["summary"]["cache"] == {"hits": 8, "misses": 0}
    else:
        assert first == second
    assert b'"charts"' not in first
    assert "<svg" in (tmp_path / "r.html").read_text(encoding="utf-8")  # the HTML report did draw its charts
    document = json.loads(first)
    assert document["generated"] == "2026-12-01T00:00:00Z"
    # the SARIF driver's rules come from the result's rules block, not from the rule files
    sarif = json.loads((tmp_path / "r.sarif").read_text(encoding="utf-8"))
    driver = [r["id"] for r in sarif["runs"][0]["tool"]["driver"]["rules"]]
    assert driver == [r["id"] for r in document["rules"]]
    jsonout.load(first.decode("utf-8"))


def test_a_run_that_draws_charts_reads_results_and_chart_series_from_the_cache(tmp_path: Path) -> None:
    """An HTML run after another finds both the results and their chart series in the cache: nothing is checked
    again, and the report is the same."""
    env = {"SOURCE_DATE_EPOCH": "1796083200"}
    args = ["check", "specs_demo", "-f", "json", "--cache-dir", str(tmp_path / "cache")]
    run_cli(*args, "-o", str(tmp_path / "1.json"), "--report", f"html={tmp_path / '1.html'}", env=env)
    run_cli(*args, "-o", str(tmp_path / "2.json"), "--report", f"html={tmp_path / '2.html'}", env=env)
    assert json.loads((tmp_path / "2.json").read_text(encoding="utf-8"))["summary"]["cache"] == {"hits": 8,
                                                                                                 "misses": 0}
    assert (tmp_path / "1.html").read_bytes() == (tmp_path / "2.html").read_bytes()


def test_changed_since_sees_a_deleted_configuration_and_works_from_another_repository(tmp_path: Path) -> None:
    repo, other = tmp_path / "repo", tmp_path / "other"
    (repo / "specs").mkdir(parents=True)
    other.mkdir()
    _spec(repo / "specs", "a.yaml", GOOD.replace("T-1", "A-1"))
    _spec(repo / "specs", "b.yaml", GOOD.replace("T-1", "B-1"))
    (repo / ".rulecheck.yaml").write_text("fail_on: error\n", encoding="utf-8")
    for folder in (repo, other):
        _git(folder, "init", "-q", "-b", "main")
        (folder / "README").write_text("x\n", encoding="utf-8")
        _git(folder, "add", "-A")
        _git(folder, "commit", "-q", "-m", "start")
    # from another repository: the specs' own repository is asked what changed
    _spec(repo / "specs", "b.yaml", GOOD.replace("T-1", "B-1") + "  poles: 4\n")
    proc = run_cli("check", str(repo / "specs"), "--no-cache", "--changed-since", "HEAD", "--format", "json",
                   cwd=other)
    assert [Path(s["file"]).name for s in json.loads(proc.stdout)["specs"]] == ["b.yaml"], proc.stderr
    # a deleted configuration changes how every spec is checked: all are checked
    (repo / ".rulecheck.yaml").unlink()
    proc = run_cli("check", "specs", "--no-cache", "--changed-since", "HEAD", "--format", "json", cwd=repo)
    assert len(json.loads(proc.stdout)["specs"]) == 2, proc.stderr
