"""The derive stage: from a validated spec, the drive-train model an engineer would work out by hand.

Every value the spec gives is copied in as ``given``; every value an engineer would derive and the spec does
not give is computed by a physics method and recorded with its inputs (:func:`rulecheck.derive.record.put`),
or set to a stated default. Given values that can also be derived are *not* overwritten: the rules compare
the two (a nameplate that contradicts itself is a finding).

The steps run in order, each a module of this package; each reads the model as the steps before it left it,
the spec's data (choices, labels) and its quantities as parsed once by the schema stage — never the YAML text.
:func:`catalogue` lists every derived path and its kind: what rule expressions may read.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from rulecheck.derive.catalogue import CATALOGUE, catalogue
from rulecheck.derive.duty import derive_duty
from rulecheck.derive.installation import derive_installation
from rulecheck.derive.load import derive_load
from rulecheck.derive.motor import derive_motor
from rulecheck.derive.record import Spec
from rulecheck.derive.site import derive_site
from rulecheck.derive.starting import derive_starting
from rulecheck.derive.supply import derive_drive, derive_supply
from rulecheck.derive.train import derive_train
from rulecheck.derive.transmission import derive_transmission
from rulecheck.load import Document
from rulecheck.model import Model
from rulecheck.schema import Quantities, fields

__all__ = ["DERIVED", "STEPS", "build_model", "catalogue"]

# The catalogue under its former name, for callers that import it (the engine is to receive catalogue()).
DERIVED = CATALOGUE

# In order: the site factors come before the train and the duty cycle (the motor's capability depends on
# them); the short-time torques and the installation after the duty cycle (its peak and RMS torque).
STEPS: tuple[Callable[[Model, Spec], None], ...] = (
    derive_supply, derive_drive, derive_motor, derive_transmission, derive_load, derive_site, derive_train,
    derive_duty, derive_starting, derive_installation,
)


def build_model(doc: Document, q: Quantities, base_dir: Path | None = None) -> Model:
    """Return the drive-train model of a loaded spec, with derived values and their provenance."""
    model = Model()
    _given(model, doc, q)
    spec = Spec(doc.data if isinstance(doc.data, dict) else {}, q, base_dir)
    for step in STEPS:
        try:
            step(model, spec)
        except (ValueError, ZeroDivisionError, OverflowError, FloatingPointError) as exc:
            model.notes.append(f"{step.__module__}.{step.__name__}: could not derive every value ({exc})")
    return model


def _given(model: Model, doc: Document, q: Quantities) -> None:
    values, kinds = q.values, q.kinds
    for parts, value, node, path in fields(doc.data):
        if not parts or "[" in path:
            continue
        if path in values:
            model.given(path, values[path], kinds[path])
        elif isinstance(value, (bool, int, float, str)) and "x-dimension" not in node and "properties" not in node:
            model.given(path, value)
