"""Targets for the report of a large run: HTML (charts drawn) against the text report of the same specs.

Run: python bench/bench_html_report.py                 (100 and 1000 generated specs; several minutes)
     python bench/bench_html_report.py --sizes 30       (a smoke run)

For each size a corpus is generated (bench/generate.py, the same seed as bench/run.py) and measured with a cold
cache, one process tree each, wall time and peak resident memory (``wait4``, as bench/run.py does):

(t) ``rulecheck check CORPUS --format text``  (the floor of this benchmark: results only, streamed)
(h) ``rulecheck check CORPUS --format html``  (the same results, chart series computed and drawn)

Targets (issue "Reports an engineer can email, print and act on"):
- time: (h) at 1000 specs within 3 × (t) of the same run;
- memory: (h)'s peak at the largest size at most 1.25 × its peak at the smallest (flat in the number of specs;
  the 25 % is the allowance bench/run.py uses for allocator noise and the growing report text).

Timings depend on the machine and its load: compare the ratios, not seconds; do not run it on a shared machine
while others measure. It prints a table and exits 1 when a judged target is missed.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

BENCH = Path(__file__).resolve().parent
REPO = BENCH.parent
TARGET_HTML_OVER_TEXT = 3.0
TARGET_SIZE = 1000
MEMORY_FLAT_TOLERANCE = 1.25
SEED = 1  # bench/run.py's default seed: the same corpus


def measure(cmd: list[str], env: dict[str, str]) -> tuple[float, float, int]:
    """Return the wall time (s), peak resident memory (MiB) and exit code of ``cmd``."""
    with tempfile.TemporaryFile() as err:
        start = time.perf_counter()
        proc = subprocess.Popen(cmd, cwd=REPO, env=env, stdout=subprocess.DEVNULL, stderr=err,
                                stdin=subprocess.DEVNULL)
        _, status, usage = os.wait4(proc.pid, 0)
        seconds = time.perf_counter() - start
        code = os.waitstatus_to_exitcode(status)
        if code not in (0, 1):
            err.seek(0)
            raise SystemExit(f"{' '.join(cmd)} failed ({code}): {err.read().decode(errors='replace')[-2000:]}")
    return seconds, usage.ru_maxrss / 1024, code


def run(sizes: list[int], jobs: int) -> int:
    env = {**os.environ, "PYTHONPATH": str(REPO), "RULECHECK_NO_CODE_CACHE": "1"}
    from run import load_generator  # bench/run.py, beside this script (bench/ is on sys.path when run)

    generate = load_generator().generate
    rows = []
    peaks: dict[int, float] = {}
    failed = False
    with tempfile.TemporaryDirectory(prefix="rulecheck-bench-html-") as tmp:
        for size in sizes:
            corpus = Path(tmp) / f"c{size}"
            generate(corpus, size, SEED)
            base = [sys.executable, "-m", "rulecheck", "check", str(corpus), "--no-cache", "--no-progress",
                    "--jobs", str(jobs)]
            t_text, m_text, _ = measure([*base, "--format", "text", "-o", os.devnull], env)
            t_html, m_html, _ = measure([*base, "--format", "html", "-o", str(Path(tmp) / f"r{size}.html")], env)
            ratio = t_html / t_text
            judged = size >= TARGET_SIZE
            ok = ratio <= TARGET_HTML_OVER_TEXT
            failed |= judged and not ok
            peaks[size] = m_html
            size_mb = (Path(tmp) / f"r{size}.html").stat().st_size / 2**20
            rows.append((size, f"{t_text:.1f}", f"{t_html:.1f}", f"{ratio:.2f}",
                         ("ok" if ok else "MISSED") if judged else "info", f"{m_text:.0f}", f"{m_html:.0f}",
                         f"{size_mb:.1f}"))
    head = ("specs", "text s", "html s", "html/text", f"<= {TARGET_HTML_OVER_TEXT:g}x", "text MiB", "html MiB",
            "html file MiB")
    widths = [max(len(str(r[i])) for r in [head, *rows]) for i in range(len(head))]
    for r in [head, *rows]:
        print("  ".join(str(c).rjust(w) for c, w in zip(r, widths, strict=True)))
    if len(peaks) > 1:
        lo, hi = min(peaks), max(peaks)
        growth = peaks[hi] / peaks[lo]
        flat = growth <= MEMORY_FLAT_TOLERANCE
        failed |= not flat
        print(f"memory of the HTML run: {peaks[hi]:.0f} MiB at {hi} specs, {peaks[lo]:.0f} MiB at {lo}: "
              f"{growth:.2f}x (target <= {MEMORY_FLAT_TOLERANCE:g}x) {'ok' if flat else 'MISSED'}")
    return 1 if failed else 0


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[100, TARGET_SIZE])
    parser.add_argument("--jobs", type=int, default=0, help="worker processes (0: all cores)")
    args = parser.parse_args(argv)
    return run(sorted(set(args.sizes)), args.jobs)


if __name__ == "__main__":
    raise SystemExit(main())
