"""Charts: deterministic SVG and PNG, greyscale-distinguishable series, text equivalents, bad data refused."""

from __future__ import annotations

import itertools
import re
import time

import pytest

from rulecheck.report import charts

from . import sample


def _figure(key: str, data: dict):
    return charts.figure(key, data)


@pytest.mark.parametrize("key,spec", [("torque_speed", sample.conveyor), ("duty", sample.conveyor),
                                      ("back_emf", sample.servo)])
def test_svg_is_deterministic_and_well_formed(key, spec):
    import xml.etree.ElementTree as ET

    data = spec()["charts"][key]
    first = charts.svg(key, data, chart_id="a")
    assert first == charts.svg(key, data, chart_id="a")
    root = ET.fromstring(charts.svg_body(key, data))  # parses as XML (the browser test draws it)
    assert root.tag == "{http://www.w3.org/2000/svg}svg" and root.get("viewBox")


def test_svg_is_inline_ready_with_title_and_description():
    data = sample.servo()["charts"]["back_emf"]
    svg = charts.svg("back_emf", data, chart_id="dt2-back_emf")
    assert svg.startswith("<svg ") and svg.endswith("</svg>")
    assert 'role="img"' in svg and 'aria-labelledby="dt2-back_emf-title dt2-back_emf-desc"' in svg
    assert '<title id="dt2-back_emf-title">' in svg and "DC-bus trip level 800 V" in svg
    for absent in ("<?xml", "<!DOCTYPE", "<!--", "<metadata", "http://", "https://", "<script", "Date"):
        assert absent not in svg, absent


def test_svg_ids_are_prefixed_so_charts_can_share_a_page():
    data = sample.conveyor()["charts"]["torque_speed"]
    a = charts.svg("torque_speed", data, chart_id="one")
    b = charts.svg("torque_speed", data, chart_id="two")
    ids_a = set(re.findall(r'id="([^"]+)"', a))
    assert ids_a and all(i.startswith("one-") for i in ids_a)
    assert not ids_a & set(re.findall(r'id="([^"]+)"', b))
    # every internal reference points at an id of the same chart
    refs = re.findall(r'(?:href="#|url\(#)([^")]+)', a)
    assert refs and set(refs) <= ids_a


@pytest.mark.parametrize("key,spec", [("torque_speed", sample.conveyor), ("back_emf", sample.servo)])
def test_series_differ_by_line_style_or_marker_not_only_colour(key, spec):
    fig = _figure(key, spec()["charts"][key])
    ax = fig.axes[0]
    styles = {}
    for line in ax.lines:
        if line.label:
            styles[line.label] = (line.style, line.marker, round(line.width, 1))
    for level in ax.levels:  # reference levels (trip, available voltage) are series too
        if level.label:
            styles[level.label] = (level.style, "", round(level.width, 1))
    assert len(styles) >= 3
    assert len(set(styles.values())) == len(styles), styles


def test_duty_has_speed_and_torque_panels_with_units():
    fig = _figure("duty", sample.conveyor()["charts"]["duty"])
    labels = [ax.ylabel for ax in fig.axes]
    assert labels == ["Speed at motor shaft (r/min)", "Torque at motor shaft (N·m)"]
    assert fig.axes[1].xlabel == "Time (s)"


def test_axes_carry_units_and_customary_torque():
    fig = _figure("torque_speed", sample.conveyor()["charts"]["torque_speed"])
    # the axes name the shaft: every torque and speed on the charts is at the motor shaft
    assert fig.axes[0].xlabel == "Speed at motor shaft (r/min)"
    assert fig.axes[0].ylabel == "Torque at motor shaft (N·m)"
    text = charts.describe("torque_speed", sample.conveyor()["charts"]["torque_speed"], "customary")
    assert text.columns == ["series", "speed (r/min)", "torque (lbf·ft)"]
    # 110 N·m ÷ 1.3558179483314004 N·m per lbf·ft (lbf = 4.4482216152605 N, ft = 0.3048 m, NIST SP 811)
    assert ["motor peak", "0", "81.13"] in text.rows


def test_text_equivalent_reads_the_data():
    text = charts.describe("duty", sample.conveyor()["charts"]["duty"])
    assert text.description == ("Duty cycle over 60 s in 7 samples: speed 0 to 1455 r/min, torque -20 to 70 N·m.")
    assert text.rows[1] == ["2", "1455", "70"]
    plain = text.as_text()
    assert plain.splitlines()[0] == "Duty cycle: speed and torque over time"
    assert "time (s)  speed (r/min)  torque (N·m)" in plain


def test_speed_in_other_units_is_shown_in_r_min():
    data = {"speed_unit": "rad/s", "torque_unit": "kN*m", "motor_continuous": [[0, 1.0], [157.07963267948966, 1.0]]}
    text = charts.describe("torque_speed", data)
    # 157.08 rad/s × 60/(2π) = 1500 r/min; 1 kN·m = 1000 N·m
    assert text.rows[1] == ["motor continuous", "1500", "1000"]


@pytest.mark.parametrize("data,message", [
    ({"motor_continuous": [[0, "x"]]}, "motor_continuous[0] is not a finite number"),
    ({"motor_continuous": [[0, float("nan")]]}, "not a finite number"),
    ({"motor_continuous": "a string"}, "not a list of points"),
    ({"motor_continuous": [[0, 1, 2]]}, "is not a point of 2 numbers"),
    ({"speed_unit": "Hz", "motor_continuous": [[0, 1]]}, "not a shaft-speed unit"),
    ({}, "has no data"),
])
def test_bad_torque_speed_data_is_refused(data, message):
    with pytest.raises(charts.ChartDataError, match=re.escape(message)):
        charts.svg("torque_speed", data)


def test_bad_back_emf_data_is_refused():
    data = {"speed": [0, 1000], "emf_line_rms": [0, 98, 196]}
    with pytest.raises(charts.ChartDataError, match="3 values for 2 speeds"):
        charts.describe("back_emf", data)


def test_hostile_labels_draw_as_text():
    data = sample.hostile()["charts"]["torque_speed"]
    data["load_points"].append({"speed": 700, "torque": 3, "label": "$\\bogus{$"})
    data["duty_segments"] = [{"speed_from": 0, "speed_to": 9, "torque": 1, "label": "_hidden $x$"}]
    svg = charts.svg("torque_speed", data)
    assert "<script" not in svg  # labels are written as escaped text, never as markup
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in svg and "$\\bogus{$" in svg and "_hidden $x$" in svg
    fig = _figure("torque_speed", data)
    # labels of nearby points share one text ("a, b"): each hostile label is drawn as it is, inside one of them
    drawn = " | ".join(lb.text for lb in fig.axes[0].labels)
    for label in ("<script>alert(1)</script>", "$\\bogus{$", "_hidden $x$"):
        assert label in drawn, label
    rows = charts.describe("torque_speed", data).rows
    assert ["load point <script>alert(1)</script>", "500", "12.5"] in rows


def test_a_long_duty_cycle_draws_quickly():
    n = 200_000
    samples = [[i * 0.01, 1455.0 * ((i // 500) % 2), 40.0 * ((i // 300) % 3 - 1)] for i in range(n)]
    data = {"time_unit": "s", "speed_unit": "r/min", "torque_unit": "N*m", "samples": samples}
    start = time.perf_counter()
    svg = charts.svg("duty", data)
    elapsed = time.perf_counter() - start
    assert len(svg) < 2_000_000  # thinned to a plotting size, not 200 000 vertices
    assert "First 24 of 200000 samples shown." in charts.describe("duty", data).note
    assert elapsed < 20.0, elapsed  # generous for a shared 2-core machine; typically about 1 s


def test_available_lists_known_charts_in_order():
    assert charts.available(sample.servo()) == ["torque_speed", "back_emf"]
    assert charts.available({"charts": {"duty": {}, "mystery": {}}}) == ["duty"]
    assert charts.available({"charts": None}) == []


def test_a_point_is_marked_failing_only_when_its_rule_failed_in_the_result():
    # the verdict comes from the result (failing_rules), never from the chart data: the same data drawn with and
    # without the failing rule differ by the cross and the "FAILS: <rule>" label, in the drawing and in the text
    data = sample.conveyor()["charts"]["torque_speed"]
    data["load_points"].append({"speed": 300, "torque": 60, "label": "continuous worst",
                                "rule": "torque-margin-continuous"})

    def marks(failing):
        fig = charts.figure("torque_speed", data, failing=failing)
        ax = fig.axes[0]
        crosses = [line for line in ax.lines if line.marker == "X"]
        labels = " | ".join(lb.text for lb in ax.labels)
        return crosses, labels, charts.describe("torque_speed", data, failing=failing)

    crosses, labels, text = marks(())
    assert not crosses and "FAILS" not in labels and "FAILS" not in text.description
    crosses, labels, text = marks({"torque-margin-continuous"})
    assert len(crosses) == 1 and (crosses[0].xs, crosses[0].ys) == ([300], [60])
    assert "FAILS: torque-margin-continuous" in labels
    assert "FAILS: torque-margin-continuous at the continuous worst point" in text.description
    assert ["load point continuous worst (FAILS: torque-margin-continuous)", "300", "60"] in text.rows


def test_failing_rules_reads_fails_at_error_or_warning_only():
    spec = {"outcomes": [{"rule": "a", "outcome": "fail", "severity": "error"},
                         {"rule": "b", "outcome": "fail", "severity": "warning"},
                         {"rule": "c", "outcome": "fail", "severity": "info"},
                         {"rule": "d", "outcome": "pass", "severity": "error"},
                         {"rule": "e", "outcome": "waived", "severity": "error"}]}
    assert charts.failing_rules(spec) == {"a", "b"}


def test_starting_chart_without_its_curves_is_refused():
    with pytest.raises(charts.ChartDataError, match="needs the motor's starting curve and the load curve"):
        charts.describe("starting", {"motor_starting": [[0, 1]], "load_curve": [[0, 1], [10, 1]]})


def _text_boxes(fig):
    return [(lb.text, lb.box) for ax in fig.axes for lb in ax.labels]


def test_crowded_labels_are_placed_apart():
    # twelve labelled points in a small corner of the plane, three of them failing, and a crossing among them:
    # the boxes of the placed labels never overlap (the greedy placement in plot.Figure._place_labels)
    data = sample.conveyor()["charts"]["torque_speed"]
    data["load_points"] = [{"speed": 1000 + 40 * k, "torque": 50 + 3 * (k % 4), "label": f"point number {k}",
                            "rule": f"rule-{k}"} for k in range(12)]
    data["continuous_crossings"] = [{"speed": 1100, "torque": 52, "direction": "falls below"}]
    fig = charts.figure("torque_speed", data, failing={"rule-1", "rule-5", "rule-9"})
    boxes = _text_boxes(fig)
    assert sum("FAILS" in text for text, _ in boxes) >= 1 and len(boxes) >= 3
    for (ta, a), (tb, b) in itertools.combinations(boxes, 2):
        assert not a.overlaps(b), (ta, tb)


def test_back_emf_level_labels_close_together_do_not_overlap():
    # an available voltage and a trip level 1 % apart: their labels are placed apart by their drawn boxes
    data = {"speed": [0, 1000, 2000], "emf_line_rms": [0, 300, 600], "available_voltage": 400, "dc_bus_trip": 404}
    boxes = _text_boxes(charts.figure("back_emf", data))
    assert len(boxes) == 2 and not boxes[0][1].overlaps(boxes[1][1]), boxes


def test_duty_chart_marks_a_failing_rms():
    data = {**sample.conveyor()["charts"]["duty"], "rms_torque": 48.0, "rated_torque": 40.0,
            "rms_rule": "torque-rms-duty-cycle"}
    fig = charts.figure("duty", data, failing={"torque-rms-duty-cycle"})
    assert [lb.text for lb in fig.axes[1].labels] == ["FAILS: torque-rms-duty-cycle"]
    assert [line.marker for line in fig.axes[1].lines if line.marker == "X"] == ["X"]
    text = charts.describe("duty", data, failing={"torque-rms-duty-cycle"})
    assert "FAILS: torque-rms-duty-cycle" in text.description
    assert not charts.figure("duty", data).axes[1].labels  # passing: no mark


def test_a_long_label_at_the_edge_stays_inside_the_drawing():
    # three points close together at 64 % of the plotted speed range share one long label written to their right:
    # wider than the room there, it is moved back inside the figure, not cut off
    data = sample.conveyor()["charts"]["torque_speed"]
    data["load_points"] = [{"speed": 1900 + k, "torque": 60.0, "label": f"{k} a rather long label for a point"}
                           for k in range(3)]
    fig = charts.figure("torque_speed", data)
    for text, box in _text_boxes(fig):
        assert box.inside(fig.box), text
