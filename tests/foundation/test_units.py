"""Quantity parsing and display, checked against published conversion factors.

Sources: NIST Special Publication 811 (2008 edition), Appendix B.8/B.9 (conversion factors);
SI Brochure, 9th edition (2019), Table 4 note (revolution = 2π rad); scipy.constants (CODATA).
"""

from __future__ import annotations

import math
import time

import pytest
import scipy.constants as sc
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.units import QuantityError, ambiguity_notes, format_value, parse_quantity

REL = 1e-9  # exact definitions: only floating-point rounding separates the two sides


def test_horsepower_is_nist_value() -> None:
    # NIST SP 811 (2008) B.8: horsepower (550 ft·lbf/s) = 745.699 87 W; scipy.constants.hp is the same definition
    assert parse_quantity("1 hp", "power") == pytest.approx(745.69987158227022, rel=REL)
    assert parse_quantity("1 hp", "power") == pytest.approx(sc.hp, rel=REL)
    # shown back in customary units, the NIST value is exactly one horsepower
    assert format_value(745.69987158227022, "power", "customary") == "1 hp"


def test_other_horsepowers() -> None:
    # NIST SP 811 (2008) B.8: metric horsepower 735.498 75 W, electric horsepower 746 W
    assert parse_quantity("1 hp_metric", "power") == pytest.approx(735.49875, rel=1e-8)
    assert parse_quantity("1 hp_elec", "power") == pytest.approx(746.0, rel=REL)
    assert parse_quantity("1 hp_mech", "power") == pytest.approx(745.69987158, rel=1e-9)


def test_bare_hp_is_read_as_mechanical_horsepower_with_a_note() -> None:
    # NIST SP 811 (2008) B.8: horsepower (550 ft·lbf/s) = 745.699 872 W; metric horsepower 735.498 75 W.
    # A nameplate's hp (or HP) is mechanical horsepower; NEC and NEMA MG 1 tables treat 745.7 W and 746 W alike,
    # so the note only says which was read and how to write metric horsepower.
    for text in ("10 hp", "10 HP"):
        assert parse_quantity(text, "power") == pytest.approx(7456.99872, rel=1e-9), text
        (note,) = ambiguity_notes(text, "power")
        assert "mechanical horsepower (745.7 W" in note and "735.5 W" in note
    assert parse_quantity("1 hp_metric", "power") == pytest.approx(735.49875, rel=1e-9)
    assert not ambiguity_notes("10 hp_mech", "power")
    assert not ambiguity_notes("10 hp_metric", "power")
    assert not ambiguity_notes("7.5 kW", "power")


@pytest.mark.parametrize("text", ["100 kVA", "1 MVA", "500 VA", "20 kvar"])
def test_apparent_power_is_refused_for_a_power(text: str) -> None:
    # a volt-ampere has the dimension of a watt, but S = U·I includes the reactive part: not a shaft power
    with pytest.raises(QuantityError) as caught:
        parse_quantity(text, "power")
    assert "apparent" in caught.value.message and "shaft" in caught.value.message
    assert "kW or hp" in caught.value.hint
    unit = text.split()[1]
    if "VA" in unit:  # the apparent-power fields still take it
        assert parse_quantity(text, "apparent_power") > 0


def test_revolution_per_minute_in_rad_per_second() -> None:
    # SI Brochure (2019): 1 revolution = 2π rad, so 1 r/min = 2π/60 rad/s = 0.104 719 755 rad/s
    for text in ("1 r/min", "1 rpm", "1 min^-1", "1 1/min", "1 rev/min", "1 min-1"):
        assert parse_quantity(text, "rotational_speed") == pytest.approx(2 * math.pi / 60, rel=REL), text
    assert parse_quantity("1 rev/s", "rotational_speed") == pytest.approx(2 * math.pi, rel=REL)
    assert parse_quantity("1 rad/s", "rotational_speed") == pytest.approx(1.0, rel=REL)


@pytest.mark.parametrize("speed", ["1455 r/min", "1455 rpm", "1455 min^-1", "1455 1/min"])
def test_torque_from_power_in_every_speed_notation(speed: str) -> None:
    # common practice: T[N·m] = 9549.2966·P[kW]/n[r/min] (60000/2π); 7.5 kW at 1455 r/min → 49.22 N·m
    torque = parse_quantity("7.5 kW", "power") / parse_quantity(speed, "rotational_speed")
    assert torque == pytest.approx(60000 / (2 * math.pi) * 7.5 / 1455, rel=REL)
    assert round(torque, 1) == 49.2


def test_customary_torque_constant_5252() -> None:
    # common practice: T[lbf·ft] = 5252.113·P[hp]/n[r/min] (33000/2π); 30 hp at 1725 r/min → 91.34 lbf·ft (K15)
    torque_nm = parse_quantity("30 hp", "power") / parse_quantity("1725 r/min", "rotational_speed")
    torque_lbf_ft = torque_nm / parse_quantity("1 lbf*ft", "torque")
    assert torque_lbf_ft == pytest.approx(33000 / (2 * math.pi) * 30 / 1725, rel=1e-9)
    assert torque_lbf_ft == pytest.approx(91.34, abs=0.005)


def test_customary_units() -> None:
    # NIST SP 811 (2008) B.9: 1 lbf·ft = 1.355 818 N·m; 1 lbf·in = 0.112 984 8 N·m; 1 lb·ft² = 0.042 140 11 kg·m²;
    # 1 in = 0.0254 m (exact); 1 lb = 0.453 592 37 kg (exact)
    assert parse_quantity("1 lbf*ft", "torque") == pytest.approx(1.3558179483, rel=1e-9)
    assert parse_quantity("1 lbf*in", "torque") == pytest.approx(0.1129848290, rel=1e-9)
    assert parse_quantity("1 lb*ft^2", "inertia") == pytest.approx(0.04214011009, rel=1e-9)
    assert parse_quantity("10 in", "length") == pytest.approx(0.254, rel=REL)
    assert parse_quantity("1 lb", "mass") == pytest.approx(sc.pound, rel=REL)


def test_offset_temperatures_are_handled_on_purpose() -> None:
    # 104 °F = 40 °C; a rise of 18 delta_degF = 10 K; a temperature is refused where a difference is meant
    assert parse_quantity("104 degF", "temperature") == pytest.approx(40.0, abs=1e-9)
    assert parse_quantity("313.15 K", "temperature") == pytest.approx(40.0, abs=1e-9)
    assert parse_quantity("18 delta_degF", "temperature_difference") == pytest.approx(10.0, rel=1e-9)
    with pytest.raises(QuantityError):
        parse_quantity("40 degC", "temperature_difference")


def test_percent_and_fractions() -> None:
    assert parse_quantity("12 %", "fraction") == pytest.approx(0.12)
    assert parse_quantity(0.12, "fraction") == pytest.approx(0.12)
    with pytest.raises(QuantityError):
        parse_quantity("12 %", "power")


def test_back_emf_constant_conventions() -> None:
    # 1 V/krpm = 60/(2π·1000) V·s/rad = 0.009 549 3 V·s/rad (docs/references.md pitfall 7)
    assert parse_quantity("1 V/krpm", "back_emf_constant") == pytest.approx(60 / (2 * math.pi * 1000), rel=1e-9)
    assert parse_quantity("100 V/krpm", "back_emf_constant") == pytest.approx(0.954930, rel=1e-6)
    assert parse_quantity("0.1 V/rpm", "back_emf_constant") == pytest.approx(0.954930, rel=1e-6)
    with pytest.raises(QuantityError):
        parse_quantity("1 V/Hz", "back_emf_constant")


@pytest.mark.parametrize(
    ("text", "kind_name", "words"),
    [
        (1455, "rotational_speed", "no unit"),
        ("1455", "rotational_speed", "no unit"),
        ("1455 Hz", "rotational_speed", "not a shaft speed"),
        ("50 r/min", "frequency", "not an electrical frequency"),
        ("50 rpm", "frequency", "not an electrical frequency"),
        ("5 J", "torque", "energy"),
        ("5 kW", "torque", "not a torque"),
        ("5 blorps", "length", "unknown unit"),
        ("1e400 kW", "power", "finite"),
        ("nan kW", "power", "number"),
        ("inf kW", "power", "number"),
        ("0,75 kW", "power", "decimal comma"),
        ("9**9**9 kW", "power", "arithmetic"),
        ("9 kW**9**9", "power", "exponent"),
        ("9 kW^99", "power", "exponent"),
        ("9 ((((kW))))", "power", "parentheses"),
        ("9 kW)", "power", "parentheses"),
        (True, "power", "boolean"),
        ("x" * 200, "power", "longer"),
    ],
)
def test_bad_quantities_give_clear_errors(text: object, kind_name: str, words: str) -> None:
    with pytest.raises(QuantityError) as info:
        parse_quantity(text, kind_name)
    assert words in (info.value.message + " " + info.value.hint)


def test_hostile_unit_strings_are_refused_quickly() -> None:
    hostile = ["9**9**9 kW", "1 " + "(" * 500 + "kW" + ")" * 500, "1 " + "kW*" * 5000 + "kW",
               "1 " + "kW^2^2^2^2^2^2^2", "1 " + "k" * 10000]
    start = time.perf_counter()
    for text in hostile:
        with pytest.raises(QuantityError):
            parse_quantity(text, "power")
    assert time.perf_counter() - start < 10.0  # a hang guard, not a benchmark: each is refused at once


def test_display() -> None:
    assert format_value(49.22317, "torque") == "49.22 N·m"
    assert format_value(7500.0, "power") == "7.5 kW"
    assert format_value(2 * math.pi * 1455 / 60, "rotational_speed") == "1455 r/min"
    assert format_value(0.12, "fraction") == "12 %"
    assert format_value(7456.9987, "power", "customary") == "10 hp"
    assert format_value(40.0, "temperature", "customary") == "104 °F"


@given(st.floats(min_value=0.01, max_value=1e6), st.floats(min_value=1.0, max_value=1e5))
def test_same_torque_from_si_and_customary(kw: float, rpm: float) -> None:
    si = parse_quantity(f"{kw!r} kW", "power") / parse_quantity(f"{rpm!r} r/min", "rotational_speed")
    hp = kw * 1000 / 745.69987158227022
    customary = parse_quantity(f"{hp!r} hp", "power") / parse_quantity(f"{rpm!r} rpm", "rotational_speed")
    assert customary == pytest.approx(si, rel=1e-9)


def test_fast_unit_table_agrees_with_pint() -> None:
    # the start-up fast path must give exactly what pint's definitions give (relative 1e-12: float rounding)
    from rulecheck.units import _FAST_TEMPERATURE, FAST_UNITS, _pint_conversion

    for kind_name, table in FAST_UNITS.items():
        for unit, scale in table.items():
            spelled = {"rpm": "r/min", "krpm": "krpm", "rps": "rev/s"}.get(unit, unit) \
                if kind_name == "rotational_speed" else unit
            ref_scale, ref_offset = _pint_conversion(spelled, kind_name)
            assert ref_offset == 0.0
            assert scale == pytest.approx(ref_scale, rel=1e-12), (kind_name, unit)
    for unit, (scale, offset) in _FAST_TEMPERATURE.items():
        ref = _pint_conversion(unit, "temperature")
        assert scale == pytest.approx(ref[0], rel=1e-12) and offset == pytest.approx(ref[1], abs=1e-9), unit


# --- digit grouping and scale factors (issue 20 point 2) -------------------------------------------------------
# SI Brochure, 9th edition (2019), 5.4.4: digits may be divided into groups of three by a space, never by a dot or
# comma; the groups run both ways from the decimal marker ("43 279.168 29"). A grouped number is one number.

@pytest.mark.parametrize("space", [" ", "\u2009", "\u00a0", "\u202f"], ids=["space", "thin", "no-break", "narrow"])
def test_si_digit_groups_are_one_number(space: str) -> None:
    assert parse_quantity(f"12{space}100 kg", "mass") == pytest.approx(12100.0, rel=REL)  # not 12 × 100 kg
    assert parse_quantity(f"1{space}100 kW", "power") == pytest.approx(1.1e6, rel=REL)  # not 100 kW
    assert parse_quantity(f"1{space}000{space}000 W", "power") == pytest.approx(1e6, rel=REL)
    assert parse_quantity(f"43{space}279.168{space}29 m", "length") == pytest.approx(43279.16829, rel=REL)
    assert parse_quantity(f"1{space}100 1/min", "rotational_speed") == pytest.approx(1100 * 2 * math.pi / 60,
                                                                                     rel=REL)


@pytest.mark.parametrize("text", ["12 10 kg", "12 1000 kg", "1 0000 W", "12\u200910 kg", "12 100,5 kg",
                                  "2 10 N*m", "5 kg 100", "1 V/(1000 rpm)", "3 (10 kW)"])
def test_digits_that_are_not_si_groups_or_scale_factors_are_refused(text: str) -> None:
    kind_name = {"kg": "mass", "W": "power", "N*m": "torque", "V/(": "back_emf_constant", "kW)": "power"}
    name = next(v for k, v in kind_name.items() if k in text)
    with pytest.raises(QuantityError) as caught:
        parse_quantity(text, name)
    assert "digit groups" in caught.value.message or "scale factor" in caught.value.message


def test_a_misgrouped_number_is_refused_at_its_location(tmp_path) -> None:
    from rulecheck.check import check_file  # noqa: PLC0415 (only this test needs the whole check)

    spec = tmp_path / "belt.yaml"
    spec.write_text("format: 1\nmotor:\n  kind: induction\n  rated_power: 1 10 kW\n", encoding="utf-8")
    result = check_file(spec, _context())
    (problem,) = [o for o in result["outcomes"] if o["rule"] == "units-and-dimensions" and o["outcome"] == "fail"]
    assert problem["location"]["line"] == 4 and problem["location"]["column"] >= 3
    assert "SI digit groups" in problem["message"]


def _context():
    import datetime as dt  # noqa: PLC0415

    from rulecheck.config import Config  # noqa: PLC0415
    from rulecheck.run import prepare  # noqa: PLC0415

    return prepare(Config(), [], dt.date(2026, 12, 1), "si", None).context


def test_metric_horsepower_only_as_ps_cv_or_hp_metric() -> None:
    # NIST SP 811 (2008) B.8: metric horsepower = 75 kgf·m/s = 735.498 75 W (PS, CV on European nameplates)
    for text in ("10 PS", "10 CV", "10 hp_metric"):
        assert parse_quantity(text, "power") == pytest.approx(7354.9875, rel=REL), text
        assert not ambiguity_notes(text, "power")
    with pytest.raises(QuantityError):
        parse_quantity("10 ps", "power")  # no lower-case spelling: 'ps' is a picosecond in pint
    with pytest.raises(QuantityError):
        parse_quantity("10 PS", "apparent_power")


def test_printed_resolution_is_half_the_last_digit() -> None:
    from rulecheck.units import printed_resolution  # noqa: PLC0415

    assert printed_resolution("14.6 A", "current") == pytest.approx(0.05, rel=REL)
    assert printed_resolution("400 V", "voltage") == pytest.approx(0.5, rel=REL)
    assert printed_resolution("90.4 %", "fraction") == pytest.approx(0.0005, rel=REL)
    assert printed_resolution(0.82, "fraction") == pytest.approx(0.005, rel=REL)
    assert printed_resolution("7.5 kW", "power") == pytest.approx(50.0, rel=REL)
    assert printed_resolution("1.2e3 V", "voltage") == pytest.approx(50.0, rel=REL)
    assert printed_resolution("12 100 kg", "mass") == pytest.approx(0.5, rel=REL)
    assert printed_resolution("x kg", "mass") is None


def test_limit_comparisons_share_the_engine_tolerance() -> None:
    from rulecheck.engine import compiler  # noqa: PLC0415
    from rulecheck.units import REL_TOL, at_least, at_most  # noqa: PLC0415

    assert compiler.REL_TOL is REL_TOL  # one definition
    assert at_most(690 * 1.1, 759.0) and not at_most(760.0, 759.0)
    assert at_least(1.15 * (1 - 1e-12), 1.15) and not at_least(1.14, 1.15)


@pytest.mark.parametrize("text", ["290 %", "2.9 × rated", "2.9 x rated", "2.9 T_N"])
def test_a_torque_multiple_in_a_torque_field_points_to_the_ratio_fields(text: str) -> None:
    with pytest.raises(QuantityError) as caught:
        parse_quantity(text, "torque")
    assert "multiple of rated torque" in caught.value.message and "breakdown_torque_ratio" in caught.value.hint
    assert parse_quantity("290 %", "fraction") == pytest.approx(2.9, rel=REL)  # the ratio fields' spelling
