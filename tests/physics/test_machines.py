"""Machine relations against published and computed check values (docs/references.md, K-entries)."""

import math

import pytest
import scipy.constants as sc
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.physics import call_with_quantities, machines
from rulecheck.units import parse_quantity, registry

Q = registry().Quantity
RPM = 2 * math.pi / 60


# --- power, torque, speed --------------------------------------------------------


def test_k15_torque_from_horsepower():
    # K15: 30 hp at 1725 rpm → 91.34 lbf·ft (computed from the definitions, printed to 4 significant figures)
    t = call_with_quantities(machines.torque_from_power, Q(30, "hp"), Q(1725, "rpm"))
    assert t.to("lbf*ft").magnitude == pytest.approx(91.34, abs=0.005)


def test_k16_k17_torque_from_kilowatts():
    # K16: 7.5 kW at 1440 rpm → 49.736 N·m; K17: 15 kW at 1500 rpm → 95.49 N·m at 157.08 rad/s
    assert machines.torque_from_power(7500, 1440 * RPM) == pytest.approx(49.736, abs=5e-4)
    assert 1500 * RPM == pytest.approx(157.08, abs=5e-3)
    assert machines.torque_from_power(15000, 1500 * RPM) == pytest.approx(95.49, abs=5e-3)


def test_k18_table_rounding():
    # K18: 10 hp at 580 rpm → exact 1086.6 lbf·in; published torque tables show 1,090 (3 significant figures)
    t = call_with_quantities(machines.torque_from_power, Q(10, "hp"), Q(580, "rpm")).to("lbf*in").magnitude
    assert t == pytest.approx(1086.6, abs=0.05)
    assert t == pytest.approx(1090, rel=0.0035)  # the table's 3-figure rounding allows about 0.3 %


def test_k03_k04_k05_k09_constants():
    # K03–K05, K09: the constants are the torque of 1 hp or 1 kW at 1 rpm; computed from the definitions.
    hp_at_rpm = call_with_quantities(machines.torque_from_power, Q(1, "hp"), Q(1, "rpm"))
    assert hp_at_rpm.to("lbf*ft").magnitude == pytest.approx(5252.1131, rel=1e-7)
    assert hp_at_rpm.to("lbf*in").magnitude == pytest.approx(63025.357, rel=1e-7)
    assert hp_at_rpm.to("N*m").magnitude == pytest.approx(7120.91, abs=0.005)
    # 7127 has appeared in print and is wrong (K09's negative test): a 10 hp, 1750 rpm nameplate torque worked
    # out with it, 7127·10/1750 = 40.726 N·m, is off by 7127/7120.91 − 1 = 0.0855 % from P = T·ω
    wrong = 7127 * 10 / 1750
    deviation = machines.power_torque_speed_deviation(10 * sc.hp, wrong, 1750 * RPM)
    # tolerance: 7120.91 is rounded to 6 figures, 7e-7 of the ratio, about 1e-3 of the deviation
    assert deviation == pytest.approx(7127 / 7120.91 - 1, rel=1e-3)
    assert machines.torque_from_power(1000.0, RPM) == pytest.approx(9549.2966, rel=1e-8)


def test_k01_k06_k07_conversions_match_nist():
    # K01: NIST SP 811 (2008) App. B and scipy.constants.hp; K06: SI Brochure (revolution = 2π rad);
    # K07: NIST SP 811 lbf·ft = 1.355818 N·m
    assert parse_quantity("1 hp", "power") == pytest.approx(sc.hp, rel=1e-12)
    assert parse_quantity("1 hp", "power") == pytest.approx(745.69987158, rel=1e-10)
    assert parse_quantity("1 rpm", "rotational_speed") == pytest.approx(0.104719755, rel=1e-8)
    assert parse_quantity("1 lbf*ft", "torque") == pytest.approx(sc.pound * sc.g * sc.foot, rel=1e-12)


def test_power_torque_round_trip_and_deviation():
    # Definition P = T·ω: the spec-format example, 7.5 kW, 49.2 N·m, 1455 r/min, deviates by 0.047 %
    w = 1455 * RPM
    assert machines.power_from_torque(49.2, w) == pytest.approx(7496.5, abs=0.1)
    assert machines.power_torque_speed_deviation(7500, 49.2, w) == pytest.approx(4.67e-4, rel=1e-2)
    assert machines.speed_from_power(7500, machines.torque_from_power(7500, w)) == pytest.approx(w)


@given(
    st.floats(min_value=1.0, max_value=1e7),
    st.floats(min_value=0.1, max_value=2000.0),
)
def test_property_power_torque_power_round_trip(power, speed):
    # identity: P → T → P
    assert machines.power_from_torque(machines.torque_from_power(power, speed), speed) == pytest.approx(power)


@given(st.floats(min_value=0.1, max_value=1000.0), st.floats(min_value=10.0, max_value=10000.0))
def test_property_same_torque_from_si_and_customary(hp, rpm):
    # SI and customary inputs give one torque; the customary formula T[lbf·ft] = P[hp]·5252.113/n is K03
    si = machines.torque_from_power(hp * sc.hp, rpm * RPM)
    customary = call_with_quantities(machines.torque_from_power, Q(hp, "hp"), Q(rpm, "rpm")).to("lbf*ft")
    assert customary.magnitude == pytest.approx(hp * 33000 / (2 * math.pi) / rpm, rel=1e-9)
    assert customary.to("N*m").magnitude == pytest.approx(si, rel=1e-9)


# --- synchronous speed, slip, poles ------------------------------------------------


@pytest.mark.parametrize(
    ("frequency", "expected"),
    [(60, [3600, 1800, 1200, 900, 720, 600]), (50, [3000, 1500, 1000, 750, 600, 500])],
)
def test_k10_synchronous_speeds(frequency, expected):
    # K10: n = 120·f/p, any electric-machines textbook; exact
    for poles, rpm in zip([2, 4, 6, 8, 10, 12], expected, strict=True):
        assert machines.synchronous_speed(frequency, poles) / RPM == pytest.approx(rpm, rel=1e-12)


def test_k11_slip_and_rotor_frequency():
    # K11: ISBN 978-81-317-5456-6, Ex. 8.3: 4-pole, 50 Hz, 1440 rpm → s = 0.04, f_r = 2 Hz
    s = machines.slip(1440 * RPM, 50, 4)
    assert s == pytest.approx(0.04, rel=1e-12)
    assert machines.rotor_frequency(s, 50) == pytest.approx(2.0, rel=1e-12)


def test_k12_speed_from_rotor_frequency():
    # K12: same textbook, Ex. 8.4: 6-pole, 50 Hz, rotor frequency 2 Hz → s = 0.04, n = 960 rpm
    s = 2.0 / 50.0
    assert machines.speed_from_slip(s, 50, 6) / RPM == pytest.approx(960, rel=1e-12)


@pytest.mark.parametrize(
    ("rpm", "frequency", "poles"),
    [(1440, 50, 4), (1455, 50, 4), (2900, 50, 2), (960, 50, 6), (1750, 60, 4), (1180, 60, 6), (1500, 50, 4)],
)
def test_pole_inference(rpm, frequency, poles):
    # docs/references.md R04: p = 2·floor(60·f/n); 1500 r/min at 50 Hz (synchronous speed entered) still gives 4
    assert machines.poles_from_rated_speed(rpm * RPM, frequency) == poles


def test_pole_inference_rejects_zero_speed():
    with pytest.raises(ValueError):
        machines.poles_from_rated_speed(0.0, 50)


def test_speed_on_inverter_subtracts_slip_speed():
    # docs/references.md R04: at 25 Hz, 4-pole, rated slip 45 r/min, half torque → 750 − 22.5 = 727.5 r/min
    n = machines.induction_speed_on_inverter(25, 4, 45 * RPM, 24.6, 49.2)
    assert n / RPM == pytest.approx(727.5, rel=1e-12)


# --- nameplate electrical power ----------------------------------------------------


def test_k42_nameplate_current():
    # K42: 7.5 kW, 400 V, cosφ 0.82, η 0.904 → 14.60 A (computed, 4 significant figures)
    i = machines.three_phase_rated_current(7500, 400, 0.82, 0.904)
    assert i == pytest.approx(14.60, abs=0.005)
    assert machines.three_phase_output_power(400, i, 0.82, 0.904) == pytest.approx(7500)
    assert machines.implied_efficiency_three_phase(7500, 400, i, 0.82) == pytest.approx(0.904)


def test_implied_efficiency_of_the_example_nameplate():
    # docs/references.md R03: the spec-format nameplate (7.5 kW, 400 V, 14.8 A, 0.82) implies η = 0.8918
    # against 0.896 declared
    eta = machines.implied_efficiency_three_phase(7500, 400, 14.8, 0.82)
    assert eta == pytest.approx(7500 / (math.sqrt(3) * 400 * 14.8 * 0.82))
    assert abs(eta - 0.896) < 0.02


def test_single_phase_and_dc_forms():
    # docs/references.md R03 and pitfall 10: single-phase has no √3; DC uses V_a·I_a·η
    assert machines.single_phase_output_power(230, 10, 0.8, 0.75) == pytest.approx(1380.0)
    assert machines.implied_efficiency_single_phase(1380.0, 230, 10, 0.8) == pytest.approx(0.75)
    assert machines.dc_output_power(500, 60, 0.85) == pytest.approx(25500.0)
    assert machines.implied_efficiency_dc(25500.0, 500, 60) == pytest.approx(0.85)


# --- induction current and torque --------------------------------------------------


def test_induction_current_end_points():
    # docs/references.md R22: I(T_N) = I_N, I(0) = I_0 = 0.35·I_N by default (common practice)
    assert machines.induction_current_at_torque(49.2, 49.2, 14.8) == pytest.approx(14.8)
    assert machines.induction_current_at_torque(0.0, 49.2, 14.8) == pytest.approx(0.35 * 14.8)
    assert machines.induction_current_at_torque(0.0, 49.2, 14.8, 6.0) == pytest.approx(6.0)
    # at 1.5·T_N with I_0 = 0.35·I_N: √(0.35² + 2.25·(1 − 0.35²)) = 1.4474·I_N (algebra)
    assert machines.induction_current_at_torque(1.5 * 49.2, 49.2, 14.8) == pytest.approx(
        14.8 * math.sqrt(0.35**2 + 2.25 * (1 - 0.35**2))
    )


def test_induction_torque_below_magnetising_current_is_zero():
    assert machines.induction_torque_at_current(0.3 * 14.8, 49.2, 14.8) == 0.0


@given(st.floats(min_value=0.0, max_value=3.0), st.floats(min_value=0.1, max_value=0.6))
def test_property_induction_current_torque_round_trip(torque_pu, i0_share):
    # identity: T → I → T at constant flux. Near no load I ≈ I0 and I² − I0² loses digits: a rounding of
    # I² (ε·I² ≈ 1e-13 A²) becomes T_N·√(1e-13/(I_N² − I0²)) ≈ 2e-6 N·m, so the round trip holds to 1e-5 N·m
    i = machines.induction_current_at_torque(torque_pu * 100.0, 100.0, 20.0, i0_share * 20.0)
    assert machines.induction_torque_at_current(i, 100.0, 20.0, i0_share * 20.0) == pytest.approx(
        torque_pu * 100.0, abs=1e-5
    )


# --- field weakening and cooling ------------------------------------------------------


def test_field_weakening_limits():
    # docs/references.md R18: at twice base speed, T_cont halves and T_bd falls to a quarter
    wb = 1455 * RPM
    assert machines.continuous_torque_field_weakening(49.2, wb, 2 * wb) == pytest.approx(24.6)
    assert machines.breakdown_torque_field_weakening(145, wb, 2 * wb) == pytest.approx(36.25)
    assert machines.continuous_torque_field_weakening(49.2, wb, 0.5 * wb) == 49.2
    arr = machines.breakdown_torque_field_weakening(100.0, 10.0, __import__("numpy").array([5.0, 10.0, 20.0]))
    assert list(arr) == pytest.approx([100.0, 100.0, 25.0])


def test_k38_constant_power_range():
    # K38: T_bd/T_N = 2.5 with margin 1.3 → n_cp,max = 1.923·n_b (derived)
    n = machines.constant_power_speed_limit(1.0, 2.5, 1.0)
    assert n == pytest.approx(1.923, abs=5e-4)
    # at that speed constant power meets breakdown torque over the margin (algebra)
    assert machines.continuous_torque_field_weakening(1.0, 1.0, n) == pytest.approx(
        machines.breakdown_torque_field_weakening(2.5, 1.0, n) / 1.3
    )


@pytest.mark.parametrize(
    ("ratio", "expected"),
    [(1.0, 1.0), (0.8, 1.0), (0.5, 0.85), (0.33, 0.75), (0.1, 0.60), (0.65, 0.925), (0.05, 0.50), (1.8, 1.0)],
)
def test_r06_cooling_factor_table(ratio, expected):
    # docs/references.md R06 default k_cool (common practice), linear interpolation between its points
    assert machines.self_ventilated_cooling_factor(ratio) == pytest.approx(expected)


def test_r06_cooling_factor_variants():
    assert machines.self_ventilated_cooling_factor(0.9, inverter_rated=False) == pytest.approx(0.95)
    assert machines.self_ventilated_cooling_factor(0.2, constant_torque_limit=0.1) == 1.0
    assert machines.self_ventilated_cooling_factor(0.05, constant_torque_limit=0.1) == 0.5


# --- PM synchronous machines -----------------------------------------------------------


def test_k36_back_emf_and_torque_constant():
    # K36: 100 V_LL,rms/krpm = 0.954930 V·s/rad → Kt = √3·Ke = 1.65399 N·m/A_rms = 100/60.46
    ke = parse_quantity("100 V/krpm", "back_emf_constant")
    assert ke == pytest.approx(0.954930, abs=5e-7)
    kt = machines.torque_constant_from_back_emf(ke)
    assert kt == pytest.approx(1.65399, abs=5e-6)
    assert kt == pytest.approx(100 / 60.46, rel=1e-4)  # the shortcut is rounded to 4 figures


@pytest.mark.parametrize(
    ("value", "convention"),
    [
        (100.0, "line-to-line-rms"),
        (100.0 * math.sqrt(2), "line-to-line-peak"),
        (100.0 / math.sqrt(3), "phase-rms"),
        (100.0 * math.sqrt(2) / math.sqrt(3), "phase-peak"),
    ],
)
def test_pitfall7_back_emf_conventions(value, convention):
    # docs/references.md pitfall 7: Ke_ph = Ke_LL/√3, peak = √2·RMS
    ke = machines.back_emf_constant_line_rms(parse_quantity(f"{value} V/krpm", "back_emf_constant"), convention)
    assert ke == pytest.approx(0.954930, abs=5e-7)


def test_pitfall7_kt_relations_per_convention():
    # docs/references.md pitfall 7: Kt = √3·Ke_LL,rms = 3·Ke_ph,rms = (3/√2)·Ke_ph,pk = √(3/2)·Ke_LL,pk
    ke_ll_rms = 0.954930
    kt = machines.torque_constant_from_back_emf(ke_ll_rms)
    assert kt == pytest.approx(3 * ke_ll_rms / math.sqrt(3))
    assert kt == pytest.approx(3 / math.sqrt(2) * (ke_ll_rms / math.sqrt(3) * math.sqrt(2)))
    assert kt == pytest.approx(math.sqrt(1.5) * ke_ll_rms * math.sqrt(2))


def test_back_emf_per_electrical_radian():
    # pitfall 7: electrical rad/s = mechanical × pole pairs; an 8-pole constant per electrical rad/s is 4× smaller
    assert machines.back_emf_constant_line_rms(0.25, poles=8, per_electrical_radian=True) == pytest.approx(1.0)
    with pytest.raises(ValueError):
        machines.back_emf_constant_line_rms(0.25, per_electrical_radian=True)
    with pytest.raises(ValueError):
        machines.back_emf_constant_line_rms(1.0, "line-rms")


def test_k37_uncontrolled_generation():
    # K37: Ke 100 V/krpm at 6000 rpm → E = 600 V rms, 848.5 V peak; with k 1.05 and an 800 V trip, ≈ 5387 rpm
    ke = parse_quantity("100 V/krpm", "back_emf_constant")
    assert machines.back_emf_at_speed(ke, 6000 * RPM) == pytest.approx(600.0, rel=1e-12)
    assert machines.uncontrolled_generation_voltage(ke, 6000 * RPM, cold_factor=1.0) == pytest.approx(848.5, abs=0.05)
    assert machines.uncontrolled_generation_speed_limit(ke, 800.0) / RPM == pytest.approx(5387, abs=0.5)
    assert machines.speed_at_back_emf(ke, 600.0) / RPM == pytest.approx(6000, rel=1e-12)


# --- DC machines --------------------------------------------------------------------


def test_k29_dc_voltage_equation():
    # K29: V = E + I_a·R_a (textbook examples without brush drop)
    assert machines.dc_back_emf_from_terminal(460, 120, 0.15, brush_drop=0.0) == pytest.approx(442.0)
    assert machines.dc_armature_current(460, 447.4, 0.15, brush_drop=0.0) == pytest.approx(84.0)
    assert machines.dc_back_emf_from_terminal(200, 20, 0.5, brush_drop=0.0) == pytest.approx(190.0)
    assert machines.dc_armature_voltage(442.0, 120, 0.15, brush_drop=0.0) == pytest.approx(460.0)
    # docs/references.md R21: the default 2 V brush drop is added
    assert machines.dc_armature_voltage(442.0, 120, 0.15) == pytest.approx(462.0)


def test_dc_emf_with_speed_and_field():
    # docs/references.md R21 and pitfall 30: E ∝ Φ·n
    assert machines.dc_back_emf_at_speed(440, 1750 * RPM, 875 * RPM, 0.8) == pytest.approx(176.0)
    assert machines.dc_back_emf(2.4, 100.0) == pytest.approx(240.0)
    assert machines.dc_armature_current_for_torque(120.0, 2.4) == pytest.approx(50.0)


def test_faraday_law():
    # Faraday's law (physics textbooks): 100 turns, 0.01 Wb change in 0.1 s → 10 V mean
    assert machines.faraday_emf(100, 0.01, 0.1) == pytest.approx(10.0)


# --- IE efficiency classes -----------------------------------------------------------


# IEC 60034-30-1 efficiency classes: tests/physics/test_efficiency_classes.py


def test_cooling_factor_of_an_array_is_the_factor_of_each_ratio() -> None:
    # docs/references.md R06 table (common practice): 0.05 → 0.5 (near standstill), 0.1 → 0.60, 0.215 → midway 0.675,
    # 0.5 → 0.85, 0.8 and above → 1.00 (0.95 when not inverter-rated); a CT range down to 0.1 → 1.0
    import numpy as np

    ratios = np.array([0.05, 0.1, 0.215, 0.5, 0.8, 1.2])
    assert machines.self_ventilated_cooling_factor(ratios).tolist() == pytest.approx([0.5, 0.6, 0.675, 0.85, 1.0, 1.0])
    assert machines.self_ventilated_cooling_factor(ratios, False)[-1] == pytest.approx(0.95)
    assert machines.self_ventilated_cooling_factor(ratios, True, 0.1).tolist() == [0.5, 1.0, 1.0, 1.0, 1.0, 1.0]


def test_continuous_torque_capability_worked_by_hand() -> None:
    # T_N 100 N·m, n_b 150 rad/s, k_env 0.9 (docs/references.md R06, common practice):
    # self-ventilated on a drive at n/n_b 0.5: 100 × 0.85 × 0.9 = 76.5 N·m; at 2·n_b: 100 × ½ × 0.9 = 45 N·m
    # PM servo T_0 120 N·m at standstill, 110 at n_b/2 (midway to T_N), 50 at 2·n_b
    cap = machines.continuous_torque_capability
    assert cap(75.0, 100.0, 150.0, shaft_cooled=True, site_factor=0.9) == pytest.approx(76.5)
    assert cap(300.0, 100.0, 150.0, shaft_cooled=True, site_factor=0.9) == pytest.approx(45.0)
    assert cap(-75.0, 100.0, 150.0, shaft_cooled=False) == 100.0
    assert cap(75.0, 100.0, 150.0, shaft_cooled=True, constant_torque_limit=0.0) == 100.0
    assert cap(0.0, 100.0, 150.0, stall_torque=120.0) == pytest.approx(120.0)
    assert cap(75.0, 100.0, 150.0, stall_torque=120.0) == pytest.approx(110.0)
    assert cap(300.0, 100.0, 150.0, stall_torque=120.0) == pytest.approx(50.0)
    import numpy as np

    assert cap(np.array([75.0, 300.0]), 100.0, 150.0, shaft_cooled=True).tolist() == pytest.approx([85.0, 50.0])
