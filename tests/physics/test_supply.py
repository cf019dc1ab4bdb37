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


@pytest.mark.parametrize(
    ("system", "hp", "volts", "amps"),
    [
        # K45: NFPA 70 (NEC) 2023 tables as written from their layout (status P); the sizes the K19 set lacked
        ("three-phase", 7.5, 460, 11.0), ("three-phase", 15, 460, 21.0), ("three-phase", 10, 208, 30.8),
        ("three-phase", 1, 208, 4.6), ("three-phase", 0.5, 115, 4.4), ("three-phase", 40, 575, 41.0),
        ("three-phase", 200, 230, 480.0), ("three-phase", 500, 460, 590.0), ("three-phase", 100, 2400, 26.0),
        ("single-phase", 2, 230, 12.0), ("single-phase", 1 / 6, 115, 4.4), ("single-phase", 10, 208, 55.0),
        ("single-phase", 0.5, 120, 9.8),
        ("dc", 75, 500, 123.0), ("dc", 75, 240, 255.0), ("dc", 0.25, 90, 4.0), ("dc", 200, 550, 294.0),
        ("dc", 7.5, 120, 58.0),
    ],
)
def test_k45_nec_tables_all_sizes(system, hp, volts, amps):
    assert supply.nec_full_load_current(hp * supply.HP_MECHANICAL, volts, system) == amps


def test_k45_tables_are_complete_and_rise_with_size():
    # every row of each table: currents fall with voltage across a row and rise with horsepower down a column
    # (a mistyped entry breaks the order); the published tables hold 27, 12 and 23 sizes
    sizes = {"three-phase": 27, "single-phase": 12, "dc": 23}
    for system, table in supply.NEC_TABLES.items():
        assert len(table) == sizes[system]
        columns = sorted({v for row in table.values() for v in row})
        for row in table.values():
            amps = [row[v] for v in columns if v in row]
            assert amps == sorted(amps, reverse=True), (system, row)
        for v in columns:
            down = [table[hp][v] for hp in sorted(table) if v in table[hp]]
            assert down == sorted(down), (system, v)


def test_k45_horsepower_keying():
    # 746 W (electrical hp) and 745.7 W (mechanical hp, K01) are both the 1 hp row; 7.5 kW (10.06 hp) is no size
    assert supply.nec_full_load_current(746.0, 460) == 2.1
    assert supply.nec_full_load_current(745.7, 460) == 2.1
    assert supply.nec_full_load_current(7500.0, 460) is None
    # blanks of the table and voltages outside its columns give None, never a neighbour's value
    assert supply.nec_full_load_current(3 * supply.HP_MECHANICAL, 115) is None
    assert supply.nec_full_load_current(10 * supply.HP_MECHANICAL, 400) is None
    assert supply.nec_full_load_current(75 * supply.HP_MECHANICAL, 480, "dc") is None
    with pytest.raises(ValueError):
        supply.nec_full_load_current(746.0, 460, "two-phase")


@pytest.mark.parametrize(("size", "mm2"), [("12 AWG", 3.31), ("10 AWG", 5.26), ("1/0 AWG", 53.5),
                                           ("4/0 AWG", 107.2), ("250 kcmil", 126.7), ("500 MCM", 253.4)])
def test_k46_conductor_sizes(size, mm2):
    # NEC Chapter 9 Table 8 areas, printed to 3–4 digits (hence 0.1 %)
    assert supply.conductor_size_area(size) * 1e6 == pytest.approx(mm2, rel=1e-3)


def test_k46_kcmil_is_a_thousand_circular_mils():
    # 1 circular mil = π/4·(0.001 in)² (NIST SP 811 App. B: 5.067075e-10 m²)
    assert supply.KCMIL == pytest.approx(5.067075e-7, rel=1e-6)
    with pytest.raises(ValueError):
        supply.conductor_size_area("5/0 AWG")


def test_dc_voltage_drop_two_conductors():
    # 124 A over 36.58 m of 53.5 mm² Cu: R = 0.0225·36.58/53.5 = 15.38 mΩ per conductor; 2·R·I = 3.815 V
    assert supply.voltage_drop_dc(124.0, 36.576, 53.5e-6) == pytest.approx(3.815, rel=1e-3)


def test_single_phase_annex_g_is_two_over_root_three_of_the_three_phase_line_drop():
    # b = 2 (out and return) against the three-phase line drop √3·u: ratio 2/√3
    one = supply.voltage_drop_annex_g(10.0, 40.0, 2.5e-6, 0.8, phases=1)
    three = supply.voltage_drop_annex_g(10.0, 40.0, 2.5e-6, 0.8, phases=3)
    assert one / (math.sqrt(3) * three) == pytest.approx(2 / math.sqrt(3), rel=1e-12)
    assert one == pytest.approx(5.798, rel=1e-3)  # 2·10·40·(9.0e-3·0.8 + 0.08e-3·0.6)


def test_prospective_short_circuit_current():
    # 50 MVA at 400 V: 50e6/(√3·400) = 72 168.8 A
    assert supply.prospective_short_circuit_current(50e6, 400.0) == pytest.approx(72168.78, rel=1e-6)


@pytest.mark.parametrize(("rsce", "limit"), [(20.0, None), (33.0, 0.13), (65.9, 0.13), (66.0, 0.16), (120.0, 0.22),
                                             (300.0, 0.37), (350.0, 0.48), (5000.0, 0.48)])
def test_iec_61000_3_12_thc_steps(rsce, limit):
    # IEC 61000-3-12 Table 3 (from memory, R43): read at the lower row, no limit below R_sce 33
    assert supply.iec_61000_3_12_thc_limit(rsce) == limit


@pytest.mark.parametrize(("ratio", "limit"), [(10.0, 0.05), (20.0, 0.08), (49.0, 0.08), (50.0, 0.12),
                                              (300.0, 0.15), (1000.0, 0.20)])
def test_ieee_519_tdd_rows(ratio, limit):
    # IEEE 519-2014 Table 2 (from memory, R43)
    assert supply.ieee_519_tdd_limit(ratio) == limit


def test_typical_thd_labelled_and_refuses_unknown():
    assert supply.typical_input_thd("active-front-end") == 0.05
    with pytest.raises(ValueError):
        supply.typical_input_thd("eighteen-pulse")


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
