"""A whole run: collect spec files, find their configuration, prepare rules once, check every spec, in order.

One bad file never stops the others: each spec's problems are outcomes of that spec, and a worker process
that dies becomes a finding for the file it was checking. Only unusable rules or configuration stop a run
(exit code 2), before any spec is reported.

:func:`run_stream` yields spec results in order as they are checked (memory does not grow with the
repository); :func:`run` keeps them all. Results already in the cache are read when their turn comes; only
the others need the rules compiled and a worker.
"""

from __future__ import annotations

import datetime as _dt
import os
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from rulecheck.cache import CachedEntry, ResultCache
from rulecheck.check import check_spec
from rulecheck.config import Config, ConfigError, read_config
from rulecheck.engine.ruleset import rules_digest
from rulecheck.result import header, summarise
from rulecheck.run.cached import check_and_store, context_key, stored
from rulecheck.run.discovery import Configs, collect_specs, filter_changed, rule_folders, shown_paths
from rulecheck.run.options import FAST_VALIDATOR_FROM, RunOptions, UsageError
from rulecheck.run.preparation import Prepared, prepare_cached, rule_count, rules_block
from rulecheck.run.workers import INHERITED, Workers

__all__ = ["Stream", "run", "run_stream", "run_with_charts"]


@dataclass
class Stream:
    """A run whose spec results arrive one at a time, in order (memory does not grow with the repository).

    When the run draws charts, ``charts`` receives each spec's chart series as its result is yielded, and
    ``drawings`` the charts drawn where the spec was checked (chart key → SVG text; None when the run's
    ``options.draw`` is not set or the series came from a cache entry written without drawings).
    """

    header: dict[str, Any]
    specs: Iterator[Any]
    cache: ResultCache | None = None
    charts: list[dict[str, Any] | None] = field(default_factory=list)
    drawings: list[dict[str, str] | None] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)  # for the user, before the results (a refused cache key)

    def add_cache_counts(self, summary: dict[str, Any]) -> None:
        """Record the cache's hits and misses in a summary."""
        if self.cache is not None:
            summary["cache"] = {"hits": self.cache.hits, "misses": self.cache.misses}


@dataclass
class _Setup:
    """What a run works out before it plans: its specs, configurations, rule folders, settings and caches."""

    options: RunOptions
    today: _dt.date
    specs: list[Path]
    explicit: Config | None
    extra: list[Path]
    configs: Configs
    base_dir: Path
    first_cfg: Config
    fail_on: str
    units: str
    cache: ResultCache | None
    code_cache: ResultCache | None
    notes: list[str] = field(default_factory=list)  # said to the user before the results (files skipped)


def _explicit_config(name: str | None) -> Config | None:
    if not name:
        return None
    path = Path(name)
    if not path.is_file():
        raise UsageError(f"{name}: configuration file not found")
    try:
        return read_config(path, explicit=True)
    except ConfigError as exc:
        raise UsageError(str(exc)) from None


def _extra_rule_folders(names: list[str]) -> list[Path]:
    extra = []
    for raw in names:
        folder = Path(raw)
        if not folder.is_dir():
            raise UsageError(f"{raw}: rule folder not found")
        extra.append(folder.resolve())
    return extra


def _setup(options: RunOptions) -> _Setup:
    notes: list[str] = []
    specs = collect_specs(options.paths, notes)
    explicit = _explicit_config(options.config)
    extra = _extra_rule_folders(options.rule_paths)
    configs = Configs(explicit)
    if options.changed_since:
        specs = filter_changed(specs, options.changed_since, configs, extra)
    first_cfg = configs.for_spec(specs[0]) if specs else (explicit or Config())
    cache = ResultCache(Path(options.cache_dir)) if options.cache_dir else None
    code_cache = cache
    if cache is None and options.code_cache_dir:
        code_cache = ResultCache(Path(options.code_cache_dir))
    return _Setup(options, options.today or _dt.date.today(), specs, explicit, extra, configs, Path.cwd(), first_cfg,
                  options.fail_on or first_cfg.fail_on or "error", options.units or first_cfg.units or "si",
                  cache, code_cache, notes)


@dataclass(slots=True)
class _Planned:
    """One spec of the run: its position, configuration file, path, displayed path and cache key (if known)."""

    k: int
    cfg_file: str | None
    spec: Path
    shown: str
    key: str | None


@dataclass
class _Plan:
    """Every spec of the run, with the rules digest and context key of each configuration."""

    specs: list[_Planned]
    digests: dict[str | None, str]
    contexts: dict[str | None, str]
    keyed_later: bool  # nothing cached yet: each spec's key is made where it is checked (in a worker)


def _plan(s: _Setup) -> _Plan:
    cache = s.cache
    # with nothing cached yet (a first run, a cleared cache) every spec is checked: its key is computed where
    # it is checked (by a worker, in parallel), not here before any checking can start
    plan = _Plan([], {}, {}, cache is not None and not cache.has_any())
    shown_path = shown_paths(s.base_dir)
    for k, spec in enumerate(s.specs):
        cfg = s.configs.for_spec(spec)
        if cfg.file not in plan.contexts:
            plan.digests[cfg.file] = rules_digest(rule_folders(cfg, s.extra))
            plan.contexts[cfg.file] = context_key(plan.digests[cfg.file], cfg, s.today, s.units, s.extra)
        shown = shown_path(spec)
        key = None
        if cache is not None and not plan.keyed_later:
            key = _key_of(spec, shown, plan.contexts[cfg.file])
        plan.specs.append(_Planned(k, cfg.file, spec, shown, key))
    return plan


def _key_of(spec: Path, shown: str, context: str) -> str | None:
    from rulecheck.cache import spec_key
    from rulecheck.files import READ_CAP, read_head

    try:
        return spec_key(read_head(spec, READ_CAP), spec, shown, context)
    except OSError:
        return None


class _Rules:
    """The prepared rules of each configuration, made when a spec first needs them."""

    def __init__(self, s: _Setup, plan: _Plan) -> None:
        self.setup = s
        self.plan = plan
        self.prepared: dict[str | None, Prepared] = {}

    def context(self, item: _Planned) -> Any:
        """Return the check context of a spec's configuration."""
        prepared = self.prepared.get(item.cfg_file)
        if prepared is None:
            s = self.setup
            prepared = self.prepared[item.cfg_file] = prepare_cached(
                s.configs.for_spec(item.spec), s.extra, s.today, s.units, s.base_dir, s.code_cache,
                self.plan.digests[item.cfg_file])
            prepared.context.charts = s.options.charts
            prepared.context.draw = s.options.draw
        return prepared.context


def _large_run() -> None:
    """Settings for a large run: the fast validator, and a collector that need not walk what lives as long
    as the run."""
    import gc

    from rulecheck.schema import use_fast_validator

    use_fast_validator()
    # the rules, schemas and libraries live as long as the run: the collector need not walk them again
    # (and forked workers keep sharing their memory pages); checking a spec makes no reference cycles
    # (tests/robustness/test_no_cycles.py), so collecting after fifty thousand new objects rather than seven
    # hundred holds no memory back. No full collection first: it finds about a hundred objects in cycles
    # here and costs 30 ms before any worker can start.
    gc.freeze()
    gc.set_threshold(50_000, 50, 50)


def _start_workers(s: _Setup, rules: _Rules, todo: list[_Planned]) -> Workers | None:
    """Start the worker processes a run of ``todo`` specs uses (None: it is faster in this process)."""
    jobs = s.options.jobs if s.options.jobs > 0 else (os.cpu_count() or 1)
    jobs = min(jobs, max(1, len(todo) // 8))  # small runs are faster in one process
    if jobs <= 1:
        return None
    INHERITED.clear()
    INHERITED.update(rules.prepared)
    kinds = {cfg or "": p.context.value_kinds for cfg, p in rules.prepared.items()}
    init = (s.explicit.file if s.explicit else None, [str(p) for p in s.extra], s.today.isoformat(), s.units,
            str(s.base_dir), kinds, s.options.charts, str(s.cache.folder) if s.cache is not None else None,
            s.options.draw)
    from rulecheck.schema import _fast_validators

    _fast_validators()  # compiled once here: the forked workers inherit them
    return Workers(jobs, init, window=jobs * Workers.CHUNK * 3)


class _Results:
    """The spec results of a run, in order: from the cache, from the workers, or checked here."""

    def __init__(self, s: _Setup, plan: _Plan, rules: _Rules, todo: list[_Planned], pool: Workers | None,
                 charts: list[dict[str, Any] | None], drawings: list[dict[str, str] | None],
                 tick: Callable[[], None]) -> None:
        self.s, self.plan, self.rules, self.pool, self.tick = s, plan, rules, pool, tick
        self.charts, self.drawings = charts, drawings
        self.missing = {item.k for item in todo}
        self.queue = [(item.k, item.cfg_file, item.spec, item.shown, item.key,
                       plan.contexts[item.cfg_file] if plan.keyed_later else None) for item in todo]
        self.queued = 0

    def __iter__(self) -> Iterator[Any]:
        finished = False
        try:
            for item in self.plan.specs:
                self._feed(item.k)
                found = self._cached(item) or self._from_workers(item.k) or self._here(item)
                result, series = found
                if self.s.options.charts:
                    drawn = series.get("drawn") if isinstance(series, dict) else None
                    self.charts.append({k: v for k, v in series.items() if k != "drawn"} if drawn is not None
                                       else series)
                    self.drawings.append(drawn if isinstance(drawn, dict) else None)
                self.tick()
                yield result
            finished = True
        finally:
            if self.pool is not None:
                self.pool.close(finished)

    def _feed(self, k: int) -> None:
        """Keep a bounded number of specs in flight in the workers."""
        pool = self.pool
        if pool is None:
            return
        while self.queued < len(self.queue) and self.queue[self.queued][0] <= k + pool.window:
            pool.submit(self.queue[self.queued])
            self.queued += 1

    def _cached(self, item: _Planned) -> tuple[Any, Any] | None:
        cache = self.s.cache
        if cache is None:
            return None
        if item.k in self.missing:
            cache.misses += 1  # known absent when the run was planned
            return None
        if not item.key:
            return None
        result = cache.get(item.key, lazy=self.s.options.lazy_cached)
        if result is None:
            return None
        series = cache.get_charts(item.key) if self.s.options.charts else None
        if self.s.options.charts and series is None:
            return None  # the chart series are damaged: the spec is checked again
        return result, series

    def _from_workers(self, k: int) -> tuple[Any, Any] | None:
        if self.pool is None or not self.pool.has(k):
            return None
        entry: CachedEntry | None = self.pool.take(k)  # the worker has stored it in the cache
        if entry is not None and entry.data is None:
            try:
                entry = CachedEntry(self.s.cache.read_span(entry.where), entry.tally, None,  # type: ignore[union-attr,arg-type]
                                    entry.charts)
            except (OSError, ValueError, AttributeError):
                return None  # the pack is gone or short: checked again here
        return self._deliver(entry), entry.charts  # type: ignore[union-attr]

    def _here(self, item: _Planned) -> tuple[Any, Any]:
        if self.s.cache is None and not self.s.options.lazy_cached:
            checked = check_spec(item.spec, self.rules.context(item), item.shown)
            return checked.result, checked.charts
        # encoded once: the cache entry and a JSON report share the bytes
        entry, _where = check_and_store(item.spec, self.rules.context(item), item.shown, item.key,
                                        self.plan.contexts[item.cfg_file] if self.plan.keyed_later else None,
                                        self.s.cache)
        return self._deliver(entry), entry.charts

    def _deliver(self, entry: CachedEntry) -> Any:
        """Return a result as the run's consumer wants it: unparsed (a JSON report) or parsed."""
        return entry if self.s.options.lazy_cached else entry.load()


def run_stream(options: RunOptions, progress: Callable[[int, int], None] | None = None) -> Stream:
    """Return a run whose spec results are produced in order as they are consumed.

    Paths, configuration and rules are checked first: UsageError is raised before any spec is reported.
    """
    s = _setup(options)
    plan = _plan(s)
    rules = _Rules(s, plan)
    todo = [item for item in plan.specs if not (s.cache is not None and stored(s.cache, item.key, options.charts))]
    for item in todo:
        rules.context(item)  # rule or configuration errors stop the run before any spec is reported
    if len(todo) >= FAST_VALIDATOR_FROM:
        _large_run()
    pool = _start_workers(s, rules, todo)
    done = [0]

    def tick() -> None:
        done[0] += 1
        if progress:
            progress(done[0], len(s.specs))

    digest = next(iter(plan.digests.values()), None) or rules_digest(rule_folders(s.first_cfg, s.extra))
    head = header(s.fail_on, s.units, digest, rule_count(rules.prepared, s.first_cfg, s.extra),
                  rules_block(rules.prepared, s.first_cfg, s.extra, s.code_cache, digest))
    charts: list[dict[str, Any] | None] = []
    drawings: list[dict[str, str] | None] = []
    from rulecheck.cache import KEY_PROBLEMS

    return Stream(head, iter(_Results(s, plan, rules, todo, pool, charts, drawings, tick)), s.cache, charts,
                  drawings, [*s.notes, *dict.fromkeys(KEY_PROBLEMS)])


def run_with_charts(options: RunOptions,
                    progress: Callable[[int, int], None] | None = None) -> tuple[dict[str, Any], list[Any] | None]:
    """Return the JSON result of a run, every spec in memory, and the chart series of each spec (in spec order;
    None unless ``options.charts``); raise UsageError for bad paths, rules or configuration."""
    stream = run_stream(options, progress)
    specs = list(stream.specs)
    result = {**stream.header, "specs": specs, "summary": {}}
    summarise(result)
    stream.add_cache_counts(result["summary"])
    return result, stream.charts if options.charts else None


def run(options: RunOptions, progress: Callable[[int, int], None] | None = None) -> dict[str, Any]:
    """Return the JSON result of a run, every spec in memory; raise UsageError for bad paths, rules or configuration."""
    return run_with_charts(options, progress)[0]


