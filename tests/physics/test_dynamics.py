"""Dynamics and duty-cycle reduction: K35, K39, K43 and analytic waveforms."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from rulecheck.physics import call_with_quantities
from rulecheck.physics import dynamics as dy
from rulecheck.units import registry

Q = registry().Quantity
RPM = 2 * math.pi / 60


def test_k43_acceleration_time():
    # K43: J 0.1 kg·m², 0 → 1500 rpm, T_net 20 N·m → t = 0.785 s
    t = call_with_quantities(dy.acceleration_time, Q(0.1, "kg*m**2"), Q(1500, "rpm"), Q(20, "N*m"))
    assert t.to("s").magnitude == pytest.approx(0.785, abs=5e-4)
    assert dy.acceleration_torque(0.1, 1500 * RPM, t.magnitude) == pytest.approx(20.0)


def test_k39_kinetic_energy():
    # K39: J 2 kg·m², 1500 → 0 rpm → 24.67 kJ
    assert dy.kinetic_energy(2.0, 1500 * RPM) == pytest.approx(24674, abs=0.5)
    assert dy.braking_energy(2.0, 1500 * RPM, 0.0) == pytest.approx(dy.kinetic_energy(2.0, 1500 * RPM))
    assert dy.potential_energy(1000.0, 2.0) == pytest.approx(19613.3)


def test_dol_constant_net_torque_matches_k43():
    # with constant net torque the integral is J·Δω/T (K43)
    t = dy.dol_acceleration_time(0.1, lambda w: 25.0, lambda w: 5.0, 1500 * RPM, steps=20)
    assert t == pytest.approx(0.785, abs=5e-4)


def test_dol_linear_net_torque_matches_closed_form():
    # T_net = T0 − k·ω gives t = (J/k)·ln(T0/(T0 − k·ω_end)) (separable ODE, derived)
    j, t0, k, w_end = 0.5, 100.0, 0.5, 150.0
    exact = j / k * math.log(t0 / (t0 - k * w_end))
    approx = dy.dol_acceleration_time(j, lambda w: t0 - k * w, lambda w: 0.0, w_end, steps=20)
    assert approx == pytest.approx(exact, rel=1e-4)  # Simpson's rule with 20 steps on a smooth 1/T_net


def test_dol_stall_and_bad_input():
    # a load torque above the motor torque somewhere on the way means the motor stalls there
    assert dy.dol_acceleration_time(1.0, lambda w: 50.0 - 0.2 * w, lambda w: 20.0, 200.0) == math.inf
    with pytest.raises(ValueError):
        dy.dol_acceleration_time(1.0, lambda w: 50.0, lambda w: 0.0, 100.0, steps=10)
    with pytest.raises(ValueError):
        dy.dol_acceleration_time(1.0, lambda w: 50.0, lambda w: 0.0, 0.0)


def _k35_segments(last_speed):
    # K35: T = [10, 2, −6, 0] N·m over t = [0.2, 1.0, 0.2, 0.6] s, as load torque without inertia
    w = 100.0
    return [
        dy.Segment(0.2, w, w, 10.0),
        dy.Segment(1.0, w, w, 2.0),
        dy.Segment(0.2, w, w, -6.0),
        dy.Segment(0.6, last_speed, last_speed, 0.0),
    ]


def test_k35_rms_torque():
    # K35: equivalent (RMS) torque 3.9497 N·m (all segments running, so β does not apply)
    r = dy.reduce_duty_cycle(_k35_segments(100.0))
    assert r.rms_torque == pytest.approx(3.9497, abs=5e-5)
    assert r.peak_torque == 10.0
    assert r.cycle_time == pytest.approx(2.0)


def test_rms_with_standstill_cooling():
    # docs/references.md R08: a standstill segment counts β·t for cooling: √(31.2/(1.4 + 0.5·0.6)) (algebra)
    r = dy.reduce_duty_cycle(_k35_segments(0.0))
    assert r.rms_torque == pytest.approx(math.sqrt(31.2 / 1.7))
    assert r.standstill_time == pytest.approx(0.6)
    assert dy.reduce_duty_cycle(_k35_segments(0.0), standstill_factor=1.0).rms_torque == pytest.approx(3.9497, abs=5e-5)


def test_segment_torques_and_regeneration_of_a_stop():
    # K39: J 2 kg·m² stopped from 1500 rpm returns 24.67 kJ; peak braking power J·α·ω = 2·E/t (derived)
    w = 1500 * RPM
    cycle = dy.duty_cycle_torques(
        [dy.Segment(2.0, 0.0, w, 5.0, 2.0), dy.Segment(10.0, w, w, 5.0, 2.0), dy.Segment(2.0, w, 0.0, 0.0, 2.0)]
    )
    assert cycle[0].acceleration_torque == pytest.approx(2.0 * w / 2.0)
    assert cycle[0].torque == pytest.approx(5.0 + w)
    assert cycle[2].torque == pytest.approx(-w)
    r = dy.reduce_duty_cycle(cycle)
    assert r.regenerative_energy == pytest.approx(24674, abs=0.5)
    assert r.peak_braking_power == pytest.approx(2 * 24674 / 2.0, abs=1.0)
    # motoring energy: kinetic energy plus load work 5 N·m over (1 s average ramp + 10 s run) at ω
    assert r.motoring_energy == pytest.approx(24674 + 5.0 * w * (1.0 + 10.0), abs=1.0)
    # the peak is during acceleration; it is reported at the highest speed of that segment
    assert r.peak_torque == pytest.approx(5.0 + w)
    assert r.speed_at_peak == pytest.approx(w)


def test_regeneration_with_sign_change_inside_a_segment():
    # power linear from +100 W to −300 W over 4 s: the negative part is ½·3 s·300 W = 450 J (geometry)
    r = dy.reduce_duty_cycle([dy.Segment(4.0, 10.0, -30.0, 10.0)])
    assert r.regenerative_energy == pytest.approx(450.0)
    assert r.motoring_energy == pytest.approx(50.0)


def test_utilisation_with_constant_capability():
    # R08: with a speed-independent capability C, U = T_rms/C (algebra)
    r = dy.reduce_duty_cycle(_k35_segments(100.0), capability=lambda w: np.full(np.shape(w), 8.0))
    assert r.utilisation == pytest.approx(3.9497 / 8.0, abs=1e-5)


def test_bad_segments():
    with pytest.raises(ValueError, match="segment 2"):
        dy.duty_cycle_torques([dy.Segment(1.0, 0, 0), dy.Segment(0.0, 0, 0)])
    with pytest.raises(ValueError):
        dy.reduce_duty_cycle([])


def test_profile_of_a_million_samples_matches_the_sine_wave():
    # T = A·sin(2πt/τ) at constant speed ω: T_rms = A/√2, mean |T| = 2A/π, regenerated energy per period
    # A·ω·τ/π, peak braking power A·ω (calculus). Tolerance 1e-6: trapezoid error with 10⁴ samples per period.
    n, periods, tau, a, w = 1_000_000, 100, 0.5, 80.0, 150.0
    t = np.linspace(0.0, periods * tau, n)
    torque = a * np.sin(2 * np.pi * t / tau)
    r = dy.reduce_profile(t, np.full(n, w), torque)
    assert r.rms_torque == pytest.approx(a / math.sqrt(2), rel=1e-6)
    assert r.mean_abs_torque == pytest.approx(2 * a / math.pi, rel=1e-6)
    assert r.regenerative_energy == pytest.approx(periods * a * w * tau / math.pi, rel=1e-6)
    assert r.motoring_energy == pytest.approx(r.regenerative_energy, rel=1e-6)
    assert r.peak_braking_power == pytest.approx(a * w, rel=1e-6)
    assert r.peak_torque == pytest.approx(a, rel=1e-6)
    assert r.speed_at_peak == pytest.approx(w)
    assert r.standstill_time == 0.0


def test_profile_agrees_with_segments_where_they_coincide():
    # a run/dwell cycle sampled densely reduces like its segments (standstill cooling included)
    t = np.linspace(0.0, 10.0, 10001)
    speed = np.where(t <= 6.0, 100.0, 0.0)
    torque = np.where(t <= 6.0, 20.0, 4.0)
    r = dy.reduce_profile(t, speed, torque)
    seg = dy.reduce_duty_cycle([dy.Segment(6.0, 100.0, 100.0, 20.0), dy.Segment(4.0, 0.0, 0.0, 4.0)])
    assert r.rms_torque == pytest.approx(seg.rms_torque, rel=2e-3)  # one sample interval straddles the step
    assert r.standstill_time == pytest.approx(4.0, abs=1.5e-3)  # less the one 1 ms interval across the step


def test_profile_validation():
    with pytest.raises(ValueError, match="increase"):
        dy.reduce_profile(np.array([0.0, 1.0, 1.0]), np.zeros(3), np.zeros(3))
    with pytest.raises(ValueError, match="finite"):
        dy.reduce_profile(np.array([0.0, 1.0]), np.array([0.0, np.nan]), np.zeros(2))
    with pytest.raises(ValueError, match="length"):
        dy.reduce_profile(np.array([0.0, 1.0]), np.zeros(3), np.zeros(2))
    with pytest.raises(ValueError, match="two samples"):
        dy.reduce_profile(np.array([0.0]), np.zeros(1), np.zeros(1))


@settings(max_examples=50)
@given(
    arrays(np.float64, st.integers(2, 200), elements=st.floats(-500, 500)),
    st.floats(min_value=0.25, max_value=1.0),
)
def test_property_rms_at_least_mean_abs_torque(torque, beta):
    t = np.arange(torque.size, dtype=float) * 0.01
    speed = np.where(np.arange(torque.size) % 3 == 0, 0.0, 50.0)
    r = dy.reduce_profile(t, speed, torque, standstill_factor=beta)
    assert r.rms_torque >= r.mean_abs_torque * (1 - 1e-12) - 1e-12
    assert r.peak_torque >= r.rms_torque * math.sqrt(r.effective_time / r.cycle_time) * (1 - 1e-12) - 1e-12


# --- lower bounds with an unknown part of the inertia; intermittent duty ratings --------------------------------


def test_least_torque_over_every_larger_inertia():
    # T(J) = T_L + J·α; α = 100 rad/s ÷ 1 s. Accelerating a resisting load (T_L 10, α > 0): grows with J, least at
    # J = 0.2: 30 N·m. Stopping it (α < 0): 10 − 100·J reaches 0 at J* = 0.1 < 0.2, so beyond the known 0.2 the
    # magnitude only grows: least 10 − 20 = −10 N·m. With J ≥ 0.05 only, J* = 0.1 lies above: least 0.
    up = dy.Segment(1.0, 0.0, 100.0, 10.0, 0.2)
    down = dy.Segment(1.0, 100.0, 0.0, 10.0, 0.2)
    down_small = dy.Segment(1.0, 100.0, 0.0, 10.0, 0.05)
    least = [s.torque for s in dy.duty_cycle_torques_lower_bound([up, down, down_small])]
    assert least == pytest.approx([30.0, -10.0, 0.0], abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(st.floats(-50, 50), st.floats(-200, 200), st.floats(0.0, 2.0), st.floats(0.0, 5.0))
def test_property_least_torque_bounds_every_larger_inertia(load, speed_to, known, extra):
    # whatever the unknown part of the inertia, |T| is never below the bound
    seg = dy.Segment(0.5, 0.0, speed_to, load, known)
    bound = abs(dy.duty_cycle_torques_lower_bound([seg])[0].torque)
    actual = abs(dy.duty_cycle_torques([seg._replace(inertia=known + extra)])[0].torque)
    assert bound <= actual + 1e-9


def test_duty_rating_utilisation_at_the_rating_is_one():
    # the rating itself: T_N for 40 % of the cycle, rest the remainder: √(T_N²·0.4) ÷ (T_N·√0.4) = 1 (IEC 60034-1 S3)
    assert dy.duty_rating_utilisation(math.sqrt(49.22**2 * 0.4), 49.22, 0.4) == pytest.approx(1.0, rel=1e-12)
    # the same torque for 25 % of the cycle on an S3 40 % motor: √0.25/√0.4 = 0.7906 (T_perm = T_N·√(0.4/0.25))
    assert dy.duty_rating_utilisation(math.sqrt(49.22**2 * 0.25), 49.22, 0.4) == pytest.approx(0.790569, rel=1e-6)
    with pytest.raises(ValueError):
        dy.duty_rating_utilisation(10.0, 49.22, 0.0)
