"""The one provenance helper of the derive stage, and what a derive step reads from the spec.

Every derived value goes into the model through :func:`put` (or :func:`default` for a stated default):
its kind comes from the catalogue, never from the caller, and a value that is missing or not finite is
left out, so the rule that needs it reports ``not-checked`` instead of working on a number that is not one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from rulecheck.derive.catalogue import CATALOGUE
from rulecheck.model import Model
from rulecheck.schema import Quantities

__all__ = ["Spec", "default", "put"]


@dataclass(frozen=True)
class Spec:
    """What a derive step reads besides the model: the loaded document's data (choices, labels, file names),
    the spec's quantities already parsed to SI (list items too: ``load.duty[2].torque``), the spec's folder."""

    data: dict[str, Any]
    quantities: Quantities
    base: Path | None = None

    def quantity(self, path: str) -> float | None:
        """Return the parsed SI value of a quantity field (list items included), or None."""
        return self.quantities.values.get(path)

    def items(self, section: str, name: str) -> list[Any]:
        """Return the list ``data[section][name]`` (empty when absent or not a list)."""
        value = (self.data.get(section) or {}).get(name) if isinstance(self.data.get(section), dict) else None
        return value if isinstance(value, list) else []


def put(m: Model, path: str, value: Any, method: str, inputs: tuple[str, ...] = (), note: str = "",
        source: str = "derived") -> None:
    """Record a derived value with its provenance (the kind from the catalogue); skip None and non-finite floats.

    A given value is never overwritten (:meth:`Model.derive`); a derived one may be, by a later step that
    knows more.
    """
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return
    m.derive(path, value, CATALOGUE[path][0], method, inputs, note, source)


def default(m: Model, path: str, value: Any, note: str) -> None:
    """Record a stated default (common practice or a standard's value) for a value the spec does not give."""
    put(m, path, value, "default", (), note, source="default")
