"""Model values read by their whole dotted path give what walking the sections gives.

Translated expressions read ``motor.brake.static_torque`` with one look-up among the spec's names,
where ``expr.sections_from`` puts each value under its path, and walk the sections otherwise
(rulecheck.engine.compiler). Both ways must give the same value, the same missing input and the
same section, whatever the order of the values and wherever a value sits where a section would go.
"""

from __future__ import annotations

import random
from typing import Any

import pytest

from rulecheck.engine import expr
from rulecheck.engine.ruleset import environment

ENV = environment()
NAMES = ["motor", "load", "brake", "torque", "speed"]


def _walk(sections: dict[str, Any], path: str) -> Any:
    head, *rest = path.split(".")
    node = sections.get(head)
    for part in rest:
        if not isinstance(node, expr.Section):
            return ("not a section", node)
        node = getattr(node, part)
    return node


def _result(compiled: Any, parent: dict[str, Any]) -> tuple[str, Any]:
    try:
        return "value", expr.run(compiled, {}, parent)
    except expr.MissingInput as exc:
        return "missing", exc.paths
    except expr.ExpressionError as exc:
        return "error", str(exc)


def _random_items(rng: random.Random) -> list[tuple[str, Any]]:
    items = []
    for _ in range(rng.randint(1, 10)):
        path = ".".join(rng.choice(NAMES) for _ in range(rng.randint(1, 4)))
        items.append((path, rng.choice([rng.uniform(-10, 10), "text", True, [1.0, 2.0]])))
    return items


@pytest.mark.parametrize("seed", range(40))
def test_a_value_under_its_path_is_the_value_the_sections_hold(seed: int) -> None:
    rng = random.Random(seed)
    items = [("motor.rated_torque", 49.2)] + _random_items(rng)
    sections = expr.sections_from(items)
    assert sections.paths, "each value below a section is kept under its path"
    for path, value in sections.paths.items():
        assert _walk(sections, path) is value


@pytest.mark.parametrize("seed", range(40))
def test_an_expression_reads_the_same_with_and_without_the_paths(seed: int) -> None:
    rng = random.Random(1000 + seed)
    sections = expr.sections_from(_random_items(rng))
    with_paths = expr.spec_parent(ENV, sections)
    walking = expr.spec_parent(ENV, dict(sections))  # a plain mapping: no paths, every read walks
    assert len(with_paths) > len(walking) or not sections.paths
    for _ in range(25):
        root = rng.choice(["motor", "load"])
        text = ".".join([root] + [rng.choice(NAMES) for _ in range(rng.randint(1, 3))])
        compiled = expr.compile_expression(ENV, text)
        assert _result(compiled, with_paths) == _result(compiled, walking), text


def test_a_value_where_a_section_would_go_blocks_the_section_either_way() -> None:
    # the first one wins: a value is never replaced by a section, nor a section by a value
    sections = expr.sections_from([("motor.brake", 5.0), ("motor.brake.static_torque", 80.0)])
    assert sections.paths == {"motor.brake": 5.0}
    sections = expr.sections_from([("motor.brake.static_torque", 80.0), ("motor.brake", 5.0)])
    assert sections.paths == {"motor.brake.static_torque": 80.0}
    assert isinstance(sections["motor"].brake, expr.Section)


def test_the_translation_reads_a_whole_path_in_one_look_up() -> None:
    compiled = expr.compile_expression(ENV, "motor.brake.static_torque * 2")
    parent = {"motor.brake.static_torque": 40.0}  # no sections at all: only the path is there to read
    assert expr.run(compiled, {}, expr.Names(parent)) == 80.0
