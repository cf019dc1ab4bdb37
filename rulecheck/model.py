"""The drive-train model: every value of a spec, given or derived, with its provenance.

Values are stored by key path (``motor.rated_torque``) as plain Python values:
quantities as floats in their kind's internal SI unit (shaft speed in rad/s),
flags as booleans, choices as strings, counts as integers. Derived values say
how they were obtained, so a report can write "49.22 N·m — derived from rated
power and rated speed".
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, NamedTuple

__all__ = ["Derivation", "Model"]


class Derivation(NamedTuple):
    """How a value was obtained: ``given``, ``derived`` by a method from inputs, or a ``default``."""

    source: str  # given | derived | default
    method: str = ""
    inputs: tuple[str, ...] = ()
    note: str = ""

    def describe(self) -> str:
        """Return the provenance in words: ``rated_power ÷ rated_speed (torque_from_power)``."""
        if self.source == "given":
            return "given"
        text = self.note or (", ".join(self.inputs) if self.inputs else "")
        if self.source == "default":
            return f"default: {text}" if text else "default"
        return text or self.method


GIVEN = Derivation("given")


@dataclass
class Model:
    """All values of one drive train by key path, with kinds and provenance."""

    values: dict[str, Any] = field(default_factory=dict)
    kinds: dict[str, str] = field(default_factory=dict)
    provenance: dict[str, Derivation] = field(default_factory=dict)
    lists: dict[str, list[Any]] = field(default_factory=dict)  # e.g. load.duty segments, load.points
    notes: list[str] = field(default_factory=list)
    functions: dict[str, Any] = field(default_factory=dict)  # e.g. the load torque T_L(ω) for sweeps and charts

    def given(self, path: str, value: Any, kind_name: str | None = None) -> None:
        """Record a value the spec gives."""
        self.values[path] = value
        if kind_name:
            self.kinds[path] = kind_name
        self.provenance[path] = GIVEN

    def derive(self, path: str, value: Any, kind_name: str | None, method: str, inputs: tuple[str, ...] = (),
               note: str = "", source: str = "derived") -> None:
        """Record a derived (or defaulted) value; a given value at ``path`` is never overwritten."""
        if path in self.values and self.provenance.get(path, GIVEN).source == "given":
            return
        if value is None:
            return
        self.values[path] = value
        if kind_name:
            self.kinds[path] = kind_name
        self.provenance[path] = Derivation(source, method, inputs, note)

    def get(self, path: str, default: Any = None) -> Any:
        """Return the value at ``path`` or ``default``."""
        return self.values.get(path, default)

    def has(self, *paths: str) -> bool:
        """Return whether every one of ``paths`` has a value."""
        return all(p in self.values for p in paths)
