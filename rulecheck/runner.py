"""A whole run: collect spec files, find their configuration, load rules once, check every spec.

One bad file never stops the others: each spec's problems are outcomes of that
spec. Only unusable rules or configuration stop a run (exit code 2).
"""

from __future__ import annotations

import datetime as _dt
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Iterator

from rulecheck import __version__
from rulecheck.check import BUILTIN_RULES, CheckContext, check_file
from rulecheck.config import Config, ConfigError, discover, read_config
from rulecheck.engine.lint import lint_ruleset
from rulecheck.engine.ruleset import RuleError, RuleSet, load_rules, shipped_rules_dir

__all__ = ["RunOptions", "UsageError", "collect_specs", "prepare", "run"]

SPEC_SUFFIXES = (".yaml", ".yml")
SEVERITY_RANK = {"info": 1, "warning": 2, "error": 3}


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
    jobs: int = 1
    cache_dir: str | None = None
    only_rules: list[str] = field(default_factory=list)


def collect_specs(paths: list[str]) -> list[Path]:
    """Return the spec files named or found under ``paths`` (recursive, stable order, no duplicates)."""
    found: list[Path] = []
    seen: set[Path] = set()
    for raw in paths:
        path = Path(raw)
        if path.is_dir():
            candidates: Iterator[Path] = iter(sorted(
                p for p in path.rglob("*")
                if p.suffix in SPEC_SUFFIXES and p.is_file() and not any(
                    part.startswith(".") for part in p.relative_to(path).parts)
            ))
        elif path.exists():
            candidates = iter([path])
        else:
            raise UsageError(f"{raw}: no such file or directory")
        for p in candidates:
            key = p.resolve()
            if key not in seen:
                seen.add(key)
                found.append(p)
    return found


@dataclass
class Prepared:
    """A configuration with its rule set, compiled and linted once."""

    config: Config
    ruleset: RuleSet
    context: CheckContext


def _params_from_config(cfg: Config, ruleset: RuleSet) -> dict[str, dict[str, Any]]:
    out: dict[str, dict[str, Any]] = {}
    names = ruleset.parameter_names()
    for key, value in cfg.parameters.items():
        rule_id = ruleset.resolve(key)
        if isinstance(value, dict) and rule_id:
            rule = ruleset.rules[rule_id]
            for name, raw in value.items():
                if name not in rule.params:
                    raise ConfigError(cfg.file or "?", f"parameters.{key}: rule '{rule_id}' has no parameter '{name}'"
                                      f" (it has: {', '.join(rule.params) or 'none'})",
                                      cfg.line(f"parameters.{key}.{name}"))
                try:
                    out.setdefault(rule_id, {})[name] = rule.params[name].parse(raw)
                except ValueError as exc:
                    raise ConfigError(cfg.file or "?", f"parameters.{key}.{name}: {exc}",
                                      cfg.line(f"parameters.{key}.{name}")) from None
        elif key in names and not isinstance(value, dict):
            param = next(r.params[key] for r in ruleset.rules.values() if key in r.params)
            try:
                out.setdefault("*", {})[key] = param.parse(value)
            except ValueError as exc:
                raise ConfigError(cfg.file or "?", f"parameters.{key}: {exc}", cfg.line(f"parameters.{key}")) from None
        else:
            raise ConfigError(cfg.file or "?", f"parameters: '{key}' is neither a rule id nor a rule parameter",
                              cfg.line(f"parameters.{key}"))
    return out


def prepare(cfg: Config, extra_rule_paths: list[Path], today: _dt.date, units_system: str,
            base_dir: Path | None) -> Prepared:
    """Return the compiled, linted rule set and check context of one configuration; raise UsageError."""
    folders = [shipped_rules_dir(), *cfg.rule_paths, *extra_rule_paths]
    ruleset, errors = load_rules(folders)
    for rule_id in (*cfg.disable, *cfg.severity):
        if ruleset.resolve(rule_id) is None and rule_id not in BUILTIN_RULES:
            raise UsageError(str(ConfigError(cfg.file or "?", f"unknown rule id '{rule_id}'",
                                             cfg.line("disable") or cfg.line(f"severity.{rule_id}"))))
    if errors:
        raise UsageError("\n".join(str(e) for e in errors))
    value_kinds, problems = lint_ruleset(ruleset)
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


def _config_for(spec: Path, explicit: Config | None, cache: dict[Path | None, Config]) -> Config:
    if explicit is not None:
        return explicit
    found = discover(spec)
    if found not in cache:
        try:
            cache[found] = read_config(found) if found else Config()
        except ConfigError as exc:
            raise UsageError(str(exc)) from None
    return cache[found]


def run(options: RunOptions, progress: Callable[[int, int], None] | None = None) -> dict[str, Any]:
    """Return the JSON result of a run; raise UsageError for bad paths, rules or configuration."""
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
    base_dir = Path.cwd()
    config_cache: dict[Path | None, Config] = {}
    prepared: dict[int, Prepared] = {}
    results: list[dict[str, Any]] = []
    fail_on = options.fail_on
    units_system = options.units
    first_cfg = _config_for(specs[0] if specs else Path.cwd(), explicit, config_cache)
    fail_on = fail_on or first_cfg.fail_on or "error"
    units_system = units_system or first_cfg.units or "si"
    digest = ""
    rule_count = 0
    for k, spec in enumerate(specs):
        cfg = _config_for(spec, explicit, config_cache)
        key = id(cfg)
        if key not in prepared:
            prepared[key] = prepare(cfg, extra, today, units_system, base_dir)
        prep = prepared[key]
        digest, rule_count = prep.ruleset.digest, len(prep.ruleset.rules)
        results.append(check_file(spec, prep.context))
        if progress:
            progress(k + 1, len(specs))
    if not specs:
        prep = prepare(first_cfg, extra, today, units_system, base_dir)
        digest, rule_count = prep.ruleset.digest, len(prep.ruleset.rules)
    return assemble(results, fail_on, units_system, digest, rule_count)


def counts_toward_failure(outcome: dict[str, Any], fail_on: str) -> bool:
    """Return whether an outcome makes the run fail at the ``fail_on`` level.

    Fails count at their severity; a safety rule that could not be evaluated counts as a warning.
    """
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
    summary: dict[str, Any] = {
        "specs": len(results),
        "checked": sum(r["status"] == "checked" for r in results),
        "invalid": sum(r["status"] == "invalid" for r in results),
        "unreadable": sum(r["status"] == "unreadable" for r in results),
        "fail": {"error": 0, "warning": 0, "info": 0},
        "not-checked": 0,
        "waived": 0,
        "fail_on": fail_on,
    }
    failing = False
    for r in results:
        if r["status"] != "checked":
            failing = True
        for o in r["outcomes"]:
            if o["outcome"] == "fail":
                summary["fail"][o["severity"]] += 1
            elif o["outcome"] in ("not-checked", "waived"):
                summary[o["outcome"]] += 1
            if counts_toward_failure(o, fail_on):
                failing = True
    summary["exit_code"] = 1 if failing else 0
    return {
        "format_version": 1,
        "tool": {"name": "rulecheck", "version": __version__, "rules_digest": digest, "rule_count": rule_count},
        "generated": _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat().replace("+00:00", "Z"),
        "settings": {"fail_on": fail_on, "units": units_system},
        "specs": results,
        "summary": summary,
    }


def relative(path: str) -> str:
    """Return ``path`` with forward slashes."""
    return path.replace(os.sep, "/")
