"""Charts drawn where each spec is checked (the check's workers): the same SVG as drawn in the report's process,
carried beside the chart series and kept in the cache with them."""

from __future__ import annotations

import shutil
from pathlib import Path

from rulecheck.report import charts
from rulecheck.run import RunOptions, run_stream

ROOT = Path(__file__).resolve().parents[2]


def _run(paths, jobs, cache_dir=None, draw=charts.draw_series):
    stream = run_stream(RunOptions(paths=paths, jobs=jobs, charts=True, cache_dir=cache_dir, draw=draw))
    specs = list(stream.specs)
    return specs, stream.charts, stream.drawings


def _corpus(tmp_path: Path, copies: int) -> Path:
    folder = tmp_path / "specs"
    folder.mkdir()
    for k in range(copies):  # enough specs that the run starts worker processes (eight per worker)
        for spec in sorted((ROOT / "specs_demo").glob("*.yaml")):
            shutil.copy(spec, folder / f"{k}-{spec.name}")
    return folder


def test_workers_draw_what_the_report_would_draw(tmp_path):
    folder = _corpus(tmp_path, 3)
    specs, series, drawings = _run([str(folder)], jobs=2)
    assert len(specs) == len(series) == len(drawings) == 24
    drawn = 0
    for spec, s, d in zip(specs, series, drawings, strict=True):
        assert "drawn" not in s  # the series are handed on as they were computed
        assert set(d) == set(charts.available({"charts": s}))
        for key, body in d.items():
            assert body == charts.svg_body(key, s[key], "si", charts.failing_rules(spec))
            drawn += 1
    assert drawn >= 3 * 11  # the demo's eleven charts, three times


def test_drawings_come_back_from_the_cache_and_not_without_asking(tmp_path):
    folder = _corpus(tmp_path, 1)
    cache = str(tmp_path / "cache")
    first = _run([str(folder)], jobs=1, cache_dir=cache)
    again = _run([str(folder)], jobs=1, cache_dir=cache)
    assert again[2] == first[2] and all(first[2])  # kept beside the series
    assert again[1] == first[1]
    plain = _run([str(folder)], jobs=1, draw=None)
    assert plain[2] == [None] * len(plain[0]) and plain[1] == first[1]
