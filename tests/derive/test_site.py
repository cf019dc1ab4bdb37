"""The site step against hand calculations (common-practice derating: −1 %/100 m above 1000 m, −1 %/K above 40 °C)."""

from __future__ import annotations

import pytest

from tests.derive.conftest import model_of

MOTOR = {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min"}


def test_no_ambient_given_means_the_40_degree_reference() -> None:
    # IEC 60034-1 rates motors for 40 °C coolant: with no ambient given, no derating at sea level
    m = model_of({"motor": MOTOR, "environment": {"altitude": "0 m"}})
    assert m.get("site.motor_derating") == 1.0
    assert m.get("site.derating_default_used") is False


def test_38_degrees_at_500_m_is_inside_the_rating() -> None:
    m = model_of({"motor": MOTOR, "environment": {"altitude": "500 m", "ambient_max": "38 degC"}})
    assert m.get("site.motor_derating") == 1.0
    assert m.get("site.derating_default_used") is False


def test_2000_m_and_45_degrees() -> None:
    # (1 − 0.01 × 10) × (1 − 0.01 × 5) = 0.9 × 0.95 = 0.855
    m = model_of({"motor": MOTOR, "environment": {"altitude": "2000 m", "ambient_max": "45 degC"}})
    assert m.get("site.motor_derating") == pytest.approx(0.855, rel=1e-9)
    assert m.get("site.derating_default_used") is True
