"""Project configuration: ``.rulecheck.yaml`` or ``[tool.rulecheck]`` in ``pyproject.toml``.

Found by walking up from each spec's folder (the nearest wins), or named with
``--config``. It may add rule folders (explicitly, and only inside the folder
that holds the configuration), switch rules off, set parameters and
severities, and adjust limits within safe bounds. Unknown keys, rule ids and
parameters, and values of the wrong type, are errors naming the file and key.

Limits: a configuration found beside the specs (which a pull request may add
or edit) may lower a loader limit but not raise it above its default; only
the configuration named with ``--config`` (chosen by whoever runs the check)
may raise one, up to its cap.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from rulecheck.files import read_limited
from rulecheck.load import Limits, LoadError, load_file

__all__ = ["CONFIG_NAME", "Config", "ConfigError", "discover", "read_config"]

CONFIG_NAME = ".rulecheck.yaml"
_KEYS = {"rule_paths", "disable", "severity", "parameters", "fail_on", "units", "limits", "report"}
# the printed report's page header and paper (``report:``); the command line's --paper, --project, --revision
# and --reviewer override them
REPORT_KEYS = ("paper", "project", "revision", "reviewer")
_REPORT_TEXT_MAX = 200
_SEVERITIES = {"error", "warning", "info"}
# the highest a configuration may raise each loader limit: beyond these a hostile file could exhaust memory
_LIMIT_CAPS = {"max_bytes": 16 * 1_048_576, "max_depth": 128, "max_nodes": 2_000_000, "max_seconds": 600}


class ConfigError(Exception):
    """An unusable configuration; names the file and the key."""

    def __init__(self, file: str, message: str, line: int | None = None) -> None:
        super().__init__(message)
        self.file = file
        self.message = message
        self.line = line

    def __str__(self) -> str:
        return f"{self.file}{':' + str(self.line) if self.line else ''}: {self.message}"


@dataclass
class Config:
    """A project configuration as read (rule ids and parameters are checked against the rules later)."""

    file: str | None = None
    root: Path | None = None
    rule_paths: list[Path] = field(default_factory=list)
    disable: list[str] = field(default_factory=list)
    severity: dict[str, str] = field(default_factory=dict)
    parameters: dict[str, Any] = field(default_factory=dict)
    fail_on: str | None = None
    units: str | None = None
    limits: Limits = field(default_factory=Limits)
    positions: dict[str, int] = field(default_factory=dict)
    report: dict[str, str] = field(default_factory=dict)

    def line(self, key: str) -> int | None:
        """Return the line of a key path in the configuration file, when known."""
        return self.positions.get(key)


def _from_mapping(data: Any, file: str, root: Path, positions: dict[str, int], explicit: bool = False) -> Config:
    if data is None:
        data = {}
    if not isinstance(data, dict):
        raise ConfigError(file, "the configuration must be a mapping of keys")
    cfg = Config(file=file, root=root, positions=positions)
    for key in data:
        if key not in _KEYS:
            raise ConfigError(file, f"unknown key '{key}' (known: {', '.join(sorted(_KEYS))})", positions.get(key))
    rule_paths = data.get("rule_paths") or []
    if not isinstance(rule_paths, list):
        raise ConfigError(file, "rule_paths must be a list of folder names", positions.get("rule_paths"))
    cfg.rule_paths = _rule_paths(rule_paths, file, root, positions)
    disable = data.get("disable") or []
    if not isinstance(disable, list) or not all(isinstance(x, str) for x in disable):
        raise ConfigError(file, "disable must be a list of rule ids", positions.get("disable"))
    cfg.disable = list(disable)
    cfg.severity = _severity(data.get("severity") or {}, file, positions)
    params = data.get("parameters") or {}
    if not isinstance(params, dict):
        raise ConfigError(file, "parameters must be a mapping", positions.get("parameters"))
    cfg.parameters = params
    for key, allowed in (("fail_on", _SEVERITIES), ("units", {"si", "customary"})):
        value = data.get(key)
        if value is not None and (not isinstance(value, str) or value not in allowed):
            raise ConfigError(file, f"{key} must be one of {', '.join(sorted(allowed))}, not {_shown(value)}",
                              positions.get(key))
    cfg.fail_on, cfg.units = data.get("fail_on"), data.get("units")
    cfg.limits = _limits(data.get("limits") or {}, file, positions, explicit)
    cfg.report = _report(data.get("report") or {}, file, positions)
    return cfg


def _report(report: Any, file: str, positions: dict[str, int]) -> dict[str, str]:
    """Return the ``report`` mapping (paper a4 or letter; project, revision, reviewer as one line of text)."""
    if not isinstance(report, dict):
        raise ConfigError(file, f"report must be a mapping of {', '.join(REPORT_KEYS)}", positions.get("report"))
    out = {}
    for key, value in report.items():
        where = positions.get(f"report.{key}")
        if key not in REPORT_KEYS:
            raise ConfigError(file, f"report: unknown key {_shown(key)[:40]} (known: {', '.join(REPORT_KEYS)})",
                              where)
        if key == "paper":
            if value not in ("a4", "letter"):
                raise ConfigError(file, f"report.paper must be a4 or letter, not {_shown(value)}", where)
        elif (not isinstance(value, (str, int, float)) or isinstance(value, bool)
              or not 0 < len(str(value).strip()) <= _REPORT_TEXT_MAX
              or any(ord(c) < 32 or 127 <= ord(c) < 160 for c in str(value))):
            raise ConfigError(file, f"report.{key} must be one line of text of 1 to {_REPORT_TEXT_MAX} characters, "
                              f"not {_shown(value)}", where)
        out[key] = str(value).strip()
    return out


def _shown(value: Any) -> str:
    """Return a short, printable account of a value a configuration gave (for a message)."""
    if isinstance(value, str):
        return repr(value[:60])
    return f"a {type(value).__name__}" if isinstance(value, (list, dict)) else repr(value)[:60]


def _rule_paths(entries: Any, file: str, root: Path, positions: dict[str, int]) -> list[Path]:
    """Return the rule folders named by ``rule_paths``, each inside the configuration's folder."""
    paths = []
    for entry in entries:
        if not isinstance(entry, str) or not entry.strip():
            raise ConfigError(file, "rule_paths entries must be folder names", positions.get("rule_paths"))
        target = (root / entry).resolve()
        try:
            target.relative_to(root.resolve())
        except ValueError:
            raise ConfigError(file, f"rule_paths: '{entry}' is outside the folder of the configuration",
                              positions.get("rule_paths")) from None
        paths.append(target)
    return paths


def _severity(severity: Any, file: str, positions: dict[str, int]) -> dict[str, str]:
    """Return the ``severity`` mapping (rule id → error, warning or info), checked."""
    if not isinstance(severity, dict):
        raise ConfigError(file, "severity must map rule ids to error, warning or info", positions.get("severity"))
    for rule_id, level in severity.items():
        if not isinstance(rule_id, str) or not isinstance(level, str) or level not in _SEVERITIES:
            raise ConfigError(file, f"severity.{rule_id}: {_shown(level)} is not error, warning or info",
                              positions.get(f"severity.{rule_id}"))
    return dict(severity)


def _limits(limits: Any, file: str, positions: dict[str, int], explicit: bool = False) -> Limits:
    """Return the loader limits ``limits`` sets, each a whole number within its cap; above its default only in
    a configuration named with ``--config`` (``explicit``)."""
    if not isinstance(limits, dict):
        raise ConfigError(file, "limits must be a mapping", positions.get("limits"))
    values = {}
    for key, value in limits.items():
        if key not in _LIMIT_CAPS:
            raise ConfigError(file, f"limits: unknown limit '{key}' (known: {', '.join(_LIMIT_CAPS)})",
                              positions.get(f"limits.{key}"))
        if not isinstance(value, int) or isinstance(value, bool) or not 1 <= value <= _LIMIT_CAPS[key]:
            raise ConfigError(file, f"limits.{key} must be a whole number from 1 to {_LIMIT_CAPS[key]}",
                              positions.get(f"limits.{key}"))
        default = getattr(Limits(), key)
        if value > default and not explicit:
            raise ConfigError(file, f"limits.{key}: a configuration found beside the specs may lower a limit but not "
                              f"raise it above its default {default}; name the file with --config to raise it",
                              positions.get(f"limits.{key}"))
        values[key] = value
    return Limits(**values)


def read_config(path: Path, explicit: bool = False) -> Config:
    """Return the configuration in ``path`` (``.rulecheck.yaml`` or ``pyproject.toml``); ``explicit`` when it was
    named with ``--config`` (only then may it raise a limit)."""
    file = str(path)
    if path.name == "pyproject.toml":
        try:
            data = tomllib.loads(read_limited(path, _MAX_TOML).decode("utf-8"))
        except (OSError, UnicodeDecodeError) as exc:
            raise ConfigError(file, f"cannot read: {getattr(exc, 'strerror', None) or exc}") from None
        except tomllib.TOMLDecodeError as exc:
            raise ConfigError(file, f"invalid TOML: {exc}") from None
        tool = data.get("tool", {})
        section = tool.get("rulecheck", {}) if isinstance(tool, dict) else {}
        return _from_mapping(section, file, path.parent, {}, explicit)
    try:
        doc = load_file(path, display_name=file)
    except LoadError as exc:
        if exc.message == "the file is empty":
            return _from_mapping({}, file, path.parent, {})
        raise ConfigError(file, exc.message, exc.line) from None
    positions = {k: p.line for k, p in doc.key_positions.items()}
    return _from_mapping(doc.data, file, path.parent, positions, explicit)


_MAX_TOML = 1_048_576
_SECTION = re.compile(rb"^\s*\[\s*tool\s*\.\s*(\"rulecheck\"|'rulecheck'|rulecheck)\s*[\].]", re.MULTILINE)


def _has_section(pyproject: Path) -> bool:
    """Return whether a pyproject.toml holds a [tool.rulecheck] table. One that cannot be parsed but shows the
    table's heading counts too, so that reading it reports the TOML error instead of dropping the section."""
    try:
        raw = read_limited(pyproject, _MAX_TOML)
    except OSError:
        return False
    try:
        tool = tomllib.loads(raw.decode("utf-8")).get("tool", {})
        return isinstance(tool, dict) and "rulecheck" in tool
    except (UnicodeDecodeError, tomllib.TOMLDecodeError):
        return bool(_SECTION.search(raw))


def discover(start: Path) -> Path | None:
    """Return the nearest configuration file at or above ``start``, or None."""
    folder = start if start.is_dir() else start.parent
    folder = folder.resolve()
    for candidate in (folder, *folder.parents):
        own = candidate / CONFIG_NAME
        if own.is_file():
            return own
        pyproject = candidate / "pyproject.toml"
        if pyproject.is_file() and _has_section(pyproject):
            return pyproject
        if (candidate / ".git").exists():
            break  # a repository's configuration lives inside it
    return None
