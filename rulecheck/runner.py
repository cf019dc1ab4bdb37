"""A whole run: collect spec files, find their configuration, load rules once, check every spec.

One bad file never stops the others: each spec's problems are outcomes of that
spec, and a worker process that dies becomes a finding for the file it was
checking. Only unusable rules or configuration stop a run (exit code 2).

Speed: results are cached by content (:mod:`rulecheck.cache`); rules are
compiled and linted only when some spec is not in the cache; ``jobs`` worker
processes share the checking, each compiling the rules once.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import os
import signal
import subprocess
import sys
from collections.abc import Callable, Iterator
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from rulecheck import __version__
from rulecheck.cache import CachedEntry, CachedResult, ResultCache, code_digest, entry_of, spec_key
from rulecheck.check import BUILTIN_RULES, CheckContext, check_file
from rulecheck.config import CONFIG_NAME, Config, ConfigError, discover, read_config
from rulecheck.engine.ruleset import RuleSet, load_rules, rule_files, rules_digest, shipped_rules_dir

__all__ = ["RunOptions", "Stream", "Tally", "UsageError", "assemble", "collect_specs", "counts_toward_failure",
           "prepare", "run", "run_stream", "summarise"]

SPEC_SUFFIXES = (".yaml", ".yml")
SEVERITY_RANK = {"info": 1, "warning": 2, "error": 3}
FAST_VALIDATOR_FROM = 50  # specs to check before compiling the fast validator pays for itself


class UsageError(Exception):
    """A problem with how rulecheck was called or configured (exit code 2)."""


@dataclass
class RunOptions:
    """What the command line asks of a run."""

    paths: list[str]
    config: str | None = None
    rule_paths: list[str] = field(default_factory=list)
    fail_on: str | None = None
    units: str | None = None
    today: _dt.date | None = None
    jobs: int = 1  # 0 = all cores
    cache_dir: str | None = None  # None = no cache
    changed_since: str | None = None
    charts: bool = True  # chart data is only needed by the HTML report and the e-mail
    code_cache_dir: str | None = None  # compiled rules and lint results, kept even when results are not cached
    lazy_cached: bool = False  # yield cached results unparsed (CachedEntry): enough for a JSON report


def collect_specs(paths: list[str]) -> list[Path]:
    """Return the spec files named or found under ``paths`` (recursive, stable order, no duplicates).

    Folders are searched for ``*.yaml``/``*.yml``; hidden folders and files, configuration
    files and links are skipped there (a file named directly is always taken).
    """
    found: list[Path] = []
    seen: set[str] = set()
    for raw in paths:
        path = Path(raw)
        if path.is_dir():
            candidates = _walk(str(path), os.path.realpath(path))
        elif path.exists():
            candidates = [(str(path), os.path.realpath(path))]
        else:
            raise UsageError(f"{raw}: no such file or directory")
        for shown, real in candidates:
            if real not in seen:
                seen.add(real)
                found.append(Path(shown))
    return found


def _walk(folder: str, real: str) -> list[tuple[str, str]]:
    """Return (path, resolved path) of the spec files below ``folder``: its own files in name order, then
    each subfolder's in name order; hidden names and links are skipped (so no path below is a link, and
    the resolved path is the resolved folder's joined with the same names)."""
    try:
        with os.scandir(folder) as found:
            entries = sorted(found, key=lambda e: e.name)
    except OSError:
        return []
    files: list[tuple[str, str]] = []
    subfolders: list[tuple[str, str]] = []
    for entry in entries:
        name = entry.name
        try:
            if name.startswith(".") or entry.is_symlink():
                continue
            if entry.is_dir(follow_symlinks=False):
                subfolders.append((entry.path, os.path.join(real, name)))
            elif name.endswith(SPEC_SUFFIXES) and name != CONFIG_NAME and entry.is_file(follow_symlinks=False):
                files.append((entry.path, os.path.join(real, name)))
        except OSError:
            continue
    for sub, sub_real in subfolders:
        files.extend(_walk(sub, sub_real))
    return files


# --- preparing rules for one configuration ------------------------------------------------------------


@dataclass
class Prepared:
    """A configuration with its rule set, compiled and linted once."""

    config: Config
    ruleset: RuleSet
    context: CheckContext


def _params_from_config(cfg: Config, ruleset: RuleSet) -> dict[str, dict[str, Any]]:
    out: dict[str, dict[str, Any]] = {}
    names = ruleset.parameter_names()
    file = cfg.file or "?"
    for key, value in cfg.parameters.items():
        rule_id = ruleset.resolve(key)
        if isinstance(value, dict) and rule_id:
            rule = ruleset.rules[rule_id]
            for name, raw in value.items():
                where = f"parameters.{key}.{name}"
                if name not in rule.params:
                    raise ConfigError(file, f"{where}: rule '{rule_id}' has no parameter '{name}' "
                                      f"(it has: {', '.join(rule.params) or 'none'})", cfg.line(where))
                try:
                    out.setdefault(rule_id, {})[name] = rule.params[name].parse(raw)
                except ValueError as exc:
                    raise ConfigError(file, f"{where}: {exc}", cfg.line(where)) from None
        elif key in names and not isinstance(value, dict):
            param = next(r.params[key] for r in ruleset.rules.values() if key in r.params)
            try:
                out.setdefault("*", {})[key] = param.parse(value)
            except ValueError as exc:
                raise ConfigError(file, f"parameters.{key}: {exc}", cfg.line(f"parameters.{key}")) from None
        else:
            raise ConfigError(file, f"parameters: '{key}' is neither a rule id nor a rule parameter",
                              cfg.line(f"parameters.{key}"))
    return out


def rule_folders(cfg: Config, extra: list[Path]) -> list[Path]:
    """Return the rule folders of a run: the shipped rules, then the configuration's, then the command line's."""
    return [shipped_rules_dir(), *cfg.rule_paths, *extra]


def prepare(cfg: Config, extra_rule_paths: list[Path], today: _dt.date, units_system: str,
            base_dir: Path | None, value_kinds: dict[str, dict[str, str | None]] | None = None,
            compile_cache: Any = None) -> Prepared:
    """Return the compiled (and, unless ``value_kinds`` is given, linted) rules of one configuration.

    Raises UsageError for unusable rules or configuration.
    """
    from rulecheck.derive import DERIVED  # the catalogue rule expressions may read besides the spec's fields
    from rulecheck.engine.lint import lint_ruleset

    # rule files already linted (their digest matched a cached lint) need no second schema check
    ruleset, errors = load_rules(rule_folders(cfg, extra_rule_paths), validate=value_kinds is None, cache=compile_cache)
    for rule_id in (*cfg.disable, *cfg.severity):
        if ruleset.resolve(rule_id) is None and rule_id not in BUILTIN_RULES:
            where = "disable" if rule_id in cfg.disable else f"severity.{rule_id}"
            raise UsageError(str(ConfigError(cfg.file or "?", f"{where}: unknown rule id '{rule_id}'",
                                             cfg.line(where))))
    if errors:
        raise UsageError("\n".join(str(e) for e in errors))
    if value_kinds is None:
        value_kinds, problems = lint_ruleset(ruleset, DERIVED)
        if problems:
            raise UsageError("\n".join(str(e) for e in problems))
    for rule_id in cfg.disable:
        resolved = ruleset.resolve(rule_id)
        if resolved:
            ruleset.rules.pop(resolved, None)
    try:
        params = _params_from_config(cfg, ruleset)
    except ConfigError as exc:
        raise UsageError(str(exc)) from None
    overrides = {ruleset.resolve(k) or k: v for k, v in cfg.severity.items()}
    ctx = CheckContext(ruleset=ruleset, value_kinds=value_kinds, project_params=params,
                       severity_overrides=overrides, limits=cfg.limits, today=today, system=units_system,
                       base_dir=base_dir)
    return Prepared(cfg, ruleset, ctx)


def _sources_key() -> str:
    import jinja2

    return "sources-" + hashlib.sha256((code_digest() + jinja2.__version__ + sys.version).encode()).hexdigest()


def _load_sources(cache: ResultCache) -> Any:
    """Return a compile cache holding the rule sources kept by earlier runs (signed entries only).

    A thin adapter of the on-disk code cache to ``engine.expr.CompileCache``; to move into the run package."""
    from rulecheck.engine.expr import CompileCache

    compile_cache = CompileCache()
    entry = cache.get_file(_sources_key())  # None unless signed with the user's key
    cache.hits -= entry is not None
    cache.misses -= entry is None
    if entry is not None:
        compile_cache.load(entry)
    return compile_cache


def _save_sources(cache: ResultCache, compile_cache: Any) -> None:
    if compile_cache.dirty:
        cache.put_file(_sources_key(), compile_cache.export())
        compile_cache.dirty = False


def _prepare_cached(cfg: Config, extra: list[Path], today: _dt.date, units_system: str, base_dir: Path,
                    cache: ResultCache | None, digest: str) -> Prepared:
    """Prepare a configuration's rules, reusing cached compiled sources and lint of the same rules and code."""
    if cache is None:
        return prepare(cfg, extra, today, units_system, base_dir)
    compile_cache = _load_sources(cache)
    try:
        return _prepare_with_lint_cache(cfg, extra, today, units_system, base_dir, cache, digest, compile_cache)
    finally:
        _save_sources(cache, compile_cache)


def _prepare_with_lint_cache(cfg: Config, extra: list[Path], today: _dt.date, units_system: str, base_dir: Path,
                             cache: ResultCache, digest: str, compile_cache: Any) -> Prepared:
    key = "lint-" + hashlib.sha256((code_digest() + digest).encode()).hexdigest()
    entry = cache.get_file(key)
    cache.hits -= entry is not None
    cache.misses -= entry is None
    if entry is not None and isinstance(entry.get("kinds"), dict):
        return prepare(cfg, extra, today, units_system, base_dir, value_kinds=entry["kinds"],
                       compile_cache=compile_cache)
    prepared = prepare(cfg, extra, today, units_system, base_dir, compile_cache=compile_cache)
    cache.put_file(key, {"kinds": prepared.context.value_kinds})
    return prepared


# --- configuration discovery ---------------------------------------------------------------------------


class _Configs:
    """Configurations by file, discovered per spec folder and read once."""

    def __init__(self, explicit: Config | None) -> None:
        self.explicit = explicit
        self.by_file: dict[str | None, Config] = {}
        self.by_folder: dict[Path, str | None] = {}
        self.resolved: dict[Path, Path] = {}  # a spec's folder as given → resolved

    def for_spec(self, spec: Path) -> Config:
        if self.explicit is not None:
            return self.explicit
        folder = self.resolved.get(spec.parent)
        if folder is None:
            folder = self.resolved[spec.parent] = spec.parent.resolve()
        if folder not in self.by_folder:
            found = discover(folder)
            self.by_folder[folder] = str(found) if found else None
        key = self.by_folder[folder]
        if key not in self.by_file:
            try:
                self.by_file[key] = read_config(Path(key)) if key else Config()
            except ConfigError as exc:
                raise UsageError(str(exc)) from None
        return self.by_file[key]


def _config_digest(cfg: Config) -> str:
    if not cfg.file:
        return "none"
    try:
        return hashlib.sha256(Path(cfg.file).read_bytes()).hexdigest()
    except OSError:
        return "unreadable"


# --- changed-only runs ---------------------------------------------------------------------------------


def changed_files(rev: str, cwd: Path) -> set[Path] | None:
    """Return the files changed since git revision ``rev`` (committed, staged, unstaged, untracked).

    Returns None when the folder is not in a git repository; raises UsageError for an unknown revision.
    """
    def git(*args: str) -> str:
        proc = subprocess.run(["git", *args], cwd=cwd, capture_output=True, text=True, timeout=60)
        if proc.returncode != 0:
            raise UsageError(f"--changed-since {rev}: git {' '.join(args[:2])} failed: "
                             f"{proc.stderr.strip() or proc.stdout.strip()}")
        return proc.stdout

    try:
        top = Path(git("rev-parse", "--show-toplevel").strip())
    except (OSError, subprocess.SubprocessError):
        return None
    if rev.startswith("-"):
        raise UsageError(f"--changed-since: '{rev}' is not a revision")
    git("rev-parse", "--verify", "--quiet", f"{rev}^{{commit}}")
    names = git("diff", "--name-only", "-z", rev, "--").split("\0")
    names += git("ls-files", "--others", "--exclude-standard", "-z").split("\0")
    return {(top / n).resolve() for n in names if n}


def _filter_changed(specs: list[Path], rev: str, configs: _Configs, extra: list[Path]) -> list[Path]:
    changed = changed_files(rev, Path.cwd())
    if changed is None:
        raise UsageError("--changed-since needs a git repository")
    if not specs:
        return specs
    # a change to a configuration or a rule file can change any spec's outcome
    for spec in specs:
        cfg = configs.for_spec(spec)
        if cfg.file and Path(cfg.file).resolve() in changed:
            return specs
        for folder in rule_folders(cfg, extra)[1:]:
            if any(str(p).startswith(str(folder.resolve()) + os.sep) for p in changed):
                return specs
    kept = []
    for spec in specs:
        if spec.resolve() in changed:
            kept.append(spec)
            continue
        text = spec.read_bytes() if spec.is_file() else b""
        if b"duty_profile" in text and any(p.parent == spec.parent.resolve() and p.suffix == ".csv" for p in changed):
            kept.append(spec)
    return kept


# --- workers -------------------------------------------------------------------------------------------

_WORKER: dict[str, Any] = {}
# Set by the parent just before it starts workers: a forked worker starts with the compiled rules in memory.
_INHERITED: dict[str | None, Any] = {}


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
                 cache_dir: str | None = None) -> None:
    from rulecheck.check import keep_alarm_handler
    from rulecheck.schema import use_fast_validator

    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle: it stops the workers
    _end_with_parent()
    keep_alarm_handler()
    use_fast_validator()
    _WORKER.clear()
    _WORKER.update(explicit=explicit, extra=[Path(p) for p in extra], today=_dt.date.fromisoformat(today),
                   units=units_system, base=Path(base_dir), kinds=value_kinds, charts=charts,
                   prepared=dict(_INHERITED),  # rules compiled in the parent, inherited by a fork
                   cache=ResultCache(Path(cache_dir)) if cache_dir else None)


def _worker_check(config_file: str | None, spec: str, key: str | None = None, shown: str | None = None,
                  context: str | None = None) -> CachedEntry:
    """Check one spec; store its result in the cache (under ``key``, or the key made from the spec and the
    run's ``context`` key) and return it encoded with its counts.

    The parent only copies the text into a JSON report, or decodes it for the other formats: encoding
    and storing here keeps that work off the parent, which would otherwise share a core with a worker.
    """
    prepared = _WORKER["prepared"]
    if config_file not in prepared:
        cfg = read_config(Path(config_file)) if config_file else Config()
        prepared[config_file] = prepare(cfg, _WORKER["extra"], _WORKER["today"], _WORKER["units"], _WORKER["base"],
                                        value_kinds=_WORKER["kinds"].get(config_file or ""))
        prepared[config_file].context.charts = _WORKER["charts"]
    _result, entry, where = _check_and_store(Path(spec), prepared[config_file].context, shown, key, context,
                                             _WORKER.get("cache"))
    # stored: the parent reads the JSON from this worker's pack, so it does not travel through the pipe too
    return CachedEntry(None, entry.tally, where) if where else entry


def _check_and_store(spec: Path, ctx: CheckContext, shown: str | None, key: str | None, context: str | None,
                     cache: ResultCache | None) -> tuple[dict[str, Any], CachedEntry, tuple[str, int, int] | None]:
    """Check one spec; return its result, the result encoded once, and where that is stored in the cache
    (under ``key``, or, with a ``context`` key instead, the key made from the bytes just checked)."""
    result = check_file(spec, ctx, shown)
    entry = entry_of(result)
    where = None
    if cache is not None:
        if key is None and context is not None and shown is not None:
            key = _key_now(spec, shown, context)
        if key:
            where = cache.put(key, entry)
    return result, entry, where


def _worker_check_many(work: list[tuple[str | None, str, str | None, str, str | None]]) -> list[CachedEntry]:
    """Check a few specs in order (one task); see :func:`_worker_check`."""
    return [_worker_check(cfg, spec, key, shown, context) for cfg, spec, key, shown, context in work]


def _key_now(spec: Path, shown: str, context: str) -> str | None:
    """Return the cache key of a spec from its bytes as they are now (None when it cannot be read)."""
    from rulecheck.load import last_read

    try:
        data = last_read(spec)
        return spec_key(data if data is not None else spec.read_bytes(), spec, shown, context)
    except OSError:
        return None


def _crash_result(file: str, detail: str) -> dict[str, Any]:
    from rulecheck.check import failed_result

    return failed_result(file, "unreadable", "yaml-syntax",
                         f"checking this file stopped the worker process ({detail}); the file was not checked",
                         "report the file to the rulecheck maintainers; check it alone with --jobs 1 to see more")


def _stop(pool: ProcessPoolExecutor) -> None:
    """Stop a pool at once (Ctrl-C): cancel what is queued and end the workers."""
    processes = list(getattr(pool, "_processes", {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for process in processes:
        process.terminate()
    for process in processes:
        process.join(timeout=5)


# --- the run -------------------------------------------------------------------------------------------


def run_stream(options: RunOptions, progress: Callable[[int, int], None] | None = None) -> Stream:
    """Return a run whose spec results are produced in order as they are consumed.

    Paths, configuration and rules are checked first: UsageError is raised before any spec is reported.
    """
    today = options.today or _dt.date.today()
    specs = collect_specs(options.paths)
    explicit = None
    if options.config:
        path = Path(options.config)
        if not path.is_file():
            raise UsageError(f"{options.config}: configuration file not found")
        try:
            explicit = read_config(path)
        except ConfigError as exc:
            raise UsageError(str(exc)) from None
    extra = []
    for raw in options.rule_paths:
        folder = Path(raw)
        if not folder.is_dir():
            raise UsageError(f"{raw}: rule folder not found")
        extra.append(folder.resolve())
    configs = _Configs(explicit)
    if options.changed_since:
        specs = _filter_changed(specs, options.changed_since, configs, extra)
    base_dir = Path.cwd()
    first_cfg = configs.for_spec(specs[0]) if specs else (explicit or Config())
    fail_on = options.fail_on or first_cfg.fail_on or "error"
    units_system = options.units or first_cfg.units or "si"
    cache = ResultCache(Path(options.cache_dir)) if options.cache_dir else None
    code_cache = cache if cache is not None else (ResultCache(Path(options.code_cache_dir)) if options.code_cache_dir
                                                  else None)

    # group by configuration; a context key covers everything but the spec itself
    keys: dict[str | None, str] = {}
    digests: dict[str | None, str] = {}
    plan: list[tuple[int, str | None, Path, str, str | None]] = []
    # with nothing cached yet (a first run, a cleared cache) every spec is checked: its key is computed where
    # it is checked (by a worker, in parallel), not here before any checking can start
    keyed_later = cache is not None and not cache.has_any()
    shown_path = _shown_paths(base_dir)
    for k, spec in enumerate(specs):
        cfg = configs.for_spec(spec)
        if cfg.file not in keys:
            digests[cfg.file] = rules_digest(rule_folders(cfg, extra))
            keys[cfg.file] = hashlib.sha256(json.dumps(
                [__version__, code_digest(), digests[cfg.file], _config_digest(cfg), today.isoformat(), units_system,
                 [str(p) for p in extra], options.charts]).encode()).hexdigest()
        shown = shown_path(spec)
        key = None
        if cache is not None and not keyed_later:
            try:
                key = spec_key(spec.read_bytes(), spec, shown, keys[cfg.file])
            except OSError:
                key = None
        plan.append((k, cfg.file, spec, shown, key))

    done = 0

    def tick() -> None:
        nonlocal done
        done += 1
        if progress:
            progress(done, len(specs))

    # entries that exist are read when their turn comes; only the others need the rules compiled
    todo = [(k, cfg_file, spec, shown) for k, cfg_file, spec, shown, key in plan
            if not (cache is not None and key and cache.has(key))]
    prepared: dict[str | None, Prepared] = {}

    def prepared_for(cfg_file: str | None, spec: Path) -> Prepared:
        if cfg_file not in prepared:
            prepared[cfg_file] = _prepare_cached(configs.for_spec(spec), extra, today, units_system, base_dir,
                                                 code_cache, digests[cfg_file])
            prepared[cfg_file].context.charts = options.charts
        return prepared[cfg_file]

    for _k, cfg_file, spec, _shown in todo:
        prepared_for(cfg_file, spec)  # rule or configuration errors stop the run before any spec is reported
    if len(todo) >= FAST_VALIDATOR_FROM:  # a large run
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
    jobs = options.jobs if options.jobs > 0 else (os.cpu_count() or 1)
    jobs = min(jobs, max(1, len(todo) // 8))  # small runs are faster in one process
    pool = None
    if jobs > 1:
        _INHERITED.clear()
        _INHERITED.update(prepared)
        kinds = {cfg or "": p.context.value_kinds for cfg, p in prepared.items()}
        init = (explicit.file if explicit else None, [str(p) for p in extra], today.isoformat(), units_system,
                str(base_dir), kinds, options.charts, str(cache.folder) if cache is not None else None)
        from rulecheck.schema import _fast_validators

        _fast_validators()  # compiled once here: the forked workers inherit them
        pool = _Workers(jobs, init, window=jobs * _Workers.CHUNK * 3)

    missing = {k for k, _cfg, _spec, _shown in todo}

    def results() -> Iterator[dict[str, Any]]:
        queue = [(k, cfg_file, spec, shown, plan[k][4], keys[cfg_file] if keyed_later else None)
                 for k, cfg_file, spec, shown in todo]
        queued = 0
        finished = False
        try:
            for k, cfg_file, spec, shown, key in plan:
                if pool is not None:
                    while queued < len(queue) and queue[queued][0] <= k + pool.window:
                        pool.submit(queue[queued])  # keep a bounded number of specs in flight
                        queued += 1
                result = None
                if cache is not None:
                    if k in missing:
                        cache.misses += 1  # known absent when the run was planned
                    elif key:
                        result = cache.get(key, lazy=options.lazy_cached)
                if result is None and pool is not None and pool.has(k):
                    entry = pool.take(k)  # the worker has stored it in the cache
                    if isinstance(entry, CachedEntry) and entry.data is None:
                        try:
                            entry = CachedEntry(cache.read_span(entry.where), entry.tally)  # type: ignore[union-attr,arg-type]
                        except (OSError, ValueError, AttributeError):
                            entry = None  # the pack is gone or short: checked again here, below
                    if entry is not None:
                        result = entry if options.lazy_cached or not isinstance(entry, CachedEntry) else entry.load()
                if result is None:
                    if cache is not None or options.lazy_cached:
                        # encoded once: the cache entry and a JSON report share the bytes
                        result, entry, _where = _check_and_store(spec, prepared_for(cfg_file, spec).context, shown,
                                                                 key, keys[cfg_file] if keyed_later else None, cache)
                        result = entry if options.lazy_cached else CachedResult(result, entry.data)
                    else:
                        result = check_file(spec, prepared_for(cfg_file, spec).context, shown)
                tick()
                yield result
            finished = True
        finally:
            if pool is not None:
                pool.close(finished)

    digest = next(iter(digests.values()), rules_digest(rule_folders(first_cfg, extra)))
    rule_count = len(next(iter(prepared.values())).ruleset.rules) if prepared else None
    if rule_count is None:  # every result came from the cache: count the rule files, compile nothing
        names = {p.stem for f in rule_folders(first_cfg, extra) if f.is_dir() for p in rule_files(f)}
        rule_count = len(names - set(first_cfg.disable))
    header = header_of(fail_on, units_system, digest, rule_count)
    return Stream(header, results(), cache)


def run(options: RunOptions, progress: Callable[[int, int], None] | None = None) -> dict[str, Any]:
    """Return the JSON result of a run, every spec in memory; raise UsageError for bad paths, rules or configuration."""
    stream = run_stream(options, progress)
    specs = list(stream.specs)
    result = {**stream.header, "specs": specs, "summary": {}}
    summarise(result)
    stream.add_cache_counts(result["summary"])
    return result


@dataclass
class Stream:
    """A run whose spec results arrive one at a time, in order (memory does not grow with the repository)."""

    header: dict[str, Any]
    specs: Iterator[dict[str, Any]]
    cache: ResultCache | None = None

    def add_cache_counts(self, summary: dict[str, Any]) -> None:
        """Record the cache's hits and misses in a summary."""
        if self.cache is not None:
            summary["cache"] = {"hits": self.cache.hits, "misses": self.cache.misses}


def _shown_paths(base_dir: Path) -> Callable[[Path], str]:
    """Return a function giving a spec's path as results show it (``check._display_path``), the path of each
    folder worked out once: a repository has thousands of specs in a few dozen folders."""
    from rulecheck.check import _display_path

    folders: dict[str, str] = {}

    def shown(spec: Path) -> str:
        head, tail = os.path.split(str(spec))
        if not head or tail in ("", ".", ".."):
            return _display_path(spec, base_dir)
        folder = folders.get(head)
        if folder is None:
            folder = folders[head] = _display_path(Path(head), base_dir)
        return tail if folder == "." else f"{folder}/{tail}"

    return shown


# a spec for a worker: position in the run, configuration file, path, displayed path, cache key, context key
_Item = tuple[int, str | None, Path, str, str | None, str | None]


class _Workers:
    """Worker processes that check specs, a few at a time per task (fewer round trips between processes).

    When one dies, every spec that was in flight is checked again alone in a fresh process (so the one
    that kills its worker is found and reported), and a new pool takes the specs that follow."""

    CHUNK = 16  # specs per task: each task costs the parent a round trip (measured: 16 beat 8 by ~3 % on 10,000 specs)

    def __init__(self, jobs: int, init_args: tuple[Any, ...], window: int) -> None:
        self.jobs = jobs
        self.init_args = init_args
        self.window = window
        self.pool = self._new_pool()
        self.futures: dict[int, tuple[Any, int, _Item]] = {}
        self.orphans: dict[int, _Item] = {}
        self.batch: list[_Item] = []

    def _new_pool(self) -> ProcessPoolExecutor:
        pool = ProcessPoolExecutor(max_workers=self.jobs, initializer=_worker_init, initargs=self.init_args)
        _widen_result_pipe(pool)
        return pool

    def submit(self, item: _Item) -> None:
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
        return k in self.futures or k in self.orphans or any(item[0] == k for item in self.batch)

    def take(self, k: int) -> Any:
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
        if not finished:
            _stop(self.pool)  # interrupted: end the workers at once
            return
        try:
            self.pool.shutdown()
        except BaseException:  # Ctrl-C while waiting for the workers to leave
            _stop(self.pool)
            raise


def _widen_result_pipe(pool: ProcessPoolExecutor) -> None:
    """Let a worker hand back a few batches of results without waiting for the parent to read them.

    The parent shares the cores with the workers; with the system's 64 KiB pipe a worker whose batch is
    larger waits, idle, until the parent is scheduled again. Linux lets a pipe hold up to
    /proc/sys/fs/pipe-max-size (1 MiB by default); elsewhere, or if refused, the pipe stays as it is.
    """
    try:
        import fcntl

        reader = pool._result_queue._reader  # type: ignore[attr-defined]
        fcntl.fcntl(reader.fileno(), getattr(fcntl, "F_SETPIPE_SZ", 1031), 1 << 20)
    except (ImportError, AttributeError, OSError, ValueError):
        pass


def _retry_alone(item: _Item, init_args: tuple[Any, ...]) -> Any:
    _k, cfg, spec, shown, key, context = item
    try:
        with ProcessPoolExecutor(max_workers=1, initializer=_worker_init, initargs=init_args) as pool:
            return pool.submit(_worker_check, cfg, str(spec), key, shown, context).result()
    except BrokenProcessPool:
        return _crash_result(shown, "the worker process ended unexpectedly")


def header_of(fail_on: str, units_system: str, digest: str, rule_count: int) -> dict[str, Any]:
    """Return the result document's fields that come before its specs."""
    return {
        "format_version": 1,
        "tool": {"name": "rulecheck", "version": __version__, "rules_digest": digest, "rule_count": rule_count},
        "generated": _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z"),
        "settings": {"fail_on": fail_on, "units": units_system},
    }


def counts_toward_failure(outcome: dict[str, Any], fail_on: str) -> bool:
    """Return whether an outcome makes the run fail at the ``fail_on`` level.

    Fails count at their severity; a safety rule that could not be evaluated counts as a warning;
    a rule that could not run (a rule error) counts as an error. Outcomes matched by a baseline do not count.
    """
    if outcome.get("baseline"):
        return False
    threshold = SEVERITY_RANK[fail_on]
    if outcome["outcome"] == "fail":
        return SEVERITY_RANK.get(outcome["severity"], 0) >= threshold
    if outcome["outcome"] == "not-checked" and (outcome.get("safety") or outcome["severity"] == "error"):
        level = "error" if outcome["severity"] == "error" else "warning"
        return SEVERITY_RANK[level] >= threshold
    return False


def assemble(results: list[dict[str, Any]], fail_on: str, units_system: str, digest: str,
             rule_count: int) -> dict[str, Any]:
    """Return the complete result document for a list of spec results."""
    result = {**header_of(fail_on, units_system, digest, rule_count), "specs": results, "summary": {}}
    summarise(result)
    return result


class Tally:
    """The summary of a run, built one spec at a time."""

    def __init__(self, fail_on: str) -> None:
        self.fail_on = fail_on
        self.summary: dict[str, Any] = {
            "specs": 0, "checked": 0, "invalid": 0, "unreadable": 0, "fail": {"error": 0, "warning": 0, "info": 0},
            "not-checked": 0, "waived": 0, "fail_on": fail_on,
        }
        self.failing = False

    def add(self, spec: Any) -> None:
        """Count one spec's outcomes (from a result, or the counts kept with a cached one)."""
        s = self.summary
        tally = getattr(spec, "tally", None)
        if tally is not None:
            s["specs"] += 1
            if tally["status"] in ("checked", "invalid", "unreadable"):
                s[tally["status"]] += 1
            for level, n in tally["fail"].items():
                s["fail"][level] += n
            s["not-checked"] += tally["not-checked"]
            s["waived"] += tally["waived"]
            self.failing = self.failing or tally["failing"][self.fail_on]
            return
        s["specs"] += 1
        if spec["status"] in ("checked", "invalid", "unreadable"):
            s[spec["status"]] += 1
        if spec["status"] != "checked" and not all(o.get("baseline") for o in spec["outcomes"]
                                                   if o["outcome"] == "fail"):
            self.failing = True
        for o in spec["outcomes"]:
            if o["outcome"] == "fail":
                s["fail"][o["severity"]] += 1
            elif o["outcome"] in ("not-checked", "waived"):
                s[o["outcome"]] += 1
            if counts_toward_failure(o, self.fail_on):
                self.failing = True

    def result(self) -> dict[str, Any]:
        """Return the summary with its exit code."""
        return {**self.summary, "exit_code": 1 if self.failing else 0}


def summarise(result: dict[str, Any]) -> None:
    """Recompute the result's summary and exit code from its specs (after a baseline is applied, too)."""
    tally = Tally(result["settings"]["fail_on"])
    for spec in result["specs"]:
        tally.add(spec)
    summary = tally.result()
    for key in ("cache", "baseline"):
        if key in result.get("summary", {}):
            summary[key] = result["summary"][key]
    result["summary"] = summary
