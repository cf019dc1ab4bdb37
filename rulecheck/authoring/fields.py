"""Which spec fields the rules read for one motor kind, starter and load model.

Nothing here is a hand-kept list of fields: the answer is worked out from the rule files, the
spec schema and the derive stage, so it stays true as rules change.

1. Every expression of every rule (``applies_when``, ``values``, ``checks[].when``) is parsed with
   jinja's parser (the grammar rule authors write) and the dotted model paths it reads are collected.
2. ``applies_when`` is evaluated in three-valued logic (yes / no / not known) with what the choice fixes
   (motor kind, drive kind, load model, machine type) and the derived values that the choice alone
   decides. A rule that cannot apply is dropped; one that surely applies is *core*; one that applies
   only when some optional input is given (a cable length, a hazardous area) is *optional*.
3. A derived path a rule reads is followed back, through the provenance the derive stage records, to the
   spec fields it is computed from (a model is built from a spec with every candidate field filled in).
4. Fields whose schema description is scoped to another machine (``Induction:``, ``DC converter:``,
   ``hoist:`` …) are left out.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any

import yaml

from rulecheck.schema import spec_schema

__all__ = ["Choice", "Field", "FieldSet", "LOADS", "MOTORS", "STARTERS", "fields_for", "schema_fields"]

from rulecheck.authoring.words import LOADS, MOTORS, STARTERS  # noqa: E402

# words that scope a schema description ("Induction: …", "DC converter: …", "hoist/conveyor: …")
_SCOPE_WORDS = {
    "induction": ("motor.kind", "induction"), "pm": ("motor.kind", "pm-synchronous"),
    "servo": ("motor.kind", "pm-synchronous"), "pm drives": ("motor.kind", "pm-synchronous"),
    "dc": ("motor.kind", "dc"), "dc converter": ("drive.kind", "dc-converter"),
    "winder": ("load.model", "constant-power"),
}
_SECTIONS = ("supply", "drive", "motor", "transmission", "load", "environment", "cable", "protection",
             "train", "duty", "site")


@dataclass(frozen=True)
class Choice:
    """What the user chose: spec values for motor kind, drive kind, load model (and machine type)."""

    motor: str
    starter: str
    load: str

    @property
    def facts(self) -> dict[str, Any]:
        """Spec paths the choice fixes, with their values."""
        model, pump_type, _words = LOADS[self.load]
        out = {"motor.kind": MOTORS[self.motor], "drive.kind": STARTERS[self.starter], "load.model": model}
        if pump_type:
            out["load.pump_type"] = pump_type
        return out

    def problem(self) -> str | None:
        """Return why the combination is not a drive train, or None."""
        motor, drive = MOTORS[self.motor], STARTERS[self.starter]
        if (motor == "dc") != (drive == "dc-converter"):
            return "a DC motor runs on a DC converter, and a DC converter feeds a DC motor"
        if motor == "pm-synchronous" and drive != "inverter":
            return "a permanent-magnet synchronous motor needs an inverter (it cannot start on the line)"
        return None


@dataclass(frozen=True)
class Field:
    """A spec field: key path, schema node (resolved), and its place in a template."""

    path: str
    node: dict[str, Any]
    rules: tuple[str, ...] = ()  # ids of the rules that read it (directly or through a derived value)

    @property
    def description(self) -> str:
        return str(self.node.get("description", "")).strip()


@dataclass
class FieldSet:
    """The fields of a template: core (read by rules that apply), optional (read by rules that apply only
    when an optional input is given) and derived (computed when absent)."""

    core: dict[str, Field] = field(default_factory=dict)
    optional: dict[str, Field] = field(default_factory=dict)
    derived: dict[str, Field] = field(default_factory=dict)
    rules_core: list[str] = field(default_factory=list)
    rules_optional: list[str] = field(default_factory=list)
    rules_dropped: list[str] = field(default_factory=list)


# ---------------------------------------------------------------------------------------------- schema


def _resolve(node: dict[str, Any]) -> dict[str, Any]:
    seen = 0
    while isinstance(node, dict) and "$ref" in node and seen < 10:
        target: Any = spec_schema()
        for part in node["$ref"].lstrip("#/").split("/"):
            target = target[part]
        node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        seen += 1
    return node


@lru_cache(maxsize=1)
def schema_fields() -> dict[str, dict[str, Any]]:
    """Return every leaf field of the spec schema (and every list of mappings) by dotted path."""
    out: dict[str, dict[str, Any]] = {}
    _walk_schema(spec_schema(), "", out)
    return out


def _walk_schema(node: dict[str, Any], path: str, out: dict[str, dict[str, Any]]) -> None:
    node = _resolve(node)
    if node.get("type") == "object" and "properties" in node and "x-dimension" not in node:
        for key, sub in node["properties"].items():
            _walk_schema(sub, f"{path}.{key}" if path else key, out)
        return
    if path:
        out[path] = node


def parent_required(path: str) -> bool:
    """Return whether ``path`` is required by its parent mapping (``motor.kind``, ``load.model``)."""
    parts = path.split(".")
    node: dict[str, Any] = _resolve(spec_schema())
    for part in parts[:-1]:
        node = _resolve(node.get("properties", {}).get(part, {}))
    return parts[-1] in node.get("required", [])


def _scope(path: str, node: dict[str, Any]) -> list[tuple[str, str]] | None:
    """Return the (path, value) pairs a field's description scopes it to, or None when it is general."""
    # "conveyor: belt and material; hoist: payload and hook." scopes to both machines
    pairs: list[tuple[str, str]] = []
    for segment in str(node.get("description", "")).split(";"):
        head, sep, _rest = segment.partition(":")
        if not sep or len(head) > 40:
            if not pairs:
                return None
            continue
        found = _scope_words(head)
        if found is None:
            if not pairs:
                return None  # not a scope ("Positioning axes: …" names no machine): a general field
            continue
        pairs += found
    return pairs or None


def _scope_words(head: str) -> list[tuple[str, str]] | None:
    head = re.sub(r"\([^)]*\)", "", head).strip().lower()
    models = set(_resolve(spec_schema()["$defs"]["load"])["properties"]["model"]["enum"])
    pairs: list[tuple[str, str]] = []
    for word in re.split(r"\s*[,/]\s*", head):
        if word in _SCOPE_WORDS:
            pairs.append(_SCOPE_WORDS[word])
        elif word in models:
            pairs.append(("load.model", word))
        else:
            return None
    return pairs


def in_scope(path: str, node: dict[str, Any], facts: dict[str, Any]) -> bool:
    """Return whether a field applies to the chosen machines (by its description's scope words)."""
    pairs = _scope(path, node)
    if pairs is None:
        return True
    by_path: dict[str, set[str]] = {}
    for p, v in pairs:
        by_path.setdefault(p, set()).add(v)
    return all(facts.get(p) in values for p, values in by_path.items())


# ---------------------------------------------------------------------------------------------- rules


@dataclass(frozen=True)
class RuleReads:
    """What one rule file reads: its id, the parsed ``applies_when`` and every model path of its expressions."""

    id: str
    title: str
    applies: Any  # jinja node or None
    paths: frozenset[str]


def _rules_dir() -> Path:
    from rulecheck.engine.ruleset import shipped_rules_dir

    return shipped_rules_dir()


@lru_cache(maxsize=4)
def rule_reads(folder: str | None = None) -> tuple[RuleReads, ...]:
    """Return what each rule file of ``folder`` (default: the shipped rules) reads."""
    from jinja2 import Environment

    env = Environment()
    out = []
    for path in sorted(Path(folder or _rules_dir()).glob("*.yaml")):
        raw = yaml.safe_load(path.read_text(encoding="utf-8"))
        if not isinstance(raw, dict):
            continue
        texts = [raw.get("applies_when")]
        for value in (raw.get("values") or {}).values():
            texts.append(value.get("expr") if isinstance(value, dict) else value)
        texts += [c.get("when") for c in raw.get("checks") or [] if isinstance(c, dict)]
        paths: set[str] = set()
        for text in texts:
            if isinstance(text, str):
                paths |= _paths_in(_parse(env, text))
        applies = _parse(env, raw["applies_when"]) if isinstance(raw.get("applies_when"), str) else None
        out.append(RuleReads(str(raw.get("id", path.stem)), str(raw.get("title", "")), applies, frozenset(paths)))
    return tuple(out)


def _parse(env: Any, text: str) -> Any:
    """Return the jinja expression node of ``text``."""
    return env.parse("{{ (" + text + ") }}").body[0].nodes[0]


def _dotted(node: Any) -> str | None:
    from jinja2 import nodes

    parts = []
    while isinstance(node, nodes.Getattr):
        parts.append(node.attr)
        node = node.node
    if isinstance(node, nodes.Name) and node.name in _SECTIONS and parts:
        return ".".join([node.name, *reversed(parts)])
    return None


def _paths_in(tree: Any) -> set[str]:
    from jinja2 import nodes

    found: set[str] = set()
    for node in [tree, *tree.find_all(nodes.Getattr)]:
        path = _dotted(node)
        if path is not None:
            found.add(path)
    # keep only the longest paths (``motor.brake.kind`` rather than ``motor.brake``)
    return {p for p in found if not any(q.startswith(p + ".") for q in found)}


# three-valued logic: True, False, or None (not known)


def evaluate(node: Any, known: dict[str, Any], closed: bool = False) -> Any:
    """Return True, False or None (not known) for a rule's ``applies_when`` with the ``known`` paths.

    Only the forms a condition on the choice needs are followed (and, or, not, comparisons with constants,
    ``is defined``); anything else is not known, which keeps a rule rather than drops it. ``closed``: every
    value there is is in ``known`` (a path missing from it is not defined)."""
    from jinja2 import nodes

    if isinstance(node, nodes.And):
        left, right = evaluate(node.left, known, closed), evaluate(node.right, known, closed)
        return False if left is False or right is False else (True if left and right else None)
    if isinstance(node, nodes.Or):
        left, right = evaluate(node.left, known, closed), evaluate(node.right, known, closed)
        return True if left is True or right is True else (False if left is False and right is False else None)
    if isinstance(node, nodes.Not):
        inner = evaluate(node.node, known, closed)
        return None if inner is None else not inner
    if isinstance(node, nodes.Test) and node.name in ("defined", "undefined"):
        path = _dotted(node.node)
        if path is None or (path not in known and not closed):
            return None
        defined = known.get(path) is not None
        return defined if node.name == "defined" else not defined
    if isinstance(node, nodes.Compare) and len(node.ops) == 1:
        return _compare(node, known)
    path = _dotted(node)
    if path is not None and path in known and isinstance(known[path], bool):
        return known[path]
    return None


def _compare(node: Any, known: dict[str, Any]) -> Any:
    left = _value(node.expr, known)
    right = _value(node.ops[0].expr, known)
    if left is _UNKNOWN or right is _UNKNOWN:
        return None
    op = node.ops[0].op
    try:
        if op == "eq":
            return left == right
        if op == "ne":
            return left != right
        if op == "in":
            return left in right
        if op == "notin":
            return left not in right
        if op in _ORDER and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in (left, right)):
            return _ORDER[op](left, right)
    except TypeError:
        return None
    return None


_UNKNOWN = object()
_ORDER = {"gt": lambda a, b: a > b, "lt": lambda a, b: a < b, "gteq": lambda a, b: a >= b, "lteq": lambda a, b: a <= b}


def _value(node: Any, known: dict[str, Any]) -> Any:
    from jinja2 import nodes

    if isinstance(node, nodes.Const):
        return node.value
    if isinstance(node, (nodes.List, nodes.Tuple)):
        items = [_value(i, known) for i in node.items]
        return _UNKNOWN if any(i is _UNKNOWN for i in items) else items
    path = _dotted(node)
    if path is not None and path in known:
        return known[path]
    return _UNKNOWN


# ---------------------------------------------------------------------------------------------- derive


def _provenance(spec: dict[str, Any]) -> tuple[dict[str, tuple[str, ...]], dict[str, Any]]:
    """Return (derived path → its inputs, every model value) of the model built from ``spec``."""
    import warnings

    from rulecheck.derive import build_model
    from rulecheck.load import load_text
    from rulecheck.schema import read_quantities

    doc = load_text(yaml.safe_dump(spec, sort_keys=False, allow_unicode=True), "<template>")
    quantities, _problems = read_quantities(doc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # example values may make a derivation meaningless; only links matter
        model = build_model(doc, quantities)
    inputs = {p: tuple(d.inputs) for p, d in model.provenance.items() if d.source == "derived"}
    return inputs, dict(model.values)


def nest(flat: dict[str, Any]) -> dict[str, Any]:
    """Return a flat mapping of dotted paths nested by their parts."""
    out: dict[str, Any] = {}
    for path, value in flat.items():
        node = out
        parts = path.split(".")
        for part in parts[:-1]:
            node = node.setdefault(part, {})
        node[parts[-1]] = value
    return out


def _follow(path: str, inputs: dict[str, tuple[str, ...]], fields: dict[str, Any], seen: set[str]) -> set[str]:
    """Return the spec fields ``path`` is computed from (itself, if it is a field that is not derived)."""
    if path in seen:
        return set()
    seen.add(path)
    if path in inputs:
        out: set[str] = set()
        for source in inputs[path]:
            out |= _follow(source, inputs, fields, seen)
        return out
    return {path} if path in fields else set()


def _model_links(facts: dict[str, Any], candidates: dict[str, dict[str, Any]], examples: dict[str, Any],
                 lists: bool) -> tuple[dict[str, tuple[str, ...]], dict[str, Any]]:
    """Return (derived path → inputs, values) of a model built with every candidate field given its example.

    Fields that are derived when absent stay out while the derive stage computes them from inputs; those it
    does not (a default, or nothing) are given their example, until that settles. Without ``lists``, lists
    (duty cycle, measured voltages) stay out, so derived values follow their plain inputs (an acceleration
    time rather than a duty cycle)."""
    from rulecheck.derive import DERIVED

    full = {"format": 1, "tag": "T-1", **facts}
    for path in candidates:
        if path in examples and (lists or not isinstance(examples[path], list) or path in _MODEL_LISTS):
            full[path] = examples[path]
    left_out = {p for p in candidates if p in DERIVED}
    inputs: dict[str, tuple[str, ...]] = {}
    values: dict[str, Any] = {}
    for _round in range(4):
        inputs, values = _provenance(nest({p: v for p, v in full.items() if p not in left_out}))
        settled = {p for p in left_out if inputs.get(p)}
        if settled == left_out:
            break
        left_out = settled
    return inputs, values


_MODEL_LISTS = ("load.points",)  # a list that is the load model itself, not a refinement


def fields_for(choice: Choice, examples: dict[str, Any], rules_folder: str | None = None) -> FieldSet:
    """Return the fields a spec for ``choice`` needs so that the rules that apply to it can be checked.

    ``examples`` gives each field's example value (spec form), used to build the models whose
    provenance links derived values to the fields they come from."""
    from rulecheck.derive import DERIVED

    facts = choice.facts
    candidates = {p: n for p, n in schema_fields().items()
                  if in_scope(p, n, facts) and p not in facts and not p.startswith(("margins", "waivers"))}
    plain, plain_values = _model_links(facts, candidates, examples, lists=False)
    with_lists, _values = _model_links(facts, candidates, examples, lists=True)
    _bare_inputs, bare_values = _provenance(nest({"format": 1, "tag": "T-1", **facts}))
    # derived values the choice alone decides: the same with no inputs and with every input given
    known: dict[str, Any] = dict(facts)
    for path, value in bare_values.items():
        if path in DERIVED and path in plain_values and plain_values[path] == value:
            known[path] = value
    result = FieldSet()
    for rule in rule_reads(rules_folder):
        applies = True if rule.applies is None else evaluate(rule.applies, known)
        if applies is False:
            result.rules_dropped.append(rule.id)
            continue
        (result.rules_core if applies else result.rules_optional).append(rule.id)
        reads = set(rule.paths) | (_paths_in(rule.applies) if rule.applies is not None else set())
        for read in sorted(reads - set(facts)):
            if read in candidates and (read in plain or read in with_lists):
                result.derived.setdefault(read, Field(read, candidates[read]))
            core = _follow(read, plain, candidates, set()) if applies else set()
            more = _follow(read, {**with_lists, **plain}, candidates, set()) - core
            _add(result.core, core - set(facts), candidates, rule.id)
            _add(result.optional, more - set(facts), candidates, rule.id)
    _promote(result, rules_folder, facts, candidates, examples, plain)
    for path in list(result.optional):
        if path in result.core:
            old = result.core[path]
            result.core[path] = Field(path, old.node, old.rules + tuple(r for r in result.optional.pop(path).rules
                                                                        if r not in old.rules))
    for path in [p for p, f in result.core.items() if f.node.get("type") == "array" and p not in _MODEL_LISTS]:
        result.optional[path] = result.core.pop(path)  # a duty cycle or measured values refine; they are not asked
    for path in result.derived:
        result.core.pop(path, None)
        result.optional.pop(path, None)
    return result


def _add(target: dict[str, Field], paths: set[str], candidates: dict[str, dict[str, Any]], rule_id: str) -> None:
    for path in sorted(paths):
        old = target.get(path)
        target[path] = Field(path, candidates[path], (*(old.rules if old else ()), rule_id))


def _promote(result: FieldSet, rules_folder: str | None, facts: dict[str, Any], candidates: dict[str, Any],
             examples: dict[str, Any], links: dict[str, tuple[str, ...]]) -> None:
    """Make core the optional rules that apply to the example drive train the core fields describe (an
    inclined conveyor is under gravity: its holding-brake rule applies), until no more do."""
    rules = {r.id: r for r in rule_reads(rules_folder)}
    for _round in range(4):
        given = {p: examples[p] for p in result.core if p in examples and not isinstance(examples[p], list)}
        _inputs, values = _provenance(nest({"format": 1, "tag": "T-1", **facts, **given}))
        promoted = [r for r in result.rules_optional
                    if rules[r].applies is not None and evaluate(rules[r].applies, values, closed=True) is True]
        if not promoted:
            return
        for rule_id in promoted:
            rule = rules[rule_id]
            result.rules_optional.remove(rule_id)
            result.rules_core.append(rule_id)
            for read in sorted(set(rule.paths) | _paths_in(rule.applies)):
                _add(result.core, _follow(read, links, candidates, set()) - set(facts), candidates, rule_id)
