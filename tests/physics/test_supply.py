"""Supply checks: Annex G and NEC voltage drop, derating, voltage/frequency zones, unbalance, NEC Article 430."""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.physics import call_with_quantities, supply
from rulecheck.units import registry

Q = registry().Quantity


def test_k34_annex_g_voltage_drop():
    # K34: 3-phase 400/230 V, 50 A, 100 m, 16 mm² Cu, cosφ 0.85, λ 0.08 mΩ/m → 6.19 V = 2.69 % of U0
    u = call_with_quantities(supply.voltage_drop_annex_g, Q(50, "A"), Q(100, "m"), Q(16, "mm**2"), 0.85)
    assert u.to("V").magnitude == pytest.approx(6.19, abs=0.005)
    assert supply.relative_voltage_drop(u.magnitude, 230) == pytest.approx(0.0269, abs=5e-5)


def test_k33_annex_g_resistivities_and_single_phase():
    # K33: Annex G ρ1 Cu 0.0225, Al 0.036 Ω·mm²/m; single-phase b = 2 doubles the drop (IEC 60364-5-52 Annex G)
    assert supply.ANNEX_G_RESISTIVITY["copper"] == 0.0225
    assert supply.ANNEX_G_RESISTIVITY["aluminium"] == 0.036
    cu = supply.voltage_drop_annex_g(50, 100, 16e-6, 1.0, reactance_per_length=0.0)
    al = supply.voltage_drop_annex_g(50, 100, 16e-6, 1.0, "aluminium", reactance_per_length=0.0)
    assert al / cu == pytest.approx(0.036 / 0.0225)
    assert supply.voltage_drop_annex_g(50, 100, 16e-6, 0.85, phases=1) == pytest.approx(
        2 * supply.voltage_drop_annex_g(50, 100, 16e-6, 0.85)
    )
    with pytest.raises(ValueError):
        supply.voltage_drop_annex_g(50, 100, 16e-6, 0.85, "silver")


def test_nec_effective_impedance():
    # NFPA 70 Chapter 9, Table 9 (from memory): 4 AWG Cu in PVC conduit, R 0.31, X_L 0.048 Ω/kft, effective Z at
    # 0.85 pf 0.29 Ω/kft (printed to 2 figures). ΔV for 1 A over 1000 ft single-phase = 2·Ze.
    per_m = 1 / 304.8
    dv = supply.voltage_drop_nec(1.0, 304.8, 0.31 * per_m, 0.048 * per_m, 0.85, phases=1)
    assert dv / 2 == pytest.approx(0.29, abs=0.005)
    assert supply.voltage_drop_nec(1.0, 304.8, 0.31 * per_m, 0.048 * per_m, 0.85) == pytest.approx(
        math.sqrt(3) / 2 * dv
    )


def test_r27_default_derating_multiplies():
    # docs/references.md R27 (common practice): 1800 m and 45 °C → (1 − 0.08)·(1 − 0.05) = 0.874;
    # factors multiply (pitfall 20)
    assert supply.motor_derating_factor(1800, 45) == pytest.approx(0.874)
    assert supply.motor_derating_factor(500, 25) == 1.0
    assert supply.drive_derating_factor(1800, 45) == pytest.approx(0.874)
    assert supply.drive_derating_factor(1000, 55) == 0.0  # beyond the drive's stated maximum, no rating
    assert supply.drive_derating_factor(1000, 55, ambient_max=60) == pytest.approx(0.85)


@given(st.floats(0, 4000), st.floats(0, 4000), st.floats(-20, 60))
def test_property_derating_never_rises_with_altitude(h1, h2, ambient):
    low, high = sorted((h1, h2))
    assert supply.motor_derating_factor(high, ambient) <= supply.motor_derating_factor(low, ambient)


@pytest.mark.parametrize(
    ("dv", "df", "zone_a", "zone_b"),
    [
        (0.0, 0.0, True, True),
        (-0.05, 0.0, True, True),  # zone A axis limit ±5 % (verified)
        (0.0, 0.02, True, True),  # zone A axis limit ±2 % (verified)
        (0.04, -0.02, False, True),  # high V at low f: corner cut (vertices from memory)
        (-0.04, 0.02, False, True),  # low V at high f: corner cut
        (0.04, 0.02, True, True),
        (0.06, 0.0, False, True),
        (0.10, 0.03, False, True),
        (-0.10, 0.03, False, False),  # V/f = 0.874: outside the 0.90–1.10 approximation of zone B
        (0.0, -0.06, False, False),
        (0.11, 0.0, False, False),
    ],
)
def test_r25_iec_zones(dv, df, zone_a, zone_b):
    # IEC 60034-1 zones A and B (docs/references.md R25; the zone A corners and zone B approximation are from memory)
    assert supply.in_iec_zone_a(dv, df) is zone_a
    assert supply.in_iec_zone_b(dv, df) is zone_b


def test_k25_nema_variation():
    # K25: NEMA MG 1 12.44: ΔV −5.1 %, Δf +1.6 % → 6.7 % ≤ 10 % → OK; a 230 V motor runs on 207–253 V
    assert supply.within_nema_variation(-0.051, 0.016)
    assert supply.within_nema_variation(207 / 230 - 1, 0.0) and supply.within_nema_variation(253 / 230 - 1, 0.0)
    assert not supply.within_nema_variation(206 / 230 - 1, 0.0)
    assert not supply.within_nema_variation(0.08, 0.03)  # sum 11 %
    assert not supply.within_nema_variation(0.0, 0.051)


def test_k26_voltage_unbalance():
    # K26: NEMA definition: 462/463/455 V → 1.1 %; 480/476/472 V → 0.84 % (not 1.68 %)
    assert supply.voltage_unbalance(462, 463, 455) == pytest.approx(0.011, abs=5e-4)
    assert supply.voltage_unbalance(480, 476, 472) == pytest.approx(0.0084, abs=5e-5)
    # 203/210/212 V: K26 prints 2.5 %; the definition gives 5.33/208.33 = 2.56 %, so it is truncated
    vu = supply.voltage_unbalance(203, 210, 212)
    assert vu == pytest.approx(16 / 3 / (625 / 3))
    assert 0.025 <= vu < 0.026


def test_r26_unbalance_derating():
    # docs/references.md R26 approximate NEMA derating (from memory): 0.95 at 2 %, 0.88–0.90 at 3 %, 0.75 at 5 %
    assert supply.unbalance_derating_factor(0.005) == 1.0
    assert supply.unbalance_derating_factor(0.02) == pytest.approx(0.95)
    assert 0.88 <= supply.unbalance_derating_factor(0.03) <= 0.90
    assert supply.unbalance_derating_factor(0.05) == pytest.approx(0.75)
    assert supply.unbalance_derating_factor(0.06) is None


@pytest.mark.parametrize(
    ("hp", "volts", "amps"),
    [(5, 460, 7.6), (10, 460, 14), (10, 230, 28), (25, 460, 34), (30, 460, 40), (50, 460, 65), (100, 460, 124),
     (100, 230, 248), (1, 460, 2.1), (30, 480, 40), (10, 240, 28)],
)
def test_k19_nec_table_430_250(hp, volts, amps):
    # K19: NFPA 70 (NEC) 2008, Table 430.250 (exact table values); 480 V and 240 V systems read the 460/230 columns
    flc = call_with_quantities(supply.nec_full_load_current, Q(hp, "hp"), Q(volts, "V"))
    assert flc.magnitude == amps


def test_k19_entries_not_held():
    assert supply.nec_full_load_current(7.5 * supply.HP_MECHANICAL, 460) is None
    assert supply.nec_full_load_current(10 * supply.HP_MECHANICAL, 208) is None


def test_k20_to_k23_nec_multipliers():
    # K20: NEC 430.22, 10 hp 460 V (FLC 14 A) → 17.5 A
    assert supply.nec_branch_conductor_ampacity(14) == pytest.approx(17.5)
    # K21: NEC 430.122, 36 A → 45 A; 30 hp/480 V FLC 40 A → 50 A
    assert supply.nec_drive_conductor_ampacity(36) == pytest.approx(45.0)
    assert supply.nec_drive_conductor_ampacity(40) == pytest.approx(50.0)
    # K22: NEC 430.32(A)(1): FLA 24 A with SF 1.15 → 30.0 A; FLA 26 A with SF 1.0 → 29.9 A; rise 40 K → 125 %
    assert supply.nec_overload_trip_max(24, 1.15) == pytest.approx(30.0)
    assert supply.nec_overload_trip_max(26, 1.0) == pytest.approx(29.9)
    assert supply.nec_overload_trip_max(26, 1.0, temperature_rise=40.0) == pytest.approx(32.5)
    # K23: Table 430.52 percentages 300 / 175 / 800 (1100) / 250
    assert supply.nec_short_circuit_protection_max(10, "non-time-delay-fuse") == pytest.approx(30.0)
    assert supply.nec_short_circuit_protection_max(10, "dual-element-fuse") == pytest.approx(17.5)
    assert supply.nec_short_circuit_protection_max(10, "instantaneous-trip-breaker") == pytest.approx(80.0)
    assert supply.nec_short_circuit_protection_max(
        10, "instantaneous-trip-breaker-design-b-energy-efficient"
    ) == pytest.approx(110.0)
    assert supply.nec_short_circuit_protection_max(10) == pytest.approx(25.0)
    with pytest.raises(ValueError):
        supply.nec_short_circuit_protection_max(10, "fuse")


def test_nec_hp_table_takes_746_and_745_7_watts_alike() -> None:
    # NFPA 70 (NEC) 2008 Table 430.250 (docs/references.md K19): 10 hp, 460 V → 14 A. 10 hp is 7457.0 W at
    # 745.7 W/hp (NIST SP 811 B.8) and 7460 W at 746 W/hp: 0.04 % apart, the same table row (NEC and NEMA practice).
    assert supply.nec_full_load_current(7456.9987, 460.0) == 14.0
    assert supply.nec_full_load_current(7460.0, 460.0) == 14.0
    assert supply.nec_full_load_current(74600.0, 230.0) == 248.0
    # 10 PS (metric, 735.5 W) = 7355 W is 9.86 hp: no row of the table
    assert supply.nec_full_load_current(7354.9875, 460.0) is None


def test_zone_edges_compare_at_the_engine_tolerance() -> None:
    # 420 V on a 400 V motor is +5 % (IEC 60034-1 zone A edge, boundary included), though 420/400 − 1 is
    # 0.050000000000000044 in floating point; 440 V is +10 %, the zone B edge; 0.1 + 1e-6 is outside.
    assert supply.in_iec_zone_a(420 / 400 - 1, 0.0)
    assert supply.in_iec_zone_a(380 / 400 - 1, -0.02)
    assert supply.in_iec_zone_b(440 / 400 - 1, 0.0)
    assert supply.in_iec_zone_b(360 / 400 - 1, 0.0)
    assert not supply.in_iec_zone_b(0.10 + 1e-6, 0.0)
    assert supply.within_nema_variation(506 / 460 - 1, 0.0)  # +10 %
    assert not supply.within_nema_variation(0.05, 0.05 + 1e-6)
