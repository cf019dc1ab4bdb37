"""The demo's torque–speed charts: the load curve and the capability the rules use, and labels that never overlap."""

from __future__ import annotations

import itertools
import sys
from pathlib import Path

import numpy as np
import pytest

from rulecheck.report import charts

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def demo():
    sys.path.insert(0, str(ROOT))
    from rulecheck.run import RunOptions, run_with_charts

    result, series = run_with_charts(RunOptions(paths=[str(ROOT / "specs_demo")], charts=True, cache_dir=None))
    return list(zip(result["specs"], series, strict=True))


def test_every_torque_speed_chart_has_load_curve_and_capability(demo):
    # a variable-speed drive train has the torque–speed plane; a direct-on-line or soft-starter start (M-710) the
    # starting chart instead: each with its load curve and the motor's capability
    for spec, series in demo:
        if spec["tag"] == "HR-M-710":
            assert "torque_speed" not in series
            st = series["starting"]
            assert len(st["load_curve"]) >= 2 and len(st["motor_starting"]) >= 2 and st["motor_full_voltage"]
            continue
        ts = series["torque_speed"]
        assert len(ts["load_curve"]) >= 2 and len(ts["motor_continuous"]) >= 2, spec["tag"]
        assert ts.get("motor_peak"), spec["tag"]


def test_m710_starting_chart_is_the_dol_starting_rules_start(demo):
    # M-710: T_LR 225 N·m at the start's dip u = 68.15 % → 225 × 0.68149² = 104.50 N·m at standstill, the
    # starting torque dol-starting judges; its warning (the dip) crosses that point out
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-M-710")
    rule = next(o for o in spec["outcomes"] if o["rule"] == "dol-starting")
    st = series["starting"]
    assert st["motor_starting"][0][1] == pytest.approx(rule["values"]["starting_torque"]["value"], rel=1e-4)
    assert st["motor_starting"][0][1] == pytest.approx(225 * 0.68149 ** 2, rel=1e-4)
    fig = charts.figure("starting", st, failing=charts.failing_rules(spec))
    assert rule["outcome"] == "fail" and any("FAILS: dol-starting" in lb.text for lb in fig.axes[0].labels)


def test_peak_capability_is_the_one_the_peak_rule_compares_with(demo):
    # CV-120: the motor's 520 N·m is limited by the drive's overload current to 360.3 N·m (train.peak_torque_available)
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-CV-120")
    available = next(o for o in spec["outcomes"] if o["rule"] == "torque-peak")["values"]["available"]["value"]
    peak_at_low_speed = series["torque_speed"]["motor_peak"][1][1]
    assert peak_at_low_speed == pytest.approx(available, rel=1e-4)
    assert peak_at_low_speed < 520


def test_load_curve_crosses_capability_where_the_rule_says(demo):
    # CV-120 by hand. Motor 30 kW at 1475 r/min: T_N = 30000 / (1475 × 2π/60) = 194.22 N·m; base speed 1475 r/min
    # (the drive reaches 400 V). Load: 6000 kg up 14°, μ 0.03, 0.5 m pulley:
    # F = 6000 × 9.80665 × (sin 14° + 0.03 × cos 14°) = 15947 N; 15947 × 0.25 = 3986.8 N·m at the pulley;
    # ÷ (i 24 × η 0.96) = 173.04 N·m at the motor, at every speed (friction and lift do not depend on speed).
    # Speeds: 15 r/min × 24 = 360 r/min up to 1.6 m/s ÷ (π × 0.5 m) × 60 × 24 = 1466.8 r/min.
    # k_cool (references R06, common practice): at 360/1475 = 0.2441, 0.60 + 0.15 × (0.2441 − 0.1)/0.23 = 0.6940,
    # T_cont = 194.22 × 0.6940 = 134.8 N·m < 173.04: the rule's finding. The load meets the capability where
    # k_cool = 173.04/194.22 = 0.89095: n/n_b = 0.5 + 0.3 × (0.89095 − 0.85)/0.15 = 0.58190, n = 858.3 r/min;
    # above it the motor carries the load. So the load exceeds the continuous capability from 360 to 858.3 r/min.
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-CV-120")
    finding = next(o for o in spec["outcomes"] if o["rule"] == "torque-margin-continuous")
    values = finding["values"]
    assert finding["outcome"] == "fail" and finding["severity"] == "error"
    assert values["worst_speed"]["value"] == pytest.approx(360, rel=1e-4)
    assert values["required"]["value"] == pytest.approx(173.04, abs=0.01)
    assert values["capability"]["value"] == pytest.approx(134.8, abs=0.05)
    ts = series["torque_speed"]
    cont, load = np.array(ts["motor_continuous"]), np.array(ts["load_curve"])
    step = float(np.max(np.diff(cont[:, 0])))  # the chart's sampling step of the capability: 3600/40 = 90 r/min
    # on the chart, at the finding's speed, the load is the need and the capability the rule's "gives"
    assert load[0, 0] == pytest.approx(values["worst_speed"]["value"], rel=1e-4)
    assert load[0, 1] == pytest.approx(values["required"]["value"], rel=1e-4)
    assert np.interp(load[0, 0], cont[:, 0], cont[:, 1]) == pytest.approx(values["capability"]["value"], rel=1e-3)
    # where the drawn load line crosses the drawn capability line (linear between the chart's own points)
    gap = load[:, 1] - np.interp(load[:, 0], cont[:, 0], cont[:, 1])
    k = int(np.flatnonzero((gap[:-1] > 0) & (gap[1:] <= 0))[0])
    drawn = load[k, 0] + gap[k] / (gap[k] - gap[k + 1]) * (load[k + 1, 0] - load[k, 0])
    assert (gap[: k + 1] > 0).all() and (gap[k + 1:] <= 0).all()  # above the capability from 360 r/min to there
    assert drawn == pytest.approx(858.3, abs=step)
    # and the marked crossing (bisection on the rule's own functions) is the hand value
    (crossing,) = ts["continuous_crossings"]
    assert crossing["direction"] == "falls below"
    assert crossing["speed"] == pytest.approx(858.3, abs=0.1) and crossing["torque"] == pytest.approx(173.04, abs=0.01)


def test_no_chart_label_overlaps_another(demo):
    for spec, series in demo:
        for key, data in series.items():
            # the boxes the layout gives each label (from the font's advance widths; the browser test measures the
            # drawn text too)
            fig = charts.figure(key, data, failing=charts.failing_rules(spec))
            legends = [b for b in [fig.legend_box, *(ax.legend_box for ax in fig.axes)] if b is not None]
            boxes = [(lb.text, lb.box) for ax in fig.axes for lb in ax.labels]
            for (ta, a), (tb, b) in itertools.combinations(boxes, 2):
                assert not a.overlaps(b), (spec["tag"], key, ta, tb)
            for text, box in boxes:
                # inside the drawing (not cut off at its edge) and clear of the legend
                assert box.inside(fig.box), (spec["tag"], key, text)
                assert not any(box.overlaps(leg) for leg in legends), (spec["tag"], key, text)


def test_duty_chart_rms_line_is_the_rules_rms_torque(demo):
    # the RMS line on the duty chart is the torque torque-rms-duty-cycle judges (every second counted for the
    # S3 hoist's rating): not a second computation that could disagree with the finding
    checked = 0
    for spec, series in demo:
        rule = next((o for o in spec["outcomes"] if o["rule"] == "torque-rms-duty-cycle"
                     and o["outcome"] in ("pass", "fail")), None)
        if rule is None or "duty" not in series:
            continue
        assert series["duty"]["rms_torque"] == pytest.approx(rule["values"]["rms_torque"]["value"], rel=1e-4)
        text = charts.describe("duty", series["duty"]).description
        assert "RMS torque" in text and "motor rated torque" in text
        checked += 1
    assert checked >= 2  # HR-H-310 and HR-SV-410


def test_back_emf_chart_states_its_factor(demo):
    # SV-410: Ke·ω gives 607.5 V line RMS at 4500 r/min; the rectified peak 902.1 V = √2 × 607.5 × 1.05, and the
    # chart says so (1.05: cold magnets and tolerance, physics.machines default, docs/references.md R20)
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-SV-410")
    data = series["back_emf"]
    assert data["rectified_peak"][-1] == pytest.approx(2 ** 0.5 * data["emf_line_rms"][-1] * 1.05, rel=1e-3)
    assert "× 1.05 for cold magnets" in charts.describe("back_emf", data).description


def test_failing_points_are_marked_where_the_finding_is(demo):
    # CV-120 fails torque-margin-continuous at 360 r/min needing 173 N·m (hand calculation in
    # test_load_curve_crosses_capability_where_the_rule_says): the chart crosses that point out, labelled
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-CV-120")
    values = next(o for o in spec["outcomes"] if o["rule"] == "torque-margin-continuous")["values"]
    fig = charts.figure("torque_speed", series["torque_speed"], failing=charts.failing_rules(spec))
    ax = fig.axes[0]
    crosses = [list(zip(line.xs, line.ys, strict=True)) for line in ax.lines if line.marker == "X"]
    assert crosses == [[(pytest.approx(values["worst_speed"]["value"], rel=1e-4),
                         pytest.approx(values["required"]["value"], rel=1e-4))]]
    assert any("FAILS: torque-margin-continuous" in lb.text for lb in ax.labels)


def test_a_point_whose_rule_passes_is_not_marked(demo):
    # every point the demo's charts mark belongs to a rule that failed in that spec, and a spec whose point rules
    # pass (CV-110: torque-peak passes; torque-margin-continuous only notes the cooling table, at info) has no cross
    for spec, series in demo:
        failing = charts.failing_rules(spec)
        key = "starting" if "starting" in series else "torque_speed"
        fig = charts.figure(key, series[key], failing=failing)
        labels = " ".join(lb.text for lb in fig.axes[0].labels)
        for rule in {p.get("rule") for p in series[key]["load_points"] if p.get("rule")}:
            assert (f"FAILS: {rule}" in labels) == (rule in failing), (spec["tag"], rule)
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-CV-110")
    outcomes = {o["rule"]: (o["outcome"], o.get("severity")) for o in spec["outcomes"]}
    assert outcomes["torque-margin-continuous"] == ("fail", "info") and outcomes["torque-peak"][0] == "pass"
    fig = charts.figure("torque_speed", series["torque_speed"], failing=charts.failing_rules(spec))
    assert not [line for line in fig.axes[0].lines if line.marker == "X"]


def test_hoist_chart_hatches_the_lowering_quadrant_with_the_braking_rule(demo):
    # H-310 lowers 3300 kg on 2 falls from a 0.32 m drum: T_hold = 3300 × 9.80665 / 2 × 0.16 = 2588.9 N·m at the
    # drum; less the hoist's losses (η_load 95 %) and back through the gearbox (η_rev = η 95 %, i = 40):
    # 2588.9 × 0.95 × 0.95 / 40 = 58.41 N·m holding the load at the motor while it runs backwards at
    # −0.3 m/s × 2 / (π × 0.32 m) × 60 × 40 = −1432.4 r/min. No braking means: regen-braking-energy fails.
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-H-310")
    b = series["torque_speed"]["braking"]
    assert b["quadrant"] == "reverse-speed" and b["means"] == "none"
    assert b["load"][0] == [pytest.approx(-1432.4, abs=0.1), pytest.approx(58.41, abs=0.01)]
    # the capability there is the motoring capability at the same speed magnitude (a motor brakes with what it gives)
    motoring = {n: t for n, t in series["torque_speed"]["motor_continuous"]}
    assert b["motor_continuous"][0][1] <= max(motoring.values())
    fig = charts.figure("torque_speed", series["torque_speed"], failing=charts.failing_rules(spec))
    ax = fig.axes[0]
    (hatched,) = ax.regions
    assert hatched.label == "Generating quadrant: the load drives the motor"
    x0, x1 = sorted((hatched.x0, hatched.x1))
    assert x1 == pytest.approx(0.0, abs=1e-9) and x0 < -1432  # the lowering half of the plane, speed < 0
    label = next(lb.text for lb in ax.labels if lb.text.startswith("GENERATING"))
    assert "braking means: none" in label and "FAILS: regen-braking-energy" in label


def test_no_generating_quadrant_where_the_load_never_drives(demo):
    # CV-120 hauls uphill (14°, μ 0.03: m·g·(μ·cos θ + sin θ) > 0) and the pump and fan never drive their motors
    for tag in ("HR-CV-120", "HR-P-210", "HR-F-610"):
        spec, series = next(x for x in demo if x[0]["tag"] == tag)
        assert "braking" not in series["torque_speed"], tag
        fig = charts.figure("torque_speed", series["torque_speed"])
        assert not fig.axes[0].regions, tag


def test_demo_hazards_come_only_from_failing_or_unchecked_safety_rules(demo):
    from rulecheck.report import cautions

    for spec, _series in demo:
        for selected in cautions.select_hazards([spec]):
            for rule in selected.rules:
                o = next(o for o in spec["outcomes"] if o["rule"] == rule)
                assert o["safety"] is True and o["outcome"] in ("fail", "waived", "not-checked"), (spec["tag"], rule)
        # hoist wording only where a load hangs: H-310 (hoist) and SV-410 (a vertical axis) may raise it
        keys = [h.hazard.key for h in cautions.select_hazards([spec])]
        if spec["tag"] not in ("HR-H-310", "HR-SV-410"):
            assert "suspended-load" not in keys, spec["tag"]
    spec = next(s for s, _ in demo if s["tag"] == "HR-H-310")
    assert "suspended-load" in [h.hazard.key for h in cautions.select_hazards([spec])]  # its brake is too weak
    # every rule that passes, across the demo, raises nothing on its own
    passes = [{"tag": s["tag"], "outcomes": [o for o in s["outcomes"] if o["outcome"] == "pass"]} for s, _ in demo]
    assert cautions.select_hazards(passes) == []


def test_back_emf_chart_marks_where_the_trip_level_is_reached(demo):
    # SV-410: Ke = 607.5 V / 4500 r/min = 0.135 V per r/min (line RMS); the rectified peak √2 × 0.135 × n × 1.05
    # reaches the 800 V trip at n = 800 / (√2 × 0.135 × 1.05) = 3990.8 r/min: the safe speed in
    # pm-uncontrolled-generation's finding ("limit the reachable speed to below 3991 r/min"), which fails
    spec, series = next(x for x in demo if x[0]["tag"] == "HR-SV-410")
    rule = next(o for o in spec["outcomes"] if o["rule"] == "pm-uncontrolled-generation")
    crossing = series["back_emf"]["trip_crossing"]
    assert crossing["speed"] == pytest.approx(800 / (2 ** 0.5 * 0.135 * 1.05), abs=0.1)
    assert crossing["speed"] == pytest.approx(rule["values"]["safe_speed"]["value"], rel=1e-4)
    fig = charts.figure("back_emf", series["back_emf"], failing=charts.failing_rules(spec))
    assert rule["outcome"] == "fail"
    assert any(lb.text.endswith("FAILS: pm-uncontrolled-generation") for lb in fig.axes[0].labels)
    assert [line.marker for line in fig.axes[0].lines if line.marker in ("X", "D")] == ["X"]
