"""Load models: affinity laws (K27), winder, conveyor, hoist (K39), lead screw, points."""

import math

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.physics import call_with_quantities, loads
from rulecheck.units import registry

Q = registry().Quantity
RPM = 2 * math.pi / 60


def test_standard_gravity_matches_scipy():
    # 3rd CGPM (1901) standard gravity, scipy.constants.g
    assert loads.STANDARD_GRAVITY == sc.g


def test_k27_affinity_laws():
    # K27: +10 % speed → head ×1.21, power ×1.331; 1000 → 1200 rpm: 100 → 120 m³/h, 40 → 57.6 m, 10 → 17.28 kW
    assert loads.affinity_head(1.0, 1.0, 1.1) == pytest.approx(1.21)
    assert loads.affinity_power(1.0, 1.0, 1.1) == pytest.approx(1.331)
    assert loads.affinity_scale(100.0, 1000.0, 1200.0, 1) == pytest.approx(120.0)
    assert loads.affinity_head(40.0, 1000 * RPM, 1200 * RPM) == pytest.approx(57.6)
    p = call_with_quantities(loads.affinity_power, Q(10, "kW"), Q(1000, "rpm"), Q(1200, "rpm"))
    assert p.to("kW").magnitude == pytest.approx(17.28)


def test_quadratic_torque_model():
    # docs/references.md R34: T ∝ n² plus breakaway; +10 % speed → +21 % torque without breakaway (K27)
    assert loads.quadratic_torque(1.1, 100.0, 1.0) == pytest.approx(121.0)
    assert loads.quadratic_torque(0.0, 100.0, 1.0, 10.0) == pytest.approx(10.0)
    assert loads.quadratic_torque(1.0, 100.0, 1.0, 10.0) == pytest.approx(100.0)
    arr = loads.quadratic_torque(np.array([0.0, 0.5, 1.0]), 100.0, 1.0)
    assert list(arr) == pytest.approx([0.0, 25.0, 100.0])
    assert list(loads.constant_torque(40.0, np.array([0.0, 1.0, 2.0]))) == [40.0, 40.0, 40.0]
    assert loads.constant_torque(40.0, 3.0) == 40.0


@given(
    st.lists(st.floats(min_value=0.0, max_value=400.0), min_size=2, max_size=30),
    st.floats(min_value=0.0, max_value=0.15),
)
def test_property_quadratic_torque_rises_with_speed(speeds, breakaway_share):
    speeds = np.sort(np.array(speeds))
    torque = loads.quadratic_torque(speeds, 500.0, 300.0, breakaway_share * 500.0)
    assert np.all(np.diff(torque) >= -1e-9)


def test_centre_winder():
    # docs/references.md R34: T(D) = F·D/2, n(D) = 60·v/(π·D), P = F·v constant; T_max at D_max
    assert loads.winder_torque(500.0, 1.2) == pytest.approx(300.0)
    assert loads.winder_speed(5.0, 0.1) / RPM == pytest.approx(60 * 5.0 / (math.pi * 0.1))
    assert loads.winder_power(500.0, 5.0) == pytest.approx(2500.0)


@given(st.floats(min_value=0.05, max_value=3.0))
def test_property_winder_power_is_constant_over_diameter(diameter):
    t = loads.winder_torque(800.0, diameter)
    w = loads.winder_speed(4.0, diameter)
    assert t * w == pytest.approx(loads.winder_power(800.0, 4.0))


def test_roll_inertia_equals_half_m_r_squared():
    # solid cylinder J = ½·m·r² (mechanics handbooks): paper 1000 kg/m³, 1 m wide, D 1 m, no core
    mass = 1000.0 * math.pi * 0.5**2 * 1.0
    assert loads.roll_inertia(0.0, 1000.0, 1.0, 1.0, 0.0) == pytest.approx(0.5 * mass * 0.5**2)
    # a hollow roll subtracts the core void and adds the core's own inertia
    assert loads.roll_inertia(2.0, 1000.0, 1.0, 1.0, 0.2) == pytest.approx(
        2.0 + 0.5 * mass * 0.25 - 0.5 * (1000.0 * math.pi * 0.1**2) * 0.1**2
    )


def test_conveyor_limiting_cases():
    # inclined plane with friction: horizontal → μ·m·g; vertical → m·g (mechanics)
    assert loads.conveyor_force(1000.0, 0.0, 0.03) == pytest.approx(0.03 * 1000.0 * sc.g)
    assert loads.conveyor_force(1000.0, math.pi / 2, 0.03) == pytest.approx(1000.0 * sc.g)
    # the spec-format demo conveyor: 2500 kg, 8°, μ 0.025, 0.5 m pulley, 1.6 m/s
    f = call_with_quantities(loads.conveyor_force, Q(2500, "kg"), Q(8, "deg"), 0.025)
    expected = 2500 * sc.g * (0.025 * math.cos(math.radians(8)) + math.sin(math.radians(8)))
    assert f.to("N").magnitude == pytest.approx(expected)
    assert loads.pulley_torque(expected, 0.5) == pytest.approx(expected * 0.25)
    assert loads.pulley_speed(1.6, 0.5) / RPM == pytest.approx(61.1, abs=0.05)  # the spec's 61 r/min


@given(st.floats(min_value=1.0, max_value=1e5), st.floats(min_value=0.0, max_value=0.5))
def test_property_conveyor_force_rises_with_mass(mass, incline):
    assert loads.conveyor_force(mass * 1.5, incline, 0.03) > loads.conveyor_force(mass, incline, 0.03)


def test_k39_hoist_lowering_power():
    # K39: 1000 kg lowered at 0.5 m/s with η 0.85 returns 4168 W
    assert loads.hoist_lowering_power(1000.0, 0.5, 0.85) == pytest.approx(4168, abs=0.5)
    assert loads.hoist_lifting_power(1000.0, 0.5, 0.85) == pytest.approx(1000 * sc.g * 0.5 / 0.85)
    # a counterweight reduces the unbalanced mass
    assert loads.hoist_lifting_power(1000.0, 0.5, 1.0, counterweight=400.0) == pytest.approx(600 * sc.g * 0.5)


def test_hoist_drum_power_balance():
    # drum torque × drum speed = m·g·v whatever the reeving (work balance)
    for falls in (1, 2, 4):
        t = loads.hoist_drum_torque(2000.0, 0.4, falls)
        w = loads.hoist_drum_speed(0.25, 0.4, falls)
        assert t * w == pytest.approx(2000.0 * sc.g * 0.25)
    assert loads.hoist_rope_force(2000.0, 4) == pytest.approx(2000.0 * sc.g / 4)


@given(st.floats(min_value=1.0, max_value=1e5))
def test_property_hoist_torque_rises_with_mass(mass):
    assert loads.hoist_drum_torque(mass * 1.2, 0.5, 2) > loads.hoist_drum_torque(mass, 0.5, 2)


def test_lead_screw():
    # pitfall 13: lead = starts × pitch; T = F·L/(2π·η); work balance T·ω = F·v/η
    lead = loads.screw_lead(0.005, 2)
    assert lead == pytest.approx(0.010)
    t = loads.lead_screw_torque(1000.0, lead, 0.9)
    assert t == pytest.approx(1.7684, abs=5e-5)
    assert t * loads.lead_screw_speed(0.2, lead) == pytest.approx(1000.0 * 0.2 / 0.9)


def test_torque_points():
    assert loads.torque_from_points([0, 10, 20], [5, 15, 40], 15) == pytest.approx(27.5)
    assert loads.torque_from_points([0, 10, 20], [5, 15, 40], 30) == pytest.approx(40.0)  # held, not extrapolated
    assert list(loads.torque_from_points([0, 10], [0, 10], np.array([2.5, 5.0]))) == [2.5, 5.0]
    with pytest.raises(ValueError):
        loads.torque_from_points([0, 10, 10], [1, 2, 3], 5)
    with pytest.raises(ValueError):
        loads.torque_from_points([0, 10], [1], 5)
