"""The run's use of the result cache: the keys of spec results, and checking a spec into the cache.

A spec result's key covers everything it depends on (:func:`rulecheck.cache.spec_key` over the run's
context key); chart series are kept beside it under a key of their own (:func:`rulecheck.cache.charts_key`),
so a run that draws charts and one that does not share the result entry.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
from pathlib import Path

from rulecheck import __version__
from rulecheck.cache import CachedEntry, ResultCache, charts_key, code_digest, entry_of, spec_key
from rulecheck.check import CheckContext, check_spec
from rulecheck.config import Config
from rulecheck.files import READ_CAP, read_head
from rulecheck.run.discovery import config_digest

__all__ = ["check_and_store", "context_key", "key_now", "stored"]


def context_key(digest: str, cfg: Config, today: _dt.date, units_system: str, extra: list[Path]) -> str:
    """Return the part of a spec result's key that every spec of a configuration shares: tool, code, rules,
    configuration, date (waivers expire), units and extra rule folders (not whether charts are drawn)."""
    return hashlib.sha256(json.dumps(
        [__version__, code_digest(), digest, config_digest(cfg), today.isoformat(), units_system,
         [str(p) for p in extra]]).encode()).hexdigest()


def key_now(spec: Path, shown: str, context: str) -> str | None:
    """Return the cache key of a spec from its bytes as they are now (None when it cannot be read)."""
    from rulecheck.load import last_read

    try:
        data = last_read(spec)
        return spec_key(data if data is not None else read_head(spec, READ_CAP), spec, shown, context)
    except OSError:
        return None


def stored(cache: ResultCache, key: str | None, charts: bool) -> bool:
    """Return whether the cache has what a run needs of a spec: its result and, for charts, its chart series."""
    return bool(key) and cache.has(key) and (not charts or cache.has(charts_key(key)))  # type: ignore[arg-type]


def check_and_store(spec: Path, ctx: CheckContext, shown: str | None, key: str | None, context: str | None,
                    cache: ResultCache | None) -> tuple[CachedEntry, tuple[str, int, int] | None]:
    """Check one spec; return its result encoded once (with its chart series when the run draws charts) and
    where the JSON is stored in the cache (under ``key``, or, with a ``context`` key instead, the key made from
    the bytes just checked)."""
    checked = check_spec(spec, ctx, shown)
    entry = entry_of(checked.result)
    entry.charts = checked.charts
    where = None
    if cache is not None:
        if key is None and context is not None and shown is not None:
            key = key_now(spec, shown, context)
        if key:
            where = cache.put(key, entry)
            if where is not None and checked.charts is not None:
                cache.put_charts(key, checked.charts)
    return entry, where
