"""Worker processes that check specs, sixteen at a time per task.

Workers are forked after the parent has compiled the rules (:data:`INHERITED`) and the fast validator,
so they start with them and share those pages. Each worker encodes its results once, appends them to its
own cache pack and sends the parent only the tally and where the JSON is (pack, offset, length); without a
cache the JSON travels through the result pipe. Chart series, when the run draws charts, travel beside the
result. A worker that dies is retried alone, then reported as a finding of the spec it was checking.
"""

from __future__ import annotations

import datetime as _dt
import signal
import sys
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from pathlib import Path
from typing import Any

from rulecheck.cache import CachedEntry, ResultCache, entry_of
from rulecheck.check import failed_result
from rulecheck.config import Config, read_config
from rulecheck.run.cached import check_and_store
from rulecheck.run.pool import stop, widen_result_pipe
from rulecheck.run.preparation import prepare

__all__ = ["INHERITED", "Item", "Workers", "crash_result"]

_WORKER: dict[str, Any] = {}
# Set by the parent just before it starts workers: a forked worker starts with the compiled rules in memory.
INHERITED: dict[str | None, Any] = {}

# a spec for a worker: position in the run, configuration file, path, displayed path, cache key, context key
Item = tuple[int, str | None, Path, str, str | None, str | None]


def _end_with_parent() -> None:
    """Ask Linux to end this worker if the parent process dies (killed outright, it cannot stop us itself)."""
    if not sys.platform.startswith("linux"):
        return
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, signal.SIGTERM)  # PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass


def _worker_init(explicit: str | None, extra: list[str], today: str, units_system: str, base_dir: str,
                 value_kinds: dict[str, dict[str, dict[str, str | None]]], charts: bool = True,
                 cache_dir: str | None = None, draw: Any = None) -> None:
    from rulecheck.check import keep_alarm_handler
    from rulecheck.schema import use_fast_validator

    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle: it stops the workers
    signal.signal(signal.SIGTERM, signal.SIG_DFL)  # the parent's handler ends a run; a worker just ends
    _end_with_parent()
    keep_alarm_handler()
    use_fast_validator()
    _WORKER.clear()
    _WORKER.update(explicit=explicit, extra=[Path(p) for p in extra], today=_dt.date.fromisoformat(today),
                   units=units_system, base=Path(base_dir), kinds=value_kinds, charts=charts,
                   prepared=dict(INHERITED),  # rules compiled in the parent, inherited by a fork
                   cache=ResultCache(Path(cache_dir)) if cache_dir else None, draw=draw)
    for inherited in _WORKER["prepared"].values():  # the run's charts and drawing, once per configuration
        inherited.context.charts, inherited.context.draw = charts, draw


def _worker_check(config_file: str | None, spec: str, key: str | None = None, shown: str | None = None,
                  context: str | None = None) -> CachedEntry:
    """Check one spec; store its result in the cache (under ``key``, or the key made from the spec and the
    run's ``context`` key) and return it encoded with its tally (and chart series).

    The parent only copies the text into a JSON report, or decodes it for the other formats: encoding
    and storing here keeps that work off the parent, which would otherwise share a core with a worker.
    """
    prepared = _WORKER["prepared"]
    if config_file not in prepared:
        cfg = read_config(Path(config_file), explicit=config_file == _WORKER["explicit"]) if config_file else Config()
        prepared[config_file] = prepare(cfg, _WORKER["extra"], _WORKER["today"], _WORKER["units"], _WORKER["base"],
                                        value_kinds=_WORKER["kinds"].get(config_file or ""))
        prepared[config_file].context.charts = _WORKER["charts"]
        prepared[config_file].context.draw = _WORKER["draw"]
    entry, where = check_and_store(Path(spec), prepared[config_file].context, shown, key, context,
                                   _WORKER.get("cache"))
    # stored: the parent reads the JSON from this worker's pack, so it does not travel through the pipe too
    return CachedEntry(None, entry.tally, where, entry.charts) if where else entry


def _worker_check_many(work: list[tuple[str | None, str, str | None, str, str | None]]) -> list[CachedEntry]:
    """Check a few specs in order (one task); see :func:`_worker_check`."""
    return [_worker_check(cfg, spec, key, shown, context) for cfg, spec, key, shown, context in work]


def crash_result(file: str, detail: str) -> CachedEntry:
    """Return the result of a spec whose check ended its worker process."""
    return entry_of(failed_result(file, "unreadable", "yaml-syntax",
                                  f"checking this file stopped the worker process ({detail}); the file was not "
                                  "checked", "report the file to the rulecheck maintainers; check it alone with "
                                  "--jobs 1 to see more"))


def _retry_alone(item: Item, init_args: tuple[Any, ...]) -> CachedEntry:
    _k, cfg, spec, shown, key, context = item
    try:
        with ProcessPoolExecutor(max_workers=1, initializer=_worker_init, initargs=init_args) as pool:
            return pool.submit(_worker_check, cfg, str(spec), key, shown, context).result()
    except BrokenProcessPool:
        return crash_result(shown, "the worker process ended unexpectedly")


class Workers:
    """Worker processes that check specs, a few at a time per task (fewer round trips between processes).

    When one dies, every spec that was in flight is checked again alone in a fresh process (so the one
    that kills its worker is found and reported), and a new pool takes the specs that follow."""

    CHUNK = 16  # specs per task: each task costs the parent a round trip (measured: 16 beat 8 by ~3 % on 10,000 specs)

    def __init__(self, jobs: int, init_args: tuple[Any, ...], window: int) -> None:
        self.jobs = jobs
        self.init_args = init_args
        self.window = window
        self.pool = self._new_pool()
        self.futures: dict[int, tuple[Any, int, Item]] = {}
        self.orphans: dict[int, Item] = {}
        self.batch: list[Item] = []

    def _new_pool(self) -> ProcessPoolExecutor:
        pool = ProcessPoolExecutor(max_workers=self.jobs, initializer=_worker_init, initargs=self.init_args)
        widen_result_pipe(pool)
        return pool

    def submit(self, item: Item) -> None:
        """Queue one spec; a full batch is sent as one task."""
        self.batch.append(item)
        if len(self.batch) >= self.CHUNK:
            self.flush()

    def flush(self) -> None:
        """Send the specs collected so far as one task."""
        batch, self.batch = self.batch, []
        if not batch:
            return
        work = [(cfg, str(spec), key, shown, context) for _k, cfg, spec, shown, key, context in batch]
        try:
            future = self.pool.submit(_worker_check_many, work)
        except BrokenProcessPool:
            self._renew()
            for item in batch:
                self.orphans[item[0]] = item
            return
        for index, item in enumerate(batch):
            self.futures[item[0]] = (future, index, item)

    def has(self, k: int) -> bool:
        """Return whether the spec at position ``k`` was given to the workers."""
        return k in self.futures or k in self.orphans or any(item[0] == k for item in self.batch)

    def take(self, k: int) -> CachedEntry:
        """Return the result of the spec at position ``k`` (waiting for it)."""
        if any(item[0] == k for item in self.batch):
            self.flush()
        if k in self.orphans:
            return _retry_alone(self.orphans.pop(k), self.init_args)
        future, index, item = self.futures.pop(k)
        try:
            return future.result()[index]
        except BrokenProcessPool:
            self._renew()
            return _retry_alone(item, self.init_args)

    def _renew(self) -> None:
        """Replace a broken pool; what was in flight and not finished is checked alone later."""
        old = self.pool
        for k, (future, _index, item) in list(self.futures.items()):
            if not (future.done() and not future.cancelled() and future.exception() is None):
                self.orphans[k] = item
                del self.futures[k]
        old.shutdown(wait=False, cancel_futures=True)
        self.pool = self._new_pool()

    def close(self, finished: bool) -> None:
        """Let the workers leave (at once when the run was interrupted)."""
        if not finished:
            stop(self.pool)  # interrupted: end the workers at once
            return
        try:
            self.pool.shutdown()
        except BaseException:  # Ctrl-C while waiting for the workers to leave
            stop(self.pool)
            raise
