"""Preparing the rules of one configuration: loaded, compiled and linted once per run.

The compiled rule sources and the lint's findings are kept in the code cache (signed files of
:class:`~rulecheck.cache.ResultCache`), so a warm start compiles and lints nothing.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from rulecheck.cache import ResultCache, code_digest
from rulecheck.check import BUILTIN_RULES, CheckContext
from rulecheck.config import Config, ConfigError
from rulecheck.engine.ruleset import Rule, RuleSet, load_rules, rule_files
from rulecheck.result import rule_entry
from rulecheck.run.discovery import rule_folders
from rulecheck.run.options import UsageError

__all__ = ["Prepared", "prepare", "prepare_cached", "rule_count", "rules_block"]


@dataclass
class Prepared:
    """A configuration with its rule set, compiled and linted once."""

    config: Config
    ruleset: RuleSet
    context: CheckContext


def _rule_params(cfg: Config, rule: Rule, key: str, value: dict[str, Any]) -> dict[str, Any]:
    """Return the parameters a configuration sets for one rule (``parameters: {rule: {name: value}}``)."""
    out = {}
    file = cfg.file or "?"
    for name, raw in value.items():
        where = f"parameters.{key}.{name}"
        if name not in rule.params:
            raise ConfigError(file, f"{where}: rule '{rule.id}' has no parameter '{name}' "
                              f"(it has: {', '.join(rule.params) or 'none'})", cfg.line(where))
        try:
            out[name] = rule.params[name].parse(raw)
        except ValueError as exc:
            raise ConfigError(file, f"{where}: {exc}", cfg.line(where)) from None
    return out


def _params_from_config(cfg: Config, ruleset: RuleSet) -> dict[str, dict[str, Any]]:
    """Return the configuration's parameters: by rule id, and under "*" those it sets for every rule."""
    out: dict[str, dict[str, Any]] = {}
    names = ruleset.parameter_names()
    file = cfg.file or "?"
    for key, value in cfg.parameters.items():
        rule_id = ruleset.resolve(key)
        if isinstance(value, dict) and rule_id:
            out.setdefault(rule_id, {}).update(_rule_params(cfg, ruleset.rules[rule_id], key, value))
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


def _check_rule_ids(cfg: Config, ruleset: RuleSet) -> None:
    """Refuse a configuration that disables or re-grades a rule that does not exist."""
    for rule_id in (*cfg.disable, *cfg.severity):
        if ruleset.resolve(rule_id) is None and rule_id not in BUILTIN_RULES:
            where = "disable" if rule_id in cfg.disable else f"severity.{rule_id}"
            raise UsageError(str(ConfigError(cfg.file or "?", f"{where}: unknown rule id '{rule_id}'",
                                             cfg.line(where))))


def prepare(cfg: Config, extra_rule_paths: list[Path], today: _dt.date, units_system: str,
            base_dir: Path | None, value_kinds: dict[str, dict[str, str | None]] | None = None,
            compile_cache: Any = None) -> Prepared:
    """Return the compiled (and, unless ``value_kinds`` is given, linted) rules of one configuration.

    ``compile_cache`` (an ``engine.expr.CompileCache``) keeps translated and compiled expressions between runs.
    Raises UsageError for unusable rules or configuration.
    """
    from rulecheck.derive import catalogue  # the derived values rule expressions may read besides the spec's fields
    from rulecheck.engine.lint import lint_ruleset

    # rule files already linted (their digest matched a cached lint) need no second schema check
    ruleset, errors = load_rules(rule_folders(cfg, extra_rule_paths), validate=value_kinds is None,
                                 cache=compile_cache)
    _check_rule_ids(cfg, ruleset)
    if errors:
        raise UsageError("\n".join(str(e) for e in errors))
    if value_kinds is None:
        value_kinds, problems = lint_ruleset(ruleset, catalogue())
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


# --- the code cache: compiled sources and lint results ----------------------------------------------------


def _sources_key() -> str:
    import jinja2

    return "sources-" + hashlib.sha256((code_digest() + jinja2.__version__ + sys.version).encode()).hexdigest()


def _cached_file(cache: ResultCache, key: str) -> Any:
    """Return a code-cache file's value, or None; code-cache look-ups are not counted as result hits or misses."""
    entry = cache.get_file(key)
    cache.hits -= entry is not None
    cache.misses -= entry is None
    return entry


def _load_sources(cache: ResultCache) -> Any:
    """Return a compile cache holding the rule sources kept by earlier runs (signed entries only)."""
    from rulecheck.engine.expr import CompileCache

    compile_cache = CompileCache()
    entry = _cached_file(cache, _sources_key())  # None unless signed with the user's key
    if entry is not None:
        compile_cache.load(entry)
    return compile_cache


def _save_sources(cache: ResultCache, compile_cache: Any) -> None:
    if compile_cache.dirty:
        cache.put_file(_sources_key(), compile_cache.export())
        compile_cache.dirty = False


def prepare_cached(cfg: Config, extra: list[Path], today: _dt.date, units_system: str, base_dir: Path,
                   cache: ResultCache | None, digest: str) -> Prepared:
    """Prepare a configuration's rules, reusing cached compiled sources and lint of the same rules and code."""
    if cache is None:
        return prepare(cfg, extra, today, units_system, base_dir)
    compile_cache = _load_sources(cache)
    try:
        key = "lint-" + hashlib.sha256((code_digest() + digest).encode()).hexdigest()
        entry = _cached_file(cache, key)
        if entry is not None and isinstance(entry.get("kinds"), dict):
            return prepare(cfg, extra, today, units_system, base_dir, value_kinds=entry["kinds"],
                           compile_cache=compile_cache)
        prepared = prepare(cfg, extra, today, units_system, base_dir, compile_cache=compile_cache)
        cache.put_file(key, {"kinds": prepared.context.value_kinds})
        return prepared
    finally:
        _save_sources(cache, compile_cache)


# --- what the result's header says of the rules ------------------------------------------------------------


def rule_count(prepared: dict[Any, Prepared], cfg: Config, extra: list[Path]) -> int:
    """Return the number of rules of a run (the first configuration's; with nothing compiled, its rule files
    less those it disables)."""
    if prepared:
        return len(next(iter(prepared.values())).ruleset.rules)
    names = {p.stem for f in rule_folders(cfg, extra) if f.is_dir() for p in rule_files(f)}
    return len(names - set(cfg.disable))


def rules_block(prepared: dict[Any, Prepared], cfg: Config, extra: list[Path], cache: ResultCache | None,
                digest: str) -> list[dict[str, Any]]:
    """Return the result's ``rules`` block: the built-in checks, then every rule the run applies (each once,
    in load order). With nothing compiled (every result cached), the first configuration's rules, from the
    code cache or read from their files."""
    entries = [rule_entry({"id": k, **v}) for k, v in BUILTIN_RULES.items()]
    seen = set(BUILTIN_RULES)
    key = "rules-" + hashlib.sha256(f"{code_digest()} {digest} {sorted(cfg.disable)}".encode()).hexdigest()
    if prepared:
        rules = [rule_entry(r.metadata()) for p in prepared.values() for r in p.ruleset.rules.values()]
        if cache is not None and cache.usable and not cache.has_file(key):
            cache.put_file(key, {"rules": rules})
    else:
        stored = _cached_file(cache, key) if cache is not None else None
        rules = stored.get("rules") if isinstance(stored, dict) and isinstance(stored.get("rules"), list) else None
        if rules is None:
            rules = [rule_entry(m) for m in _rule_files_metadata(cfg, extra)]
            if cache is not None:
                cache.put_file(key, {"rules": rules})
    for meta in rules:
        if isinstance(meta, dict) and meta.get("id") not in seen:
            seen.add(meta["id"])
            entries.append(rule_entry(meta))
    return entries


def _rule_files_metadata(cfg: Config, extra: list[Path]) -> list[dict[str, Any]]:
    """Return the metadata of a configuration's rules, read from their files (nothing is linted)."""
    ruleset, _errors = load_rules(rule_folders(cfg, extra), validate=False)
    disabled = {ruleset.resolve(r) for r in cfg.disable}
    return [r.metadata() for rule_id, r in ruleset.rules.items() if rule_id not in disabled]
