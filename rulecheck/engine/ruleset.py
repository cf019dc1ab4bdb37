"""Rule files: loading, validation against the rule schema, and compilation.

A rule file is data: YAML, one rule per file, its id equal to the file name.
It is loaded with the same safe loader as specs (so errors carry file:line),
validated against ``schemas/rule.schema.yaml``, and its expressions are
compiled once in the sandbox of :mod:`rulecheck.engine.expr`.
"""

from __future__ import annotations

import hashlib
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property, lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

import yaml

from rulecheck import units
from rulecheck.engine import expr
from rulecheck.load import Document, LoadError, Position, load_file, path_text

__all__ = ["Check", "Param", "Rule", "RuleError", "RuleSet", "load_rule_file", "load_rules", "shipped_rules_dir"]

MAX_RULE_FILE_BYTES = 262_144
MAX_TEMPLATE_LENGTH = 1000


class RuleError(Exception):
    """A rule file that cannot be used; names the file, line and column."""

    def __init__(self, file: str, message: str, line: int | None = None, column: int | None = None) -> None:
        super().__init__(message)
        self.file = file
        self.message = message
        self.line = line
        self.column = column

    def __str__(self) -> str:
        where = self.file + (f":{self.line}:{self.column}" if self.line else "")
        return f"{where}: {self.message}"


@dataclass(frozen=True)
class Param:
    """A rule parameter: its default (SI float, bool or text) and kind."""

    name: str
    default: Any
    kind: str | None
    description: str
    minimum: float | None = None
    maximum: float | None = None
    written: str = ""

    def parse(self, value: Any) -> Any:
        """Return ``value`` (as written in configuration) in SI; raise ValueError with the reason."""
        if isinstance(self.default, bool):
            if not isinstance(value, bool):
                raise ValueError(f"parameter '{self.name}' takes true or false")
            return value
        if self.kind is None or self.kind == "fraction":
            try:
                si = units.parse_quantity(value, "fraction")
            except units.QuantityError as exc:
                raise ValueError(f"parameter '{self.name}': {exc.message}") from None
        else:
            try:
                si = units.parse_quantity(value, self.kind)
            except units.QuantityError as exc:
                raise ValueError(f"parameter '{self.name}': {exc.message}; {exc.hint}") from None
        if self.minimum is not None and si < self.minimum or self.maximum is not None and si > self.maximum:
            raise ValueError(f"parameter '{self.name}' = {value!r} is outside its safe range "
                             f"[{self.minimum}, {self.maximum}]")
        return si


@dataclass(frozen=True)
class Check:
    """One failure condition of a rule."""

    when: Callable[..., Any]
    when_text: str
    severity: str
    message: Any | None  # compiled template
    position: Position | None
    fix: Any | None = None  # compiled template: this failure's own remedy (else the rule's)
    not_applicable: bool = False  # when ``when`` holds the rule does not apply; ``message`` says why
    location: tuple[str, ...] = ()  # spec key paths this check's finding points at (first given wins; else the rule's)


@dataclass
class Rule:
    """A compiled rule."""

    id: str
    file: str
    title: str
    topic: str
    severity: str
    safety: bool
    description: str
    basis: list[dict[str, str]]
    aliases: list[str]
    params: dict[str, Param]
    applies_when: Callable[..., Any] | None
    applies_text: str
    values: list[tuple[str, Callable[..., Any], str, str]]  # name, compiled, text, declared kind (VALUE_KINDS)
    checks: list[Check]
    message: Any
    pass_message: Any | None
    fix: Any
    formula: str
    location: str
    limit: str
    examples: list[dict[str, Any]]
    raw: dict[str, Any] = field(repr=False, default_factory=dict)
    doc: Document | None = field(repr=False, default=None)
    scope: str = ""  # what the rule covers and what it leaves to other rules (for 'rules show')
    locations: tuple[str, ...] = ()  # the rule's location candidates (``location`` is the first)

    @cached_property
    def expression_environment(self) -> Any:
        """The sandbox its expressions were compiled in (one per rule set)."""
        first = self.applies_when or (self.values[0][1] if self.values else self.checks[0].when)
        return first.environment

    def metadata(self) -> dict[str, Any]:
        """Return the rule's description for reports and SARIF (no compiled parts; built once)."""
        cached = self.raw.get("__metadata__") if isinstance(self.raw, dict) else None
        if cached is not None:
            return cached
        meta = self._metadata()
        self.raw["__metadata__"] = meta
        return meta

    def _metadata(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "title": self.title,
            "topic": self.topic,
            "severity": self.severity,
            "safety": self.safety,
            "description": self.description.strip(),
            "basis": self.basis,
            "fix": self.raw.get("fix", ""),
            "formula": self.formula,
            "aliases": self.aliases,
            "parameters": {
                p.name: {"default": p.written, "kind": p.kind, "description": p.description}
                for p in self.params.values()
            },
        }


@dataclass
class RuleSet:
    """The rules of one run, by id, with aliases and a digest of their files."""

    rules: dict[str, Rule]
    aliases: dict[str, str]
    digest: str
    compile_cache: expr.CompileCache | None = field(default=None, repr=False)  # what its rules were compiled with

    def resolve(self, rule_id: str) -> str | None:
        """Return the current id for ``rule_id`` or one of its aliases, or None."""
        if rule_id in self.rules:
            return rule_id
        return self.aliases.get(rule_id)

    def parameter_names(self) -> set[str]:
        """Return every parameter name any rule declares."""
        return {p for r in self.rules.values() for p in r.params}

    @cached_property
    def parameters_by_name(self) -> dict[str, Param]:
        """The first declaration of every rule parameter, by name (made when first asked for: after the
        configuration has disabled rules)."""
        known: dict[str, Param] = {}
        for rule in self.rules.values():
            for name, param in rule.params.items():
                known.setdefault(name, param)
        return known


@lru_cache(maxsize=1)
def _rule_validator() -> Any:
    from jsonschema import Draft202012Validator

    text = resources.files("rulecheck").joinpath("schemas/rule.schema.yaml").read_text(encoding="utf-8")
    return Draft202012Validator(yaml.load(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader)))


def shipped_rules_dir() -> Path:
    """Return the folder of the rules shipped with rulecheck (installed, or ``rules/`` of a source tree)."""
    installed = Path(str(resources.files("rulecheck").joinpath("rules")))
    if installed.is_dir():
        return installed
    return Path(__file__).resolve().parents[2] / "rules"


@lru_cache(maxsize=1)
def environment() -> Any:
    """Return the sandbox shared by every rule, with the physics methods as callables."""
    from rulecheck.physics import METHODS

    return expr.environment({name: info.function for name, info in METHODS.items() if info.expose})


# What a named value of a rule may be: a quantity kind of the spec format ("fraction": shown as a
# percentage), a dimensionless "ratio" shown as it is (a margin, a gear ratio, a service factor), a whole
# number ("count": poles, an IP digit, a class number), or true/false ("flag"). Every value declares one.
VALUE_KINDS = frozenset({*units.KINDS, "ratio", "count", "flag"})
DIMENSIONLESS_KINDS = frozenset({"fraction", "ratio", "count"})


class _Compiler:
    """Compiles the expressions and templates of one rule file, naming the file and position of a problem."""

    def __init__(self, file: str, doc: Document, cache: expr.CompileCache | None) -> None:
        self.file = file
        self.doc = doc
        self.env = environment()
        self.cache = cache

    def error(self, where: str, message: str, at: str | None = None) -> RuleError:
        return RuleError(self.file, message, *_lc(self.doc.position(at or where)))

    def expression(self, text: Any, where: str) -> Callable[..., Any]:
        try:
            return expr.compile_expression(self.env, text, self.cache)
        except expr.ExpressionError as exc:
            raise self.error(where, f"{where}: {exc}") from None

    def template(self, text: Any, where: str) -> Any:
        if not isinstance(text, str):
            raise self.error(where, f"{where} must be text")
        if len(text) > MAX_TEMPLATE_LENGTH:
            raise self.error(where, f"{where} is longer than {MAX_TEMPLATE_LENGTH} characters")
        if "{%" in text or "{#" in text or "__" in text:
            raise self.error(where, f"{where}: only {{{{ value }}}} substitutions are allowed in messages")
        try:
            return expr.compile_template(self.env, text, self.cache)
        except expr.ExpressionError as exc:
            if str(exc).startswith(("syntax error", "cannot compile")):
                raise self.error(where, f"{where}: cannot compile template: {exc}") from None
            raise self.error(where, f"{where}: {exc}") from None
        except Exception as exc:
            raise self.error(where, f"{where}: cannot compile template: {exc}") from None

    def optional_template(self, spec: dict[str, Any], part: str, where: str) -> Any:
        return self.template(spec[part], where) if part in spec else None


def _lc(pos: Position | None) -> tuple[int | None, int | None]:
    return (pos.line, pos.column) if pos else (None, None)


_IDENT = re.compile(r"^[a-z][a-z0-9_]*$")
_RESERVED = {*expr.SECTION_NAMES, *expr.BUILTINS, *expr.CONSTANTS, *expr.JINJA_NAMES}


def _read_rule_document(path: Path, validate: bool) -> Document:
    """Return the rule file's document, checked against the rule schema unless ``validate`` is false."""
    file = str(path)
    try:
        doc = load_file(path, display_name=file)
    except LoadError as exc:
        raise RuleError(file, exc.message, exc.line, exc.column) from None
    if not isinstance(doc.data, dict):
        raise RuleError(file, "a rule file is a mapping", 1, 1)
    if path.stat().st_size > MAX_RULE_FILE_BYTES:
        raise RuleError(file, f"rule file is larger than {MAX_RULE_FILE_BYTES} bytes", 1, 1)
    errors = sorted(_rule_validator().iter_errors(doc.data), key=lambda e: list(map(str, e.absolute_path))) \
        if validate else []
    if errors:
        error = errors[0]
        key = path_text(list(error.absolute_path))
        message = error.message
        if error.validator == "additionalProperties":
            message = f"unknown key in {key or 'the rule'}: {error.message.split('(')[-1].rstrip(')')}"
        raise RuleError(file, f"{key or 'rule'}: {message}", *(_lc(doc.position(key))))
    if doc.data["id"] != path.stem:
        raise RuleError(file, f"id '{doc.data['id']}' differs from the file name '{path.stem}'",
                        *(_lc(doc.position("id"))))
    return doc


def _params(data: dict[str, Any], c: _Compiler) -> dict[str, Param]:
    params: dict[str, Param] = {}
    for name, spec in (data.get("parameters") or {}).items():
        where = f"parameters.{name}"
        kind_name = spec.get("kind")
        if kind_name is not None and kind_name not in units.KINDS:
            raise c.error(where, f"{where}: unknown kind '{kind_name}'", where + ".kind")
        if name in _RESERVED:
            raise c.error(where, f"{where}: '{name}' is a reserved name")
        default = spec["default"]
        param = Param(name, None, kind_name, spec["description"], spec.get("minimum"), spec.get("maximum"),
                      str(default))
        if not isinstance(default, bool):
            try:
                default = param.parse(default)
            except ValueError as exc:
                raise c.error(where, f"{where}.default: {exc}", where + ".default") from None
        params[name] = Param(name, default, kind_name, spec["description"], spec.get("minimum"), spec.get("maximum"),
                             str(spec["default"]))
    return params


def _values(data: dict[str, Any], params: dict[str, Param],
            c: _Compiler) -> list[tuple[str, Callable[..., Any], str, str]]:
    values = []
    for name, spec in (data.get("values") or {}).items():
        where = f"values.{name}"
        if name in _RESERVED or name in params:
            raise c.error(where, f"{where}: '{name}' is a reserved or parameter name")
        if not isinstance(spec, dict) or not isinstance(spec.get("kind"), str):  # (files not schema-checked)
            raise c.error(where, f"{where}: a value is {{expr: ..., kind: ...}}; declare its kind")
        text, kind_name = spec["expr"], spec["kind"]
        if kind_name not in VALUE_KINDS:
            raise c.error(where, f"{where}: unknown kind '{kind_name}'")
        values.append((name, c.expression(text, where), text, kind_name))
    return values


def _checks(data: dict[str, Any], c: _Compiler) -> list[Check]:
    checks = []
    for i, spec in enumerate(data["checks"]):
        where = f"checks[{i}]"
        message = c.optional_template(spec, "message", f"{where}.message")
        fix = c.optional_template(spec, "fix", f"{where}.fix")
        skip = spec.get("outcome") == "not-applicable"
        if not skip and spec.get("severity") not in ("error", "warning", "info"):  # (files not schema-checked)
            raise c.error(where, f"{where}: a check gives a severity (error, warning, info) "
                                 "or 'outcome: not-applicable'")
        checks.append(Check(c.expression(spec["when"], where + ".when"), spec["when"], spec.get("severity", "info"),
                            message, c.doc.position(where + ".when"), fix, skip,
                            location_paths(spec.get("location"), c, where + ".location")))
    return checks


def location_paths(value: Any, c: _Compiler, where: str) -> tuple[str, ...]:
    """Return a ``location`` as its candidate paths (a path, or a list of them; none when not given)."""
    if value is None or value == "":
        return ()
    paths = (value,) if isinstance(value, str) else tuple(value) if isinstance(value, list) else None
    if paths is None or not all(isinstance(p, str) and p for p in paths):  # (files not schema-checked)
        raise c.error(where, f"{where}: a location is a spec key path or a list of them")
    return paths


def load_rule_file(path: Path, validate: bool = True, cache: expr.CompileCache | None = None) -> Rule:
    """Return the compiled rule in ``path``; raise :class:`RuleError` naming file and line.

    ``validate=False`` skips the rule-schema check for files whose exact bytes were validated and
    linted before (the caller matched their digest); everything else is still checked. ``cache``: the
    run's :class:`expr.CompileCache`.
    """
    doc = _read_rule_document(path, validate)
    data = doc.data
    c = _Compiler(str(path), doc, cache)
    params = _params(data, c)
    values = _values(data, params, c)
    checks = _checks(data, c)
    applies_text = data.get("applies_when", "")
    applies = c.expression(applies_text, "applies_when") if applies_text else None
    locations = location_paths(data.get("location"), c, "location")
    limit = data.get("limit")
    if limit and limit not in params and limit not in {v[0] for v in values}:
        raise c.error("limit", f"limit '{limit}' is neither a parameter nor a value")
    return Rule(
        id=data["id"],
        file=str(path),
        title=data["title"],
        topic=data["topic"],
        severity=data["severity"],
        safety=bool(data.get("safety", False)),
        description=data["description"],
        basis=data["basis"],
        aliases=list(data.get("aliases") or []),
        params=params,
        applies_when=applies,
        applies_text=applies_text,
        values=values,
        checks=checks,
        message=c.template(data["message"], "message"),
        pass_message=c.optional_template(data, "pass_message", "pass_message"),
        fix=c.template(data["fix"], "fix"),
        formula=data.get("formula", ""),
        location=locations[0] if locations else "",
        limit=data.get("limit", ""),
        examples=data["examples"],
        raw=data,
        doc=doc,
        scope=" ".join(str(data.get("scope", "")).split()),
        locations=locations,
    )


def rule_files(folder: Path) -> list[Path]:
    """Return the rule files of a folder in stable order (``*.yaml``, not recursive)."""
    return sorted(p for p in folder.glob("*.yaml") if p.is_file() and not p.is_symlink())


def rules_digest(folders: list[Path]) -> str:
    """Return a digest of the rule files of ``folders`` (names and bytes), without compiling them."""
    digest = hashlib.sha256()
    for folder in folders:
        digest.update(b"folder\0")  # folder boundaries count; their location on this machine does not
        if folder.is_dir():
            for path in rule_files(folder):
                try:
                    if path.stat().st_size > MAX_RULE_FILE_BYTES:
                        digest.update(path.name.encode() + b"\0too-large")  # refused when loaded; never read whole
                        continue
                    digest.update(path.name.encode() + b"\0" + hashlib.sha256(path.read_bytes()).digest())
                except OSError:
                    digest.update(path.name.encode() + b"\0unreadable")
    return "sha256:" + digest.hexdigest()


def load_rules(folders: list[Path], disabled: set[str] | None = None, validate: bool = True,
               cache: expr.CompileCache | None = None) -> tuple[RuleSet, list[RuleError]]:
    """Return the rules of ``folders`` (errors collected, not raised) with ids unique across folders.

    ``cache``: the :class:`expr.CompileCache` to compile with (none: a new one, kept on the rule set)."""
    if cache is None:
        cache = expr.CompileCache()
    rules: dict[str, Rule] = {}
    aliases: dict[str, str] = {}
    errors: list[RuleError] = []
    for folder in folders:
        if not folder.is_dir():
            errors.append(RuleError(str(folder), "rule folder does not exist"))
            continue
        for path in sorted(folder.glob("*.yaml")):
            if path.is_symlink():  # rule_files leaves links out; a link in a pull request must not pass unseen
                errors.append(RuleError(str(path), "a rule file must be a regular file, not a symbolic link"))
        for path in rule_files(folder):
            try:
                rule = load_rule_file(path, validate, cache)
            except RuleError as exc:
                errors.append(exc)
                continue
            if rule.id in rules or rule.id in aliases:
                errors.append(RuleError(str(path), f"rule id '{rule.id}' is already defined in {rules[rule.id].file}"
                                        if rule.id in rules else f"rule id '{rule.id}' is an alias of another rule"))
                continue
            for alias in rule.aliases:
                if alias in rules or alias in aliases:
                    errors.append(RuleError(str(path), f"alias '{alias}' is already used"))
                aliases[alias] = rule.id
            rules[rule.id] = rule
    for rule_id in list(disabled or ()):
        rules.pop(rule_id, None)
    return RuleSet(dict(sorted(rules.items())), aliases, rules_digest(folders), cache), errors
