"""A quantity that carries only its dimension: the dimensional lint's first pass, without pint.

The lint (rulecheck.engine.lint) evaluates every rule expression once on sample values, one per
model input, to find what each named value is (a torque, a speed...) and to refuse expressions that
add a torque to a speed. pint does this exactly, but importing it and building its unit registry
costs a third of a second, on every run whose cache is empty. :class:`Dim` does the same arithmetic
on a vector of base-dimension exponents and does nothing else: any operation it is not sure of
(mixed dimensions, an unknown operand, a conversion pint would refuse) raises :class:`Unsure`, and
the lint then checks that rule again with pint, which finds the problem and words it. So a rule
that passes here is one whose every operation keeps its dimensions, as pint would have found.

Base dimensions are pint's: the radian is dimensionless (so rad/s and Hz are both 1/s), and a
temperature is a kelvin temperature.
"""

from __future__ import annotations

import math
import re
from typing import Any

__all__ = ["Dim", "Unsure", "dims_of_unit"]

# length, mass, time, current, temperature
_BASE = {"m": (1, 0, 0, 0, 0), "kg": (0, 1, 0, 0, 0), "s": (0, 0, 1, 0, 0), "A": (0, 0, 0, 1, 0),
         "K": (0, 0, 0, 0, 1), "rad": (0, 0, 0, 0, 0)}
_DERIVED = {"N": "kg*m/s^2", "J": "N*m", "W": "J/s", "V": "W/A", "ohm": "V/A", "H": "V*s/A", "F": "A*s/V",
            "Hz": "1/s"}
_NONE = (0, 0, 0, 0, 0)
_TOKEN = re.compile(r"([A-Za-z]+|1)(?:\^(-?\d+))?")


class Unsure(Exception):
    """An operation whose outcome this pass does not decide: the rule is checked again with pint."""


def dims_of_unit(text: str) -> tuple[float, ...]:
    """Return the base-dimension exponents of an SI unit written as the kinds write theirs (``kg*m^2``,
    ``V*s/rad``, ``N*m/A``, ``1``); raise Unsure for any other word."""
    total = [0.0] * 5
    sign = 1
    for index, part in enumerate(re.split(r"([*/])", text.replace(" ", ""))):
        if index % 2:
            sign = 1 if part == "*" else -1
            continue
        match = _TOKEN.fullmatch(part)
        if not match:
            raise Unsure(f"unit {text!r}")
        name, power = match.group(1), int(match.group(2) or 1)
        if name == "1":
            continue
        if name in _BASE:
            dims: tuple[float, ...] = _BASE[name]
        elif name in _DERIVED:
            dims = dims_of_unit(_DERIVED[name])
        else:
            raise Unsure(f"unit {text!r}")
        for k in range(5):
            total[k] += sign * power * dims[k]
    return tuple(total)


def _same(a: tuple[float, ...], b: tuple[float, ...]) -> bool:
    return all(math.isclose(x, y, abs_tol=1e-12) for x, y in zip(a, b, strict=True))


def _plain(value: Any) -> bool:
    return type(value) in (int, float)


class Dim:
    """A magnitude with base-dimension exponents; the arithmetic of quantities, and nothing else."""

    __slots__ = ("magnitude", "dims")

    def __init__(self, magnitude: float, dims: tuple[float, ...]) -> None:
        self.magnitude = float(magnitude)
        self.dims = tuple(0.0 if abs(d) < 1e-12 else float(d) for d in dims)

    # what the lint and the kinds read
    @property
    def dimensionality(self) -> tuple[float, ...]:
        return self.dims

    @property
    def dimensionless(self) -> bool:
        return not any(self.dims)

    def _like(self, other: Any) -> Dim:
        """Return ``other`` as a quantity of this one's dimension, for adding and comparing."""
        if isinstance(other, Dim):
            if _same(self.dims, other.dims):
                return other
            raise Unsure("dimensions differ")
        if _plain(other) and (self.dimensionless or other == 0):
            return Dim(other, self.dims)  # zero goes with any dimension, as pint lets it
        raise Unsure(f"operand {type(other).__name__}")

    def __add__(self, other: Any) -> Dim:
        return Dim(self.magnitude + self._like(other).magnitude, self.dims)

    __radd__ = __add__

    def __sub__(self, other: Any) -> Dim:
        return Dim(self.magnitude - self._like(other).magnitude, self.dims)

    def __rsub__(self, other: Any) -> Dim:
        return Dim(self._like(other).magnitude - self.magnitude, self.dims)

    def __mul__(self, other: Any) -> Dim:
        if isinstance(other, Dim):
            dims = tuple(a + b for a, b in zip(self.dims, other.dims, strict=True))
            return Dim(self.magnitude * other.magnitude, dims)
        if _plain(other):
            return Dim(self.magnitude * other, self.dims)
        raise Unsure(f"operand {type(other).__name__}")

    __rmul__ = __mul__

    def __truediv__(self, other: Any) -> Dim:
        if isinstance(other, Dim):
            dims = tuple(a - b for a, b in zip(self.dims, other.dims, strict=True))
            return Dim(self.magnitude / other.magnitude, dims)
        if _plain(other):
            return Dim(self.magnitude / other, self.dims)
        raise Unsure(f"operand {type(other).__name__}")

    def __rtruediv__(self, other: Any) -> Dim:
        if _plain(other):
            return Dim(other / self.magnitude, tuple(-a for a in self.dims))
        raise Unsure(f"operand {type(other).__name__}")

    def __pow__(self, other: Any) -> Dim:
        exponent = other.magnitude if isinstance(other, Dim) and other.dimensionless else other
        if not _plain(exponent):
            raise Unsure("exponent")
        return Dim(self.magnitude ** exponent, tuple(a * exponent for a in self.dims))

    def __rpow__(self, other: Any) -> float:
        if _plain(other) and self.dimensionless:
            return float(other ** self.magnitude)
        raise Unsure("exponent")

    def __neg__(self) -> Dim:
        return Dim(-self.magnitude, self.dims)

    def __pos__(self) -> Dim:
        return self

    def __abs__(self) -> Dim:
        return Dim(abs(self.magnitude), self.dims)

    def __round__(self, digits: int | None = None) -> Dim:
        return Dim(round(self.magnitude, digits or 0), self.dims)

    def __bool__(self) -> bool:
        return bool(self.magnitude)

    def _compare(self, other: Any) -> tuple[float, float]:
        return self.magnitude, self._like(other).magnitude

    def __lt__(self, other: Any) -> bool:
        a, b = self._compare(other)
        return a < b

    def __le__(self, other: Any) -> bool:
        a, b = self._compare(other)
        return a <= b

    def __gt__(self, other: Any) -> bool:
        a, b = self._compare(other)
        return a > b

    def __ge__(self, other: Any) -> bool:
        a, b = self._compare(other)
        return a >= b

    def __eq__(self, other: object) -> bool:
        a, b = self._compare(other)
        return a == b

    def __ne__(self, other: object) -> bool:
        a, b = self._compare(other)
        return a != b

    __hash__ = None  # type: ignore[assignment]

    def __float__(self) -> float:
        if not self.dimensionless:
            raise Unsure("a quantity with a dimension as a plain number")
        return self.magnitude

    def __int__(self) -> int:
        return int(float(self))

    def __str__(self) -> str:
        return f"{self.magnitude:g} {self.dims}"

    __repr__ = __str__

    def __format__(self, spec: str) -> str:
        return format(self.magnitude, spec)

    def __getattr__(self, name: str) -> Any:
        if name.startswith("__"):
            raise AttributeError(name)  # a protocol probe (``__html__``...): not there, as on a number
        raise Unsure(f"attribute {name!r}")
