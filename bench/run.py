"""Measure rulecheck against the floor of merely parsing the same specs, and print the table with its targets.

Run: python bench/run.py --sizes 1000 10000      (the full benchmark)
     python bench/run.py --quick                 (about 30 specs: a smoke run for CI)

For each size a corpus is generated (bench/generate.py, same seed, so a smaller corpus is
the start of a larger one) and measured:

(a) floor: PyYAML's C loader parsing every spec in one process;
(b) schema only: the same, plus jsonschema validation against the spec schema compiled once;
(c) ``rulecheck check`` with all shipped rules, one worker and all cores, cold cache;
(d) the cached re-run (same cache folder, nothing changed);
(e) cold start on one spec, interpreter start included (best of 5);
(f) peak memory (largest resident set of the check's process tree, from ``wait4``).

Every measurement is the wall time of a subprocess (interpreter start and imports included,
as a user sees them), taken with ``time.perf_counter``; each is repeated and the best kept, the
same for the floor as for the checks: short runs (timer and scheduler noise) ``--repeat`` times,
long ones ``--repeat-long`` times (a shared machine's speed drifts by ±10 % over minutes). Each row's
ratio is to the floor measured beside it, run in turn with it, so the drift over the benchmark's
minutes does not enter the ratio; (a) is the first floor measurement. The CLI options used are found
from ``rulecheck check --help``. The table is also
written as JSON to bench/out/ (git-ignored). Timings depend on the machine and its load:
compare ratios, not seconds. The all-cores target is for 10,000 specs (a repository): smaller sizes
print their ratio, not judged, to show how the serial start (rules compiled once) weighs on a small run.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import importlib.util
import json
import os
import platform
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import Any

BENCH = Path(__file__).resolve().parent
REPO = BENCH.parent
SPEC_SUFFIXES = (".yaml", ".yml")

# Targets (the project's performance goals); ratios are to the floor of the same size.
TARGET_ALL_CORES = 3.0  # for TARGET_SIZE specs: smaller runs show their ratio for the growth of cost only
TARGET_SIZE = 10_000
TARGET_ONE_WORKER = 10.0
TARGET_CACHED = 1.0
TARGET_COLD_START_S = 0.5
# "Flat" memory: the largest corpus may use at most this much more than the smallest. 25 % leaves room for
# allocator noise and for the report text itself, which does grow with the number of specs.
MEMORY_FLAT_TOLERANCE = 1.25
REPEAT_BELOW_S = 2.0  # measurements shorter than this are repeated (timer and scheduler noise)


# --- workers: run in a subprocess so that their time includes interpreter start, like the CLI's -----------

def _spec_files(folder: Path) -> list[Path]:
    """Return the spec files under ``folder`` as rulecheck finds them (recursive, no hidden parts, sorted)."""
    return sorted(p for p in folder.rglob("*") if p.suffix in SPEC_SUFFIXES and p.is_file()
                  and not any(part.startswith(".") for part in p.relative_to(folder).parts))


def worker(mode: str, folder: Path) -> int:
    """Parse (and for ``schema`` validate) every spec under ``folder``; print a JSON line of counts and time."""
    import yaml

    start = time.perf_counter()
    validator = None
    if mode == "schema":
        sys.path.insert(0, str(REPO))
        from jsonschema import Draft202012Validator

        from rulecheck.schema import spec_schema

        validator = Draft202012Validator(spec_schema())
    files = _spec_files(folder)
    parsed = problems = unreadable = 0
    for path in files:
        try:
            with open(path, "rb") as handle:
                data = yaml.load(handle, Loader=yaml.CSafeLoader)
        except yaml.YAMLError:
            unreadable += 1
            continue
        parsed += 1
        if validator is not None:
            problems += sum(1 for _ in validator.iter_errors(data))
    print(json.dumps({"files": len(files), "parsed": parsed, "unreadable": unreadable, "problems": problems,
                      "inside_s": time.perf_counter() - start}))
    return 0


# --- measuring subprocesses -----------------------------------------------------------------------------

@dataclass
class Run:
    """One subprocess run: wall time [s], exit code, peak resident set [MiB] of its largest process."""

    seconds: float
    code: int
    peak_mib: float
    stdout: str = ""
    stderr: str = ""


def run_measured(cmd: list[str], cwd: Path, env: dict[str, str]) -> Run:
    """Run ``cmd`` and return its wall time and peak memory (``wait4`` rusage: the child and its reaped children)."""
    with tempfile.TemporaryFile() as out, tempfile.TemporaryFile() as err:
        start = time.perf_counter()
        proc = subprocess.Popen(cmd, cwd=cwd, env=env, stdout=out, stderr=err, stdin=subprocess.DEVNULL)
        _, status, usage = os.wait4(proc.pid, 0)
        seconds = time.perf_counter() - start
        proc.returncode = os.waitstatus_to_exitcode(status)
        out.seek(0)
        err.seek(0)
        # ru_maxrss is in KiB on Linux
        return Run(seconds, proc.returncode, usage.ru_maxrss / 1024, out.read().decode(errors="replace"),
                   err.read().decode(errors="replace"))


def best_of(cmd: list[str], cwd: Path, env: dict[str, str], times: int, before: Any = None) -> Run:
    """Return the fastest of ``times`` runs (``before()`` is called ahead of each, e.g. to empty a cache)."""
    best: Run | None = None
    for _ in range(max(1, times)):
        if before:
            before()
        r = run_measured(cmd, cwd, env)
        if r.code not in (0, 1):
            return r
        if best is None or r.seconds < best.seconds:
            best = r
    assert best is not None
    return best


def adaptive(cmd: list[str], cwd: Path, env: dict[str, str], repeat: int, before: Any = None,
             repeat_long: int = 1) -> Run:
    """Run once; repeat up to ``repeat`` times in all if the run was short (noise), ``repeat_long`` times if it
    was long, keeping the best."""
    first = best_of(cmd, cwd, env, 1, before)
    times = repeat if first.seconds < REPEAT_BELOW_S else repeat_long
    if first.code not in (0, 1) or times <= 1:
        return first
    rest = best_of(cmd, cwd, env, times - 1, before)
    return rest if rest.code in (0, 1) and rest.seconds < first.seconds else first


def paired(cmd: list[str], floor_cmd: list[str], cwd: Path, env: dict[str, str], repeat: int, before: Any = None,
           repeat_long: int = 1) -> tuple[Run, Run]:
    """Run the floor, then ``cmd``, in turn (as :func:`adaptive` repeats); return the best of each.

    The floor is measured beside the command it is compared with, so a drift of the machine's speed over
    the minutes a benchmark takes does not enter the ratio.
    """
    best: Run | None = None
    floor: Run | None = None
    times, done = 1, 0
    while done < times:
        f = run_measured(floor_cmd, cwd, env)
        if before:
            before()
        r = run_measured(cmd, cwd, env)
        if r.code not in (0, 1) or f.code != 0:
            return r, f
        if done == 0:
            times = repeat if r.seconds < REPEAT_BELOW_S else repeat_long
        best = r if best is None or r.seconds < best.seconds else best
        floor = f if floor is None or f.seconds < floor.seconds else floor
        done += 1
    assert best is not None and floor is not None
    return best, floor


# --- the benchmark ---------------------------------------------------------------------------------------

@dataclass
class Row:
    """One line of the table."""

    measurement: str
    size: int | None
    value: float | None  # seconds, or MiB for memory
    unit: str
    ratio: float | None = None  # to the floor of the same size
    target: str = ""
    verdict: str = ""  # met | NOT MET | n/a | info
    note: str = ""


@dataclass
class Capabilities:
    """What the installed CLI accepts, read from ``rulecheck check --help``."""

    jobs: bool = False
    cache_dir: bool = False
    no_cache: bool = False
    no_progress: bool = False
    json_format: bool = False
    help_text: str = field(default="", repr=False)


def detect(python: str, env: dict[str, str], cwd: Path) -> Capabilities:
    """Return the options the CLI offers; raise SystemExit if it does not run at all."""
    r = subprocess.run([python, "-m", "rulecheck", "check", "--help"], cwd=cwd, env=env, capture_output=True,
                       text=True, timeout=120)
    if r.returncode != 0:
        raise SystemExit(f"bench: 'rulecheck check --help' failed (exit {r.returncode}):\n{r.stderr.strip()}")
    text = r.stdout
    return Capabilities(jobs="--jobs" in text, cache_dir="--cache-dir" in text, no_cache="--no-cache" in text,
                        no_progress="--no-progress" in text, json_format="json" in text, help_text=text)


def load_generator() -> Any:
    """Return the bench/generate.py module (imported by path: bench/ is not a package)."""
    spec = importlib.util.spec_from_file_location("bench_generate", BENCH / "generate.py")
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    sys.modules["bench_generate"] = module
    spec.loader.exec_module(module)
    return module


def verdict(value: float | None, limit: float) -> str:
    """Return 'met' or 'NOT MET' for ``value`` against an upper ``limit``, 'n/a' without a value."""
    if value is None:
        return "n/a"
    return "met" if value <= limit else "NOT MET"


def check_command(python: str, caps: Capabilities, corpus: Path, report: Path, jobs: int | None,
                  cache: Path | None) -> list[str]:
    """Return the ``rulecheck check`` command line for one measured run."""
    cmd = [python, "-m", "rulecheck", "check", str(corpus), "--format", "json", "-o", str(report)]
    if jobs is not None and caps.jobs:
        cmd += ["--jobs", str(jobs)]
    if caps.cache_dir and cache is not None:
        cmd += ["--cache-dir", str(cache)]
    elif caps.no_cache:
        cmd += ["--no-cache"]
    if caps.no_progress:
        cmd += ["--no-progress"]
    return cmd


def measure_size(size: int, args: argparse.Namespace, caps: Capabilities, env: dict[str, str], work: Path,
                 generator: Any) -> tuple[list[Row], dict[str, Any]]:
    """Generate a corpus of ``size`` specs and return its table rows and raw facts."""
    python = args.python
    corpus = work / f"corpus-{size}"
    if corpus.exists():
        shutil.rmtree(corpus)
    start = time.perf_counter()
    manifest = generator.generate(corpus, size, args.seed)
    gen_s = time.perf_counter() - start
    facts: dict[str, Any] = {"size": size, "generate_s": gen_s,
                             "mistakes": sum(1 for m in manifest if m["mistake"]),
                             "profiles": sum(1 for m in manifest if m["profile"])}
    rows: list[Row] = []
    repeat = args.repeat

    floor_cmd = [python, str(Path(__file__).resolve()), "--worker", "floor", str(corpus)]
    long = args.repeat_long
    floor = adaptive(floor_cmd, work, env, repeat, repeat_long=long)
    if floor.code != 0:
        raise SystemExit(f"bench: the floor worker failed:\n{floor.stderr}")
    inside = json.loads(floor.stdout.strip().splitlines()[-1])
    facts["floor_inside_s"] = inside["inside_s"]
    facts["files"] = inside["files"]
    base = floor.seconds
    rows.append(Row("(a) floor: C YAML parse", size, base, "s", 1.0, "", "info",
                    f"{inside['files']} files; {inside['inside_s']:.3f} s inside the process"))

    def beside(floor_run: Run) -> str:
        return f"floor beside it {floor_run.seconds:.3f} s"

    schema_cmd = [python, str(Path(__file__).resolve()), "--worker", "schema", str(corpus)]
    schema, f_schema = paired(schema_cmd, floor_cmd, work, env, repeat, repeat_long=long)
    if schema.code != 0:
        raise SystemExit(f"bench: the schema worker failed:\n{schema.stderr}")
    rows.append(Row("(b) schema only (jsonschema)", size, schema.seconds, "s", schema.seconds / f_schema.seconds, "",
                    "info", beside(f_schema)))

    report = work / "report.json"
    cache_one = work / f"cache-{size}-one"
    cache_all = work / f"cache-{size}-all"

    def fresh(folder: Path) -> Any:
        def empty() -> None:
            shutil.rmtree(folder, ignore_errors=True)
        return empty

    jobs_note = "" if caps.jobs else "CLI has no --jobs: its default was measured"
    one, f_one = paired(check_command(python, caps, corpus, report, 1, cache_one), floor_cmd, work, env, repeat,
                        fresh(cache_one), repeat_long=long)
    _require_ok(one, "check --jobs 1")
    rows.append(Row("(c) check, 1 worker, cold", size, one.seconds, "s", one.seconds / f_one.seconds,
                    f"<= {TARGET_ONE_WORKER:g}x", verdict(one.seconds / f_one.seconds, TARGET_ONE_WORKER),
                    "; ".join(filter(None, [beside(f_one), jobs_note]))))
    facts["check_exit_code"] = one.code
    facts["report_bytes"] = report.stat().st_size if report.exists() else None
    if caps.jobs:
        every, f_every = paired(check_command(python, caps, corpus, report, 0, cache_all), floor_cmd, work, env,
                                repeat, fresh(cache_all), repeat_long=long)
        _require_ok(every, "check --jobs 0")
        ratio = every.seconds / f_every.seconds
        # the target is set for a repository of TARGET_SIZE specs; in a small run the serial start (rules
        # compiled and linted once, before any worker starts) weighs more, and its ratio is shown, not judged
        judged = size >= TARGET_SIZE
        rows.append(Row(f"(c) check, all cores ({os.cpu_count()}), cold", size, every.seconds, "s", ratio,
                        f"<= {TARGET_ALL_CORES:g}x" if judged else f"(at {TARGET_SIZE})",
                        verdict(ratio, TARGET_ALL_CORES) if judged else "info",
                        "; ".join(filter(None, [beside(f_every), "" if judged else
                                                f"not judged: the target is for {TARGET_SIZE} specs"]))))
    else:
        every = None
        rows.append(Row("(c) check, all cores, cold", size, None, "s", None, f"<= {TARGET_ALL_CORES:g}x", "n/a",
                        "CLI has no --jobs"))

    if caps.cache_dir:
        cache = cache_all if caps.jobs else cache_one
        jobs = 0 if caps.jobs else None
        again, f_again = paired(check_command(python, caps, corpus, report, jobs, cache), floor_cmd, work, env,
                                repeat, repeat_long=long)
        _require_ok(again, "cached re-run")
        rows.append(Row("(d) cached re-run", size, again.seconds, "s", again.seconds / f_again.seconds,
                        f"<= {TARGET_CACHED:g}x", verdict(again.seconds / f_again.seconds, TARGET_CACHED),
                        f"same cache folder, nothing changed; {beside(f_again)}"))
    else:
        rows.append(Row("(d) cached re-run", size, None, "s", None, f"<= {TARGET_CACHED:g}x", "n/a",
                        "CLI has no --cache-dir"))

    rows.append(Row("(f) peak memory, 1 worker", size, one.peak_mib, "MiB", None, "flat", "info",
                    "largest process of the run"))
    facts["peak_mib_one"] = one.peak_mib
    if every is not None:
        rows.append(Row("(f) peak memory, all cores", size, every.peak_mib, "MiB", None, "flat", "info",
                        "largest process of the run"))
        facts["peak_mib_all"] = every.peak_mib
    facts["floor_s"] = base
    return rows, facts


def _require_ok(run: Run, what: str) -> None:
    """Stop with the CLI's own message if a check run failed as a usage error or crashed (exit ≥ 2)."""
    if run.code not in (0, 1):
        raise SystemExit(f"bench: {what} exited with {run.code}:\n{run.stderr.strip()[-2000:]}")


def cold_start(args: argparse.Namespace, caps: Capabilities, env: dict[str, str], work: Path,
               generator: Any) -> tuple[Row, Row]:
    """Return the rows of the single-spec cold start and of the bare interpreter start, for scale."""
    folder = work / "one"
    shutil.rmtree(folder, ignore_errors=True)
    index = next(i for i in range(1000) if generator.generate_one(i, args.seed).meta["mistake"] is None)
    spec = generator.generate_one(index, args.seed)
    folder.mkdir(parents=True)
    path = folder / Path(spec.path).name
    path.write_text(spec.text, encoding="utf-8")
    if spec.profile:
        (folder / spec.profile[0]).write_text(spec.profile[1], encoding="utf-8")
    cmd = [args.python, "-m", "rulecheck", "check", str(path)]
    if caps.no_cache:
        cmd.append("--no-cache")
    elif caps.cache_dir:
        cmd += ["--cache-dir", str(work / "cache-one-spec")]
    runs = args.cold_repeat
    start = best_of(cmd, work, env, runs, lambda: shutil.rmtree(work / "cache-one-spec", ignore_errors=True))
    _require_ok(start, "single-spec check")
    bare = best_of([args.python, "-c", "pass"], work, env, runs)
    return (Row("(e) cold start, one spec", 1, start.seconds, "s", None, f"<= {TARGET_COLD_START_S:g} s",
                verdict(start.seconds, TARGET_COLD_START_S), f"best of {runs}, interpreter start included"),
            Row("    interpreter start alone", None, bare.seconds, "s", None, "", "info", f"best of {runs}"))


def memory_rows(facts: list[dict[str, Any]]) -> list[Row]:
    """Return the verdict rows on memory growth between the smallest and the largest corpus."""
    if len(facts) < 2:
        return [Row("(f) memory flat with specs", None, None, "x", None, f"<= {MEMORY_FLAT_TOLERANCE:g}x", "n/a",
                    "needs two sizes")]
    rows = []
    small, large = facts[0], facts[-1]
    for key, label in (("peak_mib_one", "1 worker"), ("peak_mib_all", "all cores")):
        if key in small and key in large:
            growth = large[key] / small[key]
            rows.append(Row(f"(f) memory growth, {label}", large["size"], growth, "x", None,
                            f"<= {MEMORY_FLAT_TOLERANCE:g}x", verdict(growth, MEMORY_FLAT_TOLERANCE),
                            f"{large['size']} vs {small['size']} specs: {small[key]:.0f} -> {large[key]:.0f} MiB"))
    return rows


def format_table(rows: list[Row]) -> str:
    """Return the rows as a fixed-width text table."""
    head = ("measurement", "specs", "value", "x floor", "target", "verdict", "note")
    lines = []
    cells = []
    for r in rows:
        value = "-" if r.value is None else (f"{r.value:.3f} {r.unit}" if r.unit == "s" else
                                            f"{r.value:.1f} {r.unit}" if r.unit == "MiB" else f"{r.value:.2f}{r.unit}")
        ratio = "" if r.ratio is None else f"{r.ratio:.2f}x"
        cells.append((r.measurement, "" if r.size is None else str(r.size), value, ratio, r.target, r.verdict,
                      r.note))
    widths = [max(len(h), *(len(c[k]) for c in cells)) for k, h in enumerate(head[:-1])]
    lines.append("  ".join(h.ljust(w) for h, w in zip(head[:-1], widths, strict=True)) + "  " + head[-1])
    lines.append("  ".join("-" * w for w in widths) + "  " + "-" * 4)
    for c in cells:
        lines.append("  ".join(v.ljust(w) for v, w in zip(c[:-1], widths, strict=True)) + "  " + c[-1])
    return "\n".join(lines)


def parse_args(argv: list[str] | None) -> argparse.Namespace:
    """Return the command-line options."""
    p = argparse.ArgumentParser(description="Benchmark rulecheck against the floor of parsing the same specs.")
    p.add_argument("--sizes", type=int, nargs="+", default=[1000], help="corpus sizes (default 1000)")
    p.add_argument("--quick", action="store_true", help="smoke run: 30 specs, fewer repeats")
    p.add_argument("--seed", type=int, default=1, help="corpus seed (default 1)")
    p.add_argument("--repeat", type=int, default=3, help="best of N for runs shorter than 2 s (default 3)")
    p.add_argument("--repeat-long", type=int, default=2,
                   help="best of N for runs of 2 s or more, floor and checks alike (default 2)")
    p.add_argument("--cold-repeat", type=int, default=5, help="best of N for the cold start (default 5)")
    p.add_argument("--work-dir", type=Path, help="where corpora and caches go (default: a temporary folder)")
    p.add_argument("--out", type=Path, default=BENCH / "out", help="folder for the JSON table (default bench/out)")
    p.add_argument("--python", default=sys.executable, help="interpreter that runs rulecheck")
    p.add_argument("--worker", choices=("floor", "schema"), help=argparse.SUPPRESS)
    p.add_argument("folder", nargs="?", type=Path, help=argparse.SUPPRESS)
    args = p.parse_args(argv)
    if args.quick:
        args.sizes, args.repeat, args.cold_repeat, args.repeat_long = [30], 2, 2, 1
    if any(s < 1 for s in args.sizes):
        p.error("--sizes must be positive")
    args.sizes = sorted(set(args.sizes))
    return args


def main(argv: list[str] | None = None) -> int:
    """Run the benchmark (or one worker); print the table; return the exit code."""
    args = parse_args(argv)
    if args.worker:
        return worker(args.worker, args.folder)
    env = dict(os.environ)
    env["PYTHONPATH"] = str(REPO) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    env.pop("RULECHECK_CACHE_DIR", None)
    for ci in ("GITHUB_ACTIONS", "GITLAB_CI", "CI"):
        env.pop(ci, None)  # the report format is chosen explicitly; nothing should switch to annotations
    own_work = args.work_dir is None
    work = Path(tempfile.mkdtemp(prefix="rulecheck-bench-")) if own_work else args.work_dir.resolve()
    work.mkdir(parents=True, exist_ok=True)
    # measured as installed: pip compiles an installed package's bytecode, so no run should pay for compiling
    # rulecheck's modules from source (some shells set PYTHONDONTWRITEBYTECODE); the bytecode goes to the
    # work folder, not the source tree, and is written (as pip does at install) before anything is timed
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPYCACHEPREFIX"] = str(work / "pycache")
    subprocess.run([args.python, "-m", "compileall", "-q", str(REPO / "rulecheck")], env=env, cwd=work,
                   capture_output=True, timeout=300, check=False)
    try:
        caps = detect(args.python, env, work)
        generator = load_generator()
        print(f"rulecheck benchmark: sizes {args.sizes}, seed {args.seed}, {os.cpu_count()} cores, "
              f"Python {platform.python_version()}")
        found = {"--jobs": caps.jobs, "--cache-dir": caps.cache_dir, "--no-cache": caps.no_cache}
        print("CLI options found: " + ", ".join(f"{k} {'yes' if v else 'NO'}" for k, v in found.items()))
        rows: list[Row] = []
        facts: list[dict[str, Any]] = []
        for size in args.sizes:
            print(f"measuring {size} specs ...", flush=True)
            size_rows, size_facts = measure_size(size, args, caps, env, work, generator)
            rows += size_rows
            facts.append(size_facts)
        rows += memory_rows(facts)
        rows += cold_start(args, caps, env, work, generator)
        table = format_table(rows)
        print()
        print(table)
        print()
        print("Times are subprocess wall times (interpreter start and imports included), the best of "
              f"{args.repeat} runs below {REPEAT_BELOW_S:g} s and of {args.repeat_long} above; x floor is the ratio to "
              "the floor of the same corpus measured beside it, in turn with it (noted), so that the machine's "
              "drift over the benchmark's minutes cancels.")
        stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
        document = {
            "generated": _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
            "machine": {"cores": os.cpu_count(), "python": platform.python_version(), "platform": platform.platform()},
            "seed": args.seed, "sizes": args.sizes,
            "repeats": {"short": args.repeat, "long": args.repeat_long, "cold_start": args.cold_repeat},
            "cli": {"jobs": caps.jobs, "cache_dir": caps.cache_dir, "no_cache": caps.no_cache},
            "targets": {"all_cores_x_floor": TARGET_ALL_CORES, "one_worker_x_floor": TARGET_ONE_WORKER,
                        "cached_x_floor": TARGET_CACHED, "cold_start_s": TARGET_COLD_START_S,
                        "memory_growth_max": MEMORY_FLAT_TOLERANCE},
            "rows": [asdict(r) for r in rows], "facts": facts,
        }
        args.out.mkdir(parents=True, exist_ok=True)
        target = args.out / f"bench-{stamp}.json"
        target.write_text(json.dumps(document, indent=2) + "\n", encoding="utf-8")
        (args.out / "latest.json").write_text(json.dumps(document, indent=2) + "\n", encoding="utf-8")
        print(f"table written to {target}")
        return 0
    finally:
        if own_work:
            shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
