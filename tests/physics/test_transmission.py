"""Transmission relations: direction of power flow, reflected inertia, screws, service factors."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.physics import call_with_quantities
from rulecheck.physics import transmission as tr
from rulecheck.units import registry

Q = registry().Quantity


def test_r33_efficiency_side_depends_on_power_flow():
    # docs/references.md R33 and pitfall 12: motoring T_L/(i·η), overhauling T_L·η/i
    assert tr.motor_torque_motoring(100.0, 10.0, 0.9) == pytest.approx(11.111, abs=5e-4)
    assert tr.motor_torque_overhauling(100.0, 10.0, 0.9) == pytest.approx(9.0)
    both = tr.motor_torque_for_power_flow(np.array([100.0, 100.0, -100.0]), np.array([1.0, -1.0, -1.0]), 10.0, 0.9)
    assert list(both) == pytest.approx([100 / 9, 9.0, -100 / 9])
    assert tr.motor_torque_for_power_flow(100.0, -2.0, 10.0, 0.9) == pytest.approx(9.0)


@given(
    st.floats(min_value=0.1, max_value=1e5),
    st.floats(min_value=1.0, max_value=500.0),
    st.floats(min_value=0.3, max_value=1.0),
)
def test_property_motoring_needs_more_torque_than_overhauling(load, ratio, eta):
    assert tr.motor_torque_motoring(load, ratio, eta) >= tr.motor_torque_overhauling(load, ratio, eta)


def test_k43_inertia_ratio():
    # K43: J_L 0.5 kg·m², i 10, J_m 0.005 kg·m² → R_J = 1.0
    assert tr.inertia_ratio(tr.reflected_inertia(0.5, 10.0), 0.005) == pytest.approx(1.0, rel=1e-12)


def test_reflected_inertia_of_linear_masses():
    # docs/references.md R12: m·r²/i² and m·(L/2π)²/i²; a 10 mm lead moves 100 kg like 2.533e-4 kg·m² at the screw
    assert tr.reflected_inertia_of_mass_on_radius(1000.0, 0.25, 5.0) == pytest.approx(2.5)
    j = call_with_quantities(tr.reflected_inertia_of_mass_on_screw, Q(100, "kg"), Q(10, "mm"))
    assert j.to("kg*m**2").magnitude == pytest.approx(2.533e-4, abs=5e-8)


@given(st.floats(min_value=1e-6, max_value=1e3), st.floats(min_value=1.0, max_value=200.0))
def test_property_reflected_inertia_falls_with_ratio(j, ratio):
    assert tr.reflected_inertia(j, ratio * 1.1) < tr.reflected_inertia(j, ratio) <= j


def test_power_screw_worked_example():
    # Shigley's Mechanical Engineering Design, Example 8-1 (from memory): square thread, d_m 30 mm,
    # double start, lead 8 mm, f = 0.08, F = 6.4 kN → T_R = 15.94 N·m, T_L = 0.466 N·m in magnitude with the
    # screw alone not self-locking (the text prints 4 significant figures / 3 figures)
    lead, dm, f, force = 0.008, 0.030, 0.08, 6400.0
    assert tr.square_thread_raise_torque(force, lead, dm, f) == pytest.approx(15.94, abs=0.005)
    assert tr.square_thread_lower_torque(force, lead, dm, f) == pytest.approx(-0.466, abs=0.0005)
    lam = tr.screw_lead_angle(lead, dm)
    phi = tr.screw_friction_angle(f)
    assert not tr.screw_is_self_locking(lam, phi)
    # thread efficiency equals the work ratio F·L/(2π·T_R) (energy balance)
    eta = tr.screw_efficiency(lam, phi)
    assert eta == pytest.approx(force * lead / (2 * math.pi * tr.square_thread_raise_torque(force, lead, dm, f)))
    assert eta == pytest.approx(0.511, abs=5e-4)


def test_self_locking_screw():
    # docs/references.md R33: self-locking when λ ≤ φ′, and then η ≲ 0.5 with zero reverse efficiency
    lam = tr.screw_lead_angle(0.004, 0.030)
    phi = tr.screw_friction_angle(0.15, math.radians(15))  # trapezoidal thread, half-angle 15°
    assert tr.screw_is_self_locking(lam, phi)
    assert tr.screw_reverse_efficiency(lam, phi) == 0.0
    assert tr.screw_efficiency(lam, phi) < 0.5
    # a ball screw with μ 0.005 and a 10 mm lead on 20 mm runs both ways with η > 0.9 (band 0.85–0.95, R33)
    lam, phi = tr.screw_lead_angle(0.010, 0.020), tr.screw_friction_angle(0.005)
    assert 0.9 < tr.screw_reverse_efficiency(lam, phi) < tr.screw_efficiency(lam, phi) < 1.0


def test_gearbox_service_factor():
    # docs/references.md R31: SF = T_2,rated/(T_m,N·i·η); the spec-format example gives 2400/(49.2·23.8·0.96) = 2.135
    assert tr.gearbox_service_factor(2400, 49.2, 23.8, 0.96) == pytest.approx(2.135, abs=5e-4)


@pytest.mark.parametrize(
    ("hours", "load", "expected"),
    [
        # classic gear-unit table, electric-motor prime mover (docs/references.md K32; common practice, the AGMA
        # clause not verified): uniform 0.8/1.0/1.25, moderate 1.0/1.25/1.5, heavy 1.5/1.75/2.0 for <= 3 h,
        # 3-10 h and 24 h a day
        (3, "uniform", 0.8),
        (3, "moderate", 1.0),
        (3, "heavy", 1.5),
        (10, "uniform", 1.0),
        (10, "moderate", 1.25),
        (10, "heavy", 1.75),
        (24, "uniform", 1.25),
        (24, "moderate", 1.5),
        (24, "heavy", 2.0),
        (0.5, "heavy", 1.5),  # occasional duty is held to the 3 h row
        (16, "moderate", 1.5),  # beyond 10 h: the 24 h column
    ],
)
def test_k32_application_service_factor(hours, load, expected):
    assert tr.application_service_factor(hours, load) == expected


def test_overhung_load():
    # statics: a 200 mm chain sprocket carrying 1000 N·m pulls T/r = 1000/0.1 = 10 000 N; V-belt factor 1.5
    # (common practice) on a 0.25 m pulley with 100 N·m: 2·100/0.25·1.5 = 1200 N
    assert tr.overhung_load(1000.0, 0.2, tr.ELEMENT_FACTORS["chain"]) == pytest.approx(10_000.0)
    assert tr.overhung_load(100.0, 0.25, tr.ELEMENT_FACTORS["v-belt"]) == pytest.approx(1200.0)
    assert tr.ELEMENT_FACTORS == {"chain": 1.0, "gear": 1.25, "v-belt": 1.5, "flat-belt": 2.5}


def test_k32_gearmotor_classes_and_bad_input():
    assert tr.GEARMOTOR_CLASS_SERVICE_FACTOR == {"I": 1.0, "II": 1.4, "III": 2.0}
    with pytest.raises(ValueError):
        tr.application_service_factor(25, "uniform")
    with pytest.raises(ValueError):
        tr.application_service_factor(8, "violent")


def test_stage_efficiencies_multiply():
    # pitfall 12: two helical stages of 0.98 give 0.9604, not 0.96
    assert tr.combined_efficiency([0.98, 0.98]) == pytest.approx(0.9604)
