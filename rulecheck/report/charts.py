"""Charts for the reports: SVG text for HTML and PDF, and a text equivalent of each.

Four charts are drawn from the ``charts`` part of a spec's result (see the
result contract): the torque–speed plane of a variable-speed drive train
(``torque_speed``), the start of a direct-on-line or soft-starter drive train
against its load (``starting``), the duty cycle over time (``duty``) and the
permanent-magnet back-EMF against the voltages it must stay under (``back_emf``).
They plot the numbers given; nothing is computed. A point whose rule failed in
the result (``failing``) is crossed out and labelled "FAILS: <rule>".

Each series differs by line style and marker as well as by shade, so the charts
read in greyscale print. They are drawn by :mod:`rulecheck.report.plot` (SVG
written directly, a few milliseconds a chart): deterministic, no date or creator
metadata, text as text in DejaVu Sans (or a similar sans-serif where it is missing).
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from rulecheck.report import plot
from rulecheck.report.common import plain
from rulecheck.units import QuantityError, format_value, parse_quantity

__all__ = ["CHART_KEYS", "ChartDataError", "ChartText", "available", "describe", "draw_series",
           "failing_rules", "figure", "svg", "svg_body"]

CHART_KEYS = ("starting", "torque_speed", "duty", "back_emf")
MAX_PLOT_POINTS = 4000  # more points than this add nothing visible at report size
MAX_TABLE_ROWS = 24  # a text equivalent stays short enough to read aloud
MAX_LABELS = 12  # annotations beyond this clutter the plane

_INK = "#1d2b36"
_GREY = "#6b7680"
_LOAD = "#000000"
_ACCENT = "#7a4f12"
_FAIL = "#b00020"  # failing points: also a large cross and a "FAILS" label, never colour alone


class ChartDataError(ValueError):
    """The chart data in a result cannot be drawn; the message says which part is wrong."""


@dataclass
class ChartText:
    """The text equivalent of a chart: a title, a description in words and a small table."""

    key: str
    title: str
    description: str
    columns: list[str]
    rows: list[list[str]]
    note: str = ""
    series: list[str] = field(default_factory=list)

    def as_text(self) -> str:
        """Return the title, description and table as plain text (for the e-mail's text part)."""
        widths = [len(c) for c in self.columns]
        for row in self.rows:
            widths = [max(w, len(cell)) for w, cell in zip(widths, row, strict=False)]
        lines = [self.title, self.description]
        if self.columns:
            lines.append("  ".join(c.ljust(w) for c, w in zip(self.columns, widths, strict=False)).rstrip())
            lines.extend("  ".join(cell.ljust(w) for cell, w in zip(row, widths, strict=False)).rstrip()
                         for row in self.rows)
        if self.note:
            lines.append(self.note)
        return "\n".join(lines)


# --- reading the data --------------------------------------------------------


def _num(value: Any, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(float(value)):
        raise ChartDataError(f"{what} is not a finite number: {plain(value, 40)!r}")
    return float(value)


def _pairs(seq: Any, what: str, width: int = 2) -> list[tuple[float, ...]]:
    if not isinstance(seq, Sequence) or isinstance(seq, (str, bytes)):
        raise ChartDataError(f"{what} is not a list of points")
    out = []
    for i, item in enumerate(seq):
        if not isinstance(item, Sequence) or isinstance(item, (str, bytes)) or len(item) != width:
            raise ChartDataError(f"{what}[{i}] is not a point of {width} numbers")
        out.append(tuple(_num(v, f"{what}[{i}]") for v in item))
    return out


def _series(seq: Any, what: str) -> list[float]:
    if not isinstance(seq, Sequence) or isinstance(seq, (str, bytes)):
        raise ChartDataError(f"{what} is not a list of numbers")
    return [_num(v, f"{what}[{i}]") for i, v in enumerate(seq)]


def _thin(points: list, limit: int = MAX_PLOT_POINTS) -> list:
    """Return at most ``limit`` points, evenly spaced, always keeping the last."""
    if len(points) <= limit:
        return points
    step = math.ceil(len(points) / limit)
    thinned = points[::step]
    if thinned[-1] is not points[-1]:
        thinned.append(points[-1])
    return thinned


def _label(text: Any, limit: int = 40) -> str:
    """Return a spec label for a chart: one line, short."""
    return plain(text, limit)


@dataclass(frozen=True)
class _Axis:
    """How one axis is shown: its unit text and the factor from the data's unit."""

    unit: str
    factor: float


def _speed_axis(unit: Any) -> _Axis:
    text = plain(unit, 20) or "r/min"
    if text in ("r/min", "rpm"):
        return _Axis("r/min", 1.0)
    try:
        return _Axis("r/min", parse_quantity(f"1 {text}", "rotational_speed") * 60.0 / (2.0 * math.pi))
    except QuantityError as exc:
        raise ChartDataError(f"speed unit {text!r} is not a shaft-speed unit") from exc


def _quantity_axis(unit: Any, kind_name: str, default: str, units: str) -> _Axis:
    text = plain(unit, 20) or default
    try:
        si = parse_quantity(f"1 {text}", kind_name)
    except QuantityError as exc:
        raise ChartDataError(f"unit {text!r} is not a {kind_name} unit") from exc
    if units == "customary" and kind_name == "torque":
        return _Axis("lbf·ft", si / parse_quantity("1 lbf*ft", "torque"))
    shown = {"torque": "N·m", "voltage": "V"}.get(kind_name, text)
    return _Axis(shown, si)


def _fmt(x: float) -> str:
    return format_value(x, None)


# --- the three charts: data, text equivalent, drawing ------------------------


@dataclass
class _TorqueSpeed:
    speed: _Axis
    torque: _Axis
    cont: list[tuple[float, float]]
    peak: list[tuple[float, float]]
    points: list[_Point]
    segments: list[tuple[float, float, float, str]]
    load: list[tuple[float, float]] = field(default_factory=list)
    failing: frozenset[str] = frozenset()
    braking: _Braking | None = None
    crossings: list[_Point] = field(default_factory=list)

    def fails(self, p: _Point) -> bool:
        """Whether the rule that judges the point failed in this spec's result."""
        return bool(p.rule) and p.rule in self.failing


@dataclass
class _Braking:
    """The generating quadrant where the load overhauls: its load, the motor's capability there, the means."""

    reverse_speed: bool  # a hoist lowering (speed < 0, torque > 0); else a downhill belt (speed > 0, torque < 0)
    load: list[tuple[float, float]]
    cont: list[tuple[float, float]]
    peak: list[tuple[float, float]]
    means: str
    rule: str = ""


def _braking(data: Any, conv: Any) -> _Braking | None:
    if data is None:
        return None
    if not isinstance(data, Mapping):
        raise ChartDataError("braking is not a mapping")
    load = conv(_pairs(data.get("load") or [], "braking.load"))
    if len(load) < 2:
        raise ChartDataError("braking.load has fewer than two points")
    return _Braking(data.get("quadrant") == "reverse-speed", load,
                    conv(_pairs(data.get("motor_continuous") or [], "braking.motor_continuous")),
                    conv(_pairs(data.get("motor_peak") or [], "braking.motor_peak")), plain(data.get("means"), 40),
                    plain(data.get("rule"), 80))


@dataclass(frozen=True)
class _Point:
    """An operating point: speed, torque, label and the rule that judges it ("" for none)."""

    n: float
    t: float
    label: str
    rule: str = ""


def _load_points(data: Mapping[str, Any], sp: _Axis, tq: _Axis) -> list[_Point]:
    """The operating points of a torque–speed or starting chart, in the report's units."""
    points = []
    for i, p in enumerate(data.get("load_points") or []):
        if not isinstance(p, Mapping):
            raise ChartDataError(f"load_points[{i}] is not a point")
        points.append(_Point(_num(p.get("speed"), f"load_points[{i}].speed") * sp.factor,
                             _num(p.get("torque"), f"load_points[{i}].torque") * tq.factor, plain(p.get("label"), 60),
                             plain(p.get("rule"), 80)))
    return points


def _torque_speed(data: Mapping[str, Any], units: str, failing: frozenset[str] = frozenset()) -> _TorqueSpeed:
    sp = _speed_axis(data.get("speed_unit"))
    tq = _quantity_axis(data.get("torque_unit"), "torque", "N*m", units)

    def conv(pts: list[tuple[float, ...]]) -> list[tuple[float, float]]:
        return [(n * sp.factor, t * tq.factor) for n, t in pts]

    cont = conv(_pairs(data.get("motor_continuous") or [], "motor_continuous"))
    peak = conv(_pairs(data.get("motor_peak") or [], "motor_peak"))
    points = _load_points(data, sp, tq)
    segments = []
    for i, s in enumerate(data.get("duty_segments") or []):
        if not isinstance(s, Mapping):
            raise ChartDataError(f"duty_segments[{i}] is not a segment")
        segments.append((_num(s.get("speed_from"), f"duty_segments[{i}].speed_from") * sp.factor,
                         _num(s.get("speed_to"), f"duty_segments[{i}].speed_to") * sp.factor,
                         _num(s.get("torque"), f"duty_segments[{i}].torque") * tq.factor, plain(s.get("label"), 60)))
    load = conv(_pairs(data.get("load_curve") or [], "load_curve"))
    if not (cont or peak or points or segments or load):
        raise ChartDataError("the torque–speed chart has no data")
    crossings = []
    for i, c in enumerate((data.get("continuous_crossings") or [])[:MAX_LABELS]):
        if not isinstance(c, Mapping):
            raise ChartDataError(f"continuous_crossings[{i}] is not a point")
        n = _num(c.get("speed"), f"continuous_crossings[{i}].speed") * sp.factor
        crossings.append(_Point(n, _num(c.get("torque"), f"continuous_crossings[{i}].torque") * tq.factor,
                                f"load {plain(c.get('direction'), 20)} continuous capability at {_fmt(n)} {sp.unit}"))
    return _TorqueSpeed(sp, tq, cont, peak, points[:MAX_PLOT_POINTS], segments[:MAX_PLOT_POINTS],
                        load[:MAX_PLOT_POINTS], frozenset(failing), _braking(data.get("braking"), conv), crossings)


def _describe_torque_speed(d: _TorqueSpeed) -> ChartText:
    su, tu = d.speed.unit, d.torque.unit
    words = []
    if d.cont:
        words.append(f"motor continuous capability {_fmt(min(t for _, t in d.cont))} to "
                     f"{_fmt(max(t for _, t in d.cont))} {tu} from {_fmt(d.cont[0][0])} to {_fmt(d.cont[-1][0])} {su}")
    if d.peak:
        words.append(f"peak capability up to {_fmt(max(t for _, t in d.peak))} {tu}")
    if d.load:
        words.append(f"load {_fmt(d.load[0][1])} {tu} at {_fmt(d.load[0][0])} {su} to {_fmt(d.load[-1][1])} {tu} "
                     f"at {_fmt(d.load[-1][0])} {su} (load model across the speed range)")
    words.append(f"{len(d.points)} load operating point{'s' if len(d.points) != 1 else ''}")
    for p in d.points:
        if d.fails(p):
            words.append(f"FAILS: {p.rule} at the {p.label} point, {_fmt(p.t)} {tu} at {_fmt(p.n)} {su}")
    words += [c.label for c in d.crossings]
    words.append(f"{len(d.segments)} duty segment{'s' if len(d.segments) != 1 else ''}")
    if d.braking:
        b = d.braking
        words.append(f"generating quadrant ({'lowering' if b.reverse_speed else 'overhauling'}): the load drives "
                     f"the motor with {_fmt(abs(b.load[0][1]))} {tu} from {_fmt(b.load[0][0])} to "
                     f"{_fmt(b.load[-1][0])} {su}, braking means: {b.means}"
                     + (f" (FAILS: {b.rule})" if b.rule and b.rule in d.failing else ""))
    rows = []
    for n, t in d.cont:
        rows.append(["motor continuous", _fmt(n), _fmt(t)])
    for n, t in d.peak:
        rows.append(["motor peak", _fmt(n), _fmt(t)])
    for n, t in d.load:
        rows.append(["load", _fmt(n), _fmt(t)])
    for p in d.points:
        rows.append([f"load point {p.label}".strip() + (f" (FAILS: {p.rule})" if d.fails(p) else ""), _fmt(p.n),
                     _fmt(p.t)])
    for n0, n1, t, label in d.segments:
        rows.append([f"duty segment {label}".strip(), f"{_fmt(n0)} to {_fmt(n1)}", _fmt(t)])
    rows += [[c.label.split(" at ")[0], _fmt(c.n), _fmt(c.t)] for c in d.crossings]
    if d.braking:
        rows += [["load overhauling (braking)", _fmt(n), _fmt(t)] for n, t in d.braking.load]
        rows += [["motor continuous, braking", _fmt(n), _fmt(t)] for n, t in d.braking.cont]
        rows += [["motor peak, braking", _fmt(n), _fmt(t)] for n, t in d.braking.peak]
    note = f"First {MAX_TABLE_ROWS} of {len(rows)} rows shown." if len(rows) > MAX_TABLE_ROWS else ""
    return ChartText(
        "torque_speed",
        "Torque–speed plane: motor capability against the load",
        "Torque against speed at the motor shaft: " + "; ".join(words) + ".",
        ["series", f"speed ({su})", f"torque ({tu})"],
        rows[:MAX_TABLE_ROWS],
        note,
        ["motor continuous: solid line, round markers",
         "motor peak (drive current limit included): dashed line, square markers",
         "load across the speed range: thick black line", "load operating points: black triangles",
         "points whose rule fails: large crosses labelled FAILS with the rule",
         "where the load meets the continuous capability: diamonds",
         "generating quadrant where the load overhauls: hatched, labelled, with the load and capability there",
         "duty segments: dash-dot lines with cross ends"],
    )


def _label_groups(points: list[_Point], d: Any) -> list[tuple[float, float, str]]:
    """Return the point labels merged: points within 15 % of the speed span and 8 % of the torque span of each other
    share one label ("peak, RMS") at the highest of them, with a line "FAILS: <rule>" for each of their rules that
    failed."""
    curves = (d.cont, d.peak, d.load) if isinstance(d, _TorqueSpeed) else (d.during, d.full, d.load)
    speeds = [p.n for p in points] + [n for curve in curves for n, _ in curve]
    torques = [p.t for p in points] + [t for curve in curves for _, t in curve]
    span = (max(speeds) - min(speeds)) if speeds else 0.0
    t_span = (max(torques) - min(torques)) if torques else 0.0
    groups: list[list[_Point]] = []
    for p in sorted((p for p in points if p.label or d.fails(p)), key=lambda p: (p.n, p.t)):
        near = next((g for g in groups if p.n - g[0].n <= 0.15 * span and abs(p.t - g[0].t) <= 0.08 * t_span), None)
        if near is not None:
            near.append(p)
        else:
            groups.append([p])
    out = []
    for g in groups:
        top = max(g, key=lambda p: p.t)
        names = list(dict.fromkeys(_label(p.label) for p in g if p.label))
        text = ", ".join(names[:3]) + (f" (+{len(names) - 3})" if len(names) > 3 else "")
        fails = list(dict.fromkeys(f"FAILS: {_label(p.rule, 60)}" for p in g if d.fails(p)))
        out.append((top.n, top.t, "\n".join([x for x in (text, *fails) if x])))
    return out


def _annotate(ax: plot.Axes, labels: list[tuple[float, float, str]], va: str = "bottom",
              dy: float = 6.0) -> None:
    """Write each label beside its point: to the right, or to the left in the right third of the plot (the figure's
    layout then moves labels apart)."""
    lo, hi = ax.limits()[:2]
    for n, t, text in labels:
        right = n > lo + 0.66 * (hi - lo)
        ax.annotate(text, n, t, dx=-6.0 if right else 6.0, dy=dy, ha="right" if right else "left", va=va,
                    color=_LOAD)


def _draw_braking(ax: plot.Axes, b: _Braking, unit: str, fails: bool) -> None:
    """Draw the generating quadrant: the load and the capability there (styles as motoring), the quadrant hatched
    and labelled with the braking means."""
    for curve, style in ((b.cont, {"style": "-", "width": 1.8, "marker": "o", "size": 3.5}),
                         (b.peak, {"style": "--", "width": 1.4, "marker": "s", "size": 3.5})):
        if curve:
            ax.plot(*zip(*_thin(curve), strict=True), color=_INK, **style)
    ax.plot(*zip(*_thin(b.load), strict=True), color=_LOAD, style="-", width=2.6)
    x0, x1, y0, y1 = ax.limits()
    ax.xlim, ax.ylim = (x0, x1), (y0, y1)
    xs = (x0, 0.0) if b.reverse_speed else (0.0, x1)
    ax.hatch(xs[0], xs[1], 0.0, y1 if b.reverse_speed else y0, color=_GREY,
             label="Generating quadrant: the load drives the motor")
    n, t = b.load[len(b.load) // 2]
    label = f"GENERATING: the load overhauls ({_fmt(abs(t))} {unit})\nbraking means: {b.means}"
    ax.annotate(label + (f"\nFAILS: {b.rule}" if fails else ""), n, t, dy=-8.0 if b.reverse_speed else 8.0,
                ha="center", va="top" if b.reverse_speed else "bottom", color=_LOAD, boxed=True)


def _draw_torque_speed(fig: plot.Figure, d: _TorqueSpeed) -> None:
    ax = fig.add_axes(title="Torque–speed plane", xlabel=f"Speed at motor shaft ({d.speed.unit})",
                      ylabel=f"Torque at motor shaft ({d.torque.unit})")
    fig.legend_below = True
    if d.cont:
        ax.plot(*zip(*_thin(d.cont), strict=True), color=_INK, style="-", width=1.8, marker="o", size=3.5,
                label="Motor continuous")
    if d.peak:
        ax.plot(*zip(*_thin(d.peak), strict=True), color=_INK, style="--", width=1.4, marker="s", size=3.5,
                label="Motor peak")
    if d.load:
        ax.plot(*zip(*_thin(d.load), strict=True), color=_LOAD, style="-", width=2.6, label="Load")
    for i, (n0, n1, t, _name) in enumerate(d.segments):
        ax.plot([n0, n1], [t, t], color=_ACCENT, style="-.", width=1.3, marker="x", size=5,
                label="Duty segments" if i == 0 else None)
    if d.points:
        ax.plot([p.n for p in d.points], [p.t for p in d.points], style="none", marker="^", size=7, color=_LOAD,
                label="Load operating points")
    failed = [p for p in d.points if d.fails(p)]
    if failed:
        ax.plot([p.n for p in failed], [p.t for p in failed], style="none", marker="X", size=12, color=_FAIL,
                edge=_LOAD, edge_width=0.8, label="Point whose rule FAILS")
    if d.crossings:
        ax.plot([c.n for c in d.crossings], [c.t for c in d.crossings], style="none", marker="D", size=6,
                face="white", edge=_LOAD, edge_width=1.4, color=_LOAD, label="Load meets continuous capability")
    ax.level(0.0, color=_GREY, width=0.6)
    if d.braking:
        _draw_braking(ax, d.braking, d.torque.unit, d.braking.rule in d.failing)
    labelled = [*d.points[:MAX_LABELS],
                *[_Point((n0 + n1) / 2, t, label) for n0, n1, t, label in d.segments[:MAX_LABELS]]]
    if labelled:
        _annotate(ax, _label_groups(labelled, d))
    for c in d.crossings:  # below the load line, so the crossing's speed reads on its own
        _annotate(ax, [(c.n, c.t, f"load = continuous\n{_fmt(c.n)} {d.speed.unit}")], va="top", dy=-8.0)


@dataclass
class _Starting:
    speed: _Axis
    torque: _Axis
    method: str
    full: list[tuple[float, float]]
    during: list[tuple[float, float]]
    load: list[tuple[float, float]]
    points: list[_Point]
    voltage: float | None
    dip_counted: bool
    run_up_end: float | None
    rated: float | None
    failing: frozenset[str] = frozenset()

    def fails(self, p: _Point) -> bool:
        return bool(p.rule) and p.rule in self.failing

    def during_name(self) -> str:
        if self.method == "soft-starter":
            return "Motor at the soft starter's current limit"
        if self.voltage is not None and self.dip_counted:
            return f"Motor at {_fmt(self.voltage * 100)} % voltage (torque ∝ U²)"
        return "Motor at full voltage (dip not counted)"


def _starting(data: Mapping[str, Any], units: str, failing: frozenset[str] = frozenset()) -> _Starting:
    sp = _speed_axis(data.get("speed_unit"))
    tq = _quantity_axis(data.get("torque_unit"), "torque", "N*m", units)

    def conv(key: str) -> list[tuple[float, float]]:
        return [(n * sp.factor, t * tq.factor) for n, t in _pairs(data.get(key) or [], key)][:MAX_PLOT_POINTS]

    full, during, load = conv("motor_full_voltage"), conv("motor_starting"), conv("load_curve")
    if len(during) < 2 or len(load) < 2:
        raise ChartDataError("the starting chart needs the motor's starting curve and the load curve")
    points = _load_points(data, sp, tq)
    method = "soft-starter" if data.get("method") == "soft-starter" else "direct-on-line"

    def opt(key: str, factor: float) -> float | None:
        return None if data.get(key) is None else _num(data[key], key) * factor

    return _Starting(sp, tq, method, full, during, load, points[:MAX_LABELS], opt("voltage_ratio", 1.0),
                     data.get("voltage_dip_counted") is True, opt("run_up_end", sp.factor),
                     opt("rated_torque", tq.factor), frozenset(failing))


def _describe_starting(d: _Starting) -> ChartText:
    su, tu = d.speed.unit, d.torque.unit
    how = "direct on line" if d.method == "direct-on-line" else "on a soft starter"
    words = [f"{d.during_name().lower()}: {_fmt(d.during[0][1])} {tu} at standstill",
             f"load {_fmt(d.load[0][1])} {tu} at standstill (breakaway) to {_fmt(d.load[-1][1])} {tu} at "
             f"{_fmt(d.load[-1][0])} {su}"]
    if d.full:
        words.append(f"full-voltage curve {_fmt(d.full[0][1])} {tu} at standstill, up to "
                     f"{_fmt(max(t for _, t in d.full))} {tu}")
    for p in d.points:
        if d.fails(p):
            words.append(f"FAILS: {p.rule} at the {p.label} point, {_fmt(p.t)} {tu}")
    rows = [["motor during the start", _fmt(n), _fmt(t)] for n, t in d.during]
    rows += [["motor at full voltage", _fmt(n), _fmt(t)] for n, t in d.full]
    rows += [["load", _fmt(n), _fmt(t)] for n, t in d.load]
    rows += [[f"point {p.label}" + (f" (FAILS: {p.rule})" if d.fails(p) else ""), _fmt(p.n), _fmt(p.t)]
             for p in d.points]
    note = f"First {MAX_TABLE_ROWS} of {len(rows)} rows shown." if len(rows) > MAX_TABLE_ROWS else ""
    return ChartText("starting", f"Starting {how}: motor torque during the start against the load",
                     f"Torque against speed at the motor shaft, starting {how}: " + "; ".join(words) + ".",
                     ["series", f"speed ({su})", f"torque ({tu})"], rows[:MAX_TABLE_ROWS], note,
                     ["motor during the start: solid line, round markers",
                      "motor at full voltage: dotted grey line", "load from breakaway: thick black line",
                      "end of the run-up: dashed vertical line",
                      "points whose rule fails: large crosses labelled FAILS"])


def _draw_starting(fig: plot.Figure, d: _Starting) -> None:
    how = "direct on line" if d.method == "direct-on-line" else "on a soft starter"
    ax = fig.add_axes(title=f"Starting {how}", xlabel=f"Speed at motor shaft ({d.speed.unit})",
                      ylabel=f"Torque at motor shaft ({d.torque.unit})")
    fig.legend_below = True
    if d.full:
        ax.plot(*zip(*_thin(d.full), strict=True), color=_GREY, style=":", width=1.4, label="Motor at full voltage")
    ax.plot(*zip(*_thin(d.during), strict=True), color=_INK, style="-", width=1.8, marker="o", size=3,
            label=d.during_name())
    ax.plot(*zip(*_thin(d.load), strict=True), color=_LOAD, style="-", width=2.6, label="Load")
    if d.rated is not None:
        ax.level(d.rated, color=_ACCENT, style="-.", width=1.1, label=f"Rated torque {_fmt(d.rated)} {d.torque.unit}")
    if d.run_up_end is not None:
        ax.level(d.run_up_end, axis="x", color=_GREY, style="--", width=1.0,
                 label=f"End of the run-up {_fmt(d.run_up_end)} {d.speed.unit}")
    if d.points:
        ax.plot([p.n for p in d.points], [p.t for p in d.points], style="none", marker="^", size=7, color=_LOAD,
                label="Starting points")
    failed = [p for p in d.points if d.fails(p)]
    if failed:
        ax.plot([p.n for p in failed], [p.t for p in failed], style="none", marker="X", size=12, color=_FAIL,
                edge=_LOAD, edge_width=0.8, label="Point whose rule FAILS")
    ax.ylim = (0.0, None)
    _annotate(ax, _label_groups(d.points, d))  # type: ignore[arg-type]


@dataclass
class _Duty:
    time: _Axis
    speed: _Axis
    torque: _Axis
    samples: list[tuple[float, float, float]]
    rms: float | None = None
    rated: float | None = None
    rms_fails: str = ""  # the RMS rule's id when it failed in the result


def _duty(data: Mapping[str, Any], units: str, failing: frozenset[str] = frozenset()) -> _Duty:
    tm = _quantity_axis(data.get("time_unit"), "time", "s", units)
    tm = _Axis("s", tm.factor)
    sp = _speed_axis(data.get("speed_unit"))
    tq = _quantity_axis(data.get("torque_unit"), "torque", "N*m", units)
    raw = _pairs(data.get("samples") or [], "samples", width=3)
    if len(raw) < 2:
        raise ChartDataError("the duty cycle has fewer than two samples")
    samples = [(t * tm.factor, n * sp.factor, q * tq.factor) for t, n, q in raw]
    rms = _num(data["rms_torque"], "rms_torque") * tq.factor if data.get("rms_torque") is not None else None
    rated = _num(data["rated_torque"], "rated_torque") * tq.factor if data.get("rated_torque") is not None else None
    rule = plain(data.get("rms_rule"), 80)
    return _Duty(tm, sp, tq, samples, rms, rated, rule if rule and rule in failing else "")


def _describe_duty(d: _Duty) -> ChartText:
    s = d.samples
    speeds = [n for _, n, _ in s]
    torques = [q for _, _, q in s]
    description = (
        f"Duty cycle over {_fmt(s[-1][0] - s[0][0])} s in {len(s)} samples: speed {_fmt(min(speeds))} to "
        f"{_fmt(max(speeds))} {d.speed.unit}, torque {_fmt(min(torques))} to {_fmt(max(torques))} {d.torque.unit}"
        + (f"; RMS torque {_fmt(d.rms)} {d.torque.unit}" if d.rms is not None else "")
        + (f"; motor rated torque {_fmt(d.rated)} {d.torque.unit}" if d.rated is not None else "")
        + (f"; FAILS: {d.rms_fails}" if d.rms_fails else "") + "."
    )
    rows = [[_fmt(t), _fmt(n), _fmt(q)] for t, n, q in s[:MAX_TABLE_ROWS]]
    note = f"First {MAX_TABLE_ROWS} of {len(s)} samples shown." if len(s) > MAX_TABLE_ROWS else ""
    return ChartText("duty", "Duty cycle: speed and torque over time", description,
                     ["time (s)", f"speed ({d.speed.unit})", f"torque ({d.torque.unit})"], rows, note,
                     ["upper panel: shaft speed, solid line", "lower panel: torque, solid line; zero torque dotted",
                      "RMS torque: dashed line", "motor rated torque: dash-dot line"])


def _draw_duty(fig: plot.Figure, d: _Duty) -> None:
    pts = _thin(d.samples)
    t = [p[0] for p in pts]
    marker = "o" if len(pts) <= 60 else ""
    ax1 = fig.add_axes(title="Duty cycle", ylabel=f"Speed at motor shaft ({d.speed.unit})")
    ax2 = fig.add_axes(ylabel=f"Torque at motor shaft ({d.torque.unit})", xlabel="Time (s)", share_x=ax1)
    ax1.plot(t, [p[1] for p in pts], color=_INK, width=1.6, marker=marker, size=3)
    ax2.plot(t, [p[2] for p in pts], color=_ACCENT, width=1.6, marker=marker, size=3)
    ax2.level(0.0, color=_GREY, width=0.8, style=":")
    for level, style, name in ((d.rms, "--", "RMS torque"), (d.rated, "-.", "Motor rated torque")):
        if level is not None:
            ax2.level(level, color=_INK, width=1.2, style=style, label=f"{name} {_fmt(level)} {d.torque.unit}")
    if d.rms is not None and d.rms_fails:
        # the RMS line of a failing cycle: a cross at its end and the rule named, not colour alone
        ax2.plot([t[-1]], [d.rms], style="none", marker="X", size=12, color=_FAIL, edge=_LOAD, edge_width=0.8,
                 label=f"RMS torque FAILS: {d.rms_fails}")
        ax2.annotate(f"FAILS: {d.rms_fails}", t[-1], d.rms, dx=-10.0, dy=6.0, ha="right", va="bottom", color=_LOAD)
    if d.rms is not None or d.rated is not None:
        ax2.legend = "best"


@dataclass
class _BackEmf:
    speed: _Axis
    volt: _Axis
    n: list[float]
    emf: list[float]
    rect: list[float]
    available: float | None
    trip: float | None
    factor: float | None = None
    crossing: _Point | None = None
    failing: frozenset[str] = frozenset()


def _back_emf(data: Mapping[str, Any], units: str, failing: frozenset[str] = frozenset()) -> _BackEmf:
    sp = _speed_axis(data.get("speed_unit"))
    vu = _quantity_axis(data.get("voltage_unit"), "voltage", "V", units)
    n = [x * sp.factor for x in _series(data.get("speed") or [], "speed")]
    emf = [x * vu.factor for x in _series(data.get("emf_line_rms") or [], "emf_line_rms")]
    rect = [x * vu.factor for x in _series(data.get("rectified_peak") or [], "rectified_peak")]
    if len(n) < 2:
        raise ChartDataError("the back-EMF chart has fewer than two speeds")
    for name, ys in (("emf_line_rms", emf), ("rectified_peak", rect)):
        if ys and len(ys) != len(n):
            raise ChartDataError(f"{name} has {len(ys)} values for {len(n)} speeds")
    if not emf and not rect:
        raise ChartDataError("the back-EMF chart has no voltages")
    available = data.get("available_voltage")
    trip = data.get("dc_bus_trip")
    crossing = None
    c = data.get("trip_crossing")
    if c is not None:
        if not isinstance(c, Mapping):
            raise ChartDataError("trip_crossing is not a point")
        crossing = _Point(_num(c.get("speed"), "trip_crossing.speed") * sp.factor,
                          _num(c.get("voltage"), "trip_crossing.voltage") * vu.factor, "", plain(c.get("rule"), 80))
    return _BackEmf(
        sp, vu, n[:MAX_PLOT_POINTS], emf[:MAX_PLOT_POINTS], rect[:MAX_PLOT_POINTS],
        None if available is None else _num(available, "available_voltage") * vu.factor,
        None if trip is None else _num(trip, "dc_bus_trip") * vu.factor,
        None if data.get("rectified_peak_factor") is None else _num(data["rectified_peak_factor"],
                                                                    "rectified_peak_factor"),
        crossing, frozenset(failing),
    )


def _describe_back_emf(d: _BackEmf) -> ChartText:
    v = d.volt.unit
    top = f"At the highest speed shown ({_fmt(d.n[-1])} {d.speed.unit})"
    parts = []
    if d.emf:
        parts.append(f"the line-to-line back-EMF (RMS) is {_fmt(d.emf[-1])} {v}")
    if d.rect:
        parts.append(f"its rectified peak is {_fmt(d.rect[-1])} {v}" + (
            f" (√2 × back-EMF × {_fmt(d.factor)} for cold magnets and tolerance)" if d.factor else ""))
    levels = []
    if d.available is not None:
        levels.append(f"available output voltage {_fmt(d.available)} {v}")
    if d.trip is not None:
        levels.append(f"DC-bus trip level {_fmt(d.trip)} {v}")
    description = f"{top} {' and '.join(parts)}."
    if levels:
        description += " Reference levels: " + "; ".join(levels) + "."
    if d.crossing is not None:
        description += (f" The rectified peak reaches the DC-bus trip level at {_fmt(d.crossing.n)} {d.speed.unit}"
                        + (f" (FAILS: {d.crossing.rule})." if d.crossing.rule in d.failing else "."))
    rows = []
    for i, n in enumerate(d.n[:MAX_TABLE_ROWS]):
        rows.append([_fmt(n), _fmt(d.emf[i]) if d.emf else "—", _fmt(d.rect[i]) if d.rect else "—"])
    note = f"First {MAX_TABLE_ROWS} of {len(d.n)} speeds shown." if len(d.n) > MAX_TABLE_ROWS else ""
    return ChartText("back_emf", "Permanent-magnet back-EMF against available voltage and DC-bus trip level",
                     description, [f"speed ({d.speed.unit})", f"back-EMF line RMS ({v})", f"rectified peak ({v})"],
                     rows, note,
                     ["back-EMF: solid line, round markers", "rectified peak: dashed line, square markers",
                      "available voltage: dotted level", "DC-bus trip: thick dash-dot level"])


def _draw_back_emf(fig: plot.Figure, d: _BackEmf) -> None:
    ax = fig.add_axes(title="Back-EMF and rectified peak against speed",
                      xlabel=f"Speed at motor shaft ({d.speed.unit})", ylabel=f"Voltage ({d.volt.unit})")
    if d.emf:
        ax.plot(d.n, d.emf, color=_INK, style="-", width=1.6, marker="o", size=3.5, label="Back-EMF, line-to-line RMS")
    if d.rect:
        ax.plot(d.n, d.rect, color=_ACCENT, style="--", width=1.6, marker="s", size=3.5,
                label="Rectified peak (into DC bus)" + (f", √2·E × {_fmt(d.factor)} (cold magnets)" if d.factor
                                                         else ""))
    for level, style, width, text in ((d.available, ":", 1.4, "Available output voltage"),
                                      (d.trip, "-.", 2.2, "DC-bus trip level")):
        if level is None:
            continue
        ax.level(level, color=_GREY if style == ":" else _LOAD, style=style, width=width,
                 label=f"{text} {_fmt(level)} {d.volt.unit}")
        ax.annotate(f"{text} {_fmt(level)} {d.volt.unit}", 0.01, level, x_fraction=True, dy=3.0, color=_INK)
    top = max([*d.emf, *d.rect, d.available or 0.0, d.trip or 0.0])
    ax.ylim = (0.0, top * 1.12 if top > 0 else 1.0)
    c = d.crossing
    if c is not None:
        fails = c.rule in d.failing
        ax.plot([c.n], [c.t], style="none", marker="X" if fails else "D", size=12 if fails else 6,
                color=_FAIL if fails else "white", face=_FAIL if fails else "white", edge=_LOAD, edge_width=1.0,
                label="Rectified peak reaches the trip level" + (": FAILS" if fails else ""))
        _annotate(ax, [(c.n, c.t, f"trip level reached at {_fmt(c.n)} {d.speed.unit}"
                        + (f"\nFAILS: {c.rule}" if fails else ""))], va="top", dy=-10.0)
    ax.legend = "lower right"

_CHARTS = {
    "starting": (_starting, _describe_starting, _draw_starting, (504.0, 317.0)),
    "torque_speed": (_torque_speed, _describe_torque_speed, _draw_torque_speed, (504.0, 302.0)),
    "duty": (_duty, _describe_duty, _draw_duty, (504.0, 317.0)),
    "back_emf": (_back_emf, _describe_back_emf, _draw_back_emf, (504.0, 302.0)),
}


def _read(key: str, data: Any, units: str, failing: Iterable[str] = ()) -> Any:
    if key not in _CHARTS:
        raise ChartDataError(f"unknown chart {plain(key, 40)!r}")
    if not isinstance(data, Mapping):
        raise ChartDataError(f"the {key} chart data is not a mapping")
    return _CHARTS[key][0](data, units, frozenset(failing))


def available(spec: Mapping[str, Any]) -> list[str]:
    """Return the keys of the charts that the spec's result carries, in report order."""
    charts = spec.get("charts")
    if not isinstance(charts, Mapping):
        return []
    return [k for k in CHART_KEYS if isinstance(charts.get(k), Mapping)]


def failing_rules(spec: Mapping[str, Any]) -> frozenset[str]:
    """Return the ids of the rules that failed in a spec's result at error or warning level: the points they
    judge are marked on the charts (the verdicts come from the result; nothing is judged here)."""
    out = set()
    for o in spec.get("outcomes") or []:
        if isinstance(o, Mapping) and o.get("outcome") == "fail" and o.get("severity") in ("error", "warning"):
            out.add(plain(o.get("rule"), 80))
    return frozenset(out)


def describe(key: str, data: Mapping[str, Any], units: str = "si", failing: Iterable[str] = ()) -> ChartText:
    """Return the text equivalent of a chart; raises :class:`ChartDataError` for data that cannot be read.
    ``failing``: the rules that failed (:func:`failing_rules`), whose points the chart marks."""
    return _CHARTS[key][1](_read(key, data, units, failing))


def figure(key: str, data: Mapping[str, Any], units: str = "si", failing: Iterable[str] = ()) -> plot.Figure:
    """Return the chart as a laid-out :class:`plot.Figure` (not written): what :func:`svg_body` writes, and what a
    test measures (series, markers, label boxes)."""
    parsed = _read(key, data, units, failing)
    fig = plot.Figure(*_CHARTS[key][3])
    _CHARTS[key][2](fig, parsed)
    return fig.layout()


_VIEW_BOX = re.compile(r'viewBox="[^"]*"')


def svg_body(key: str, data: Mapping[str, Any], units: str = "si", failing: Iterable[str] = ()) -> str:
    """Return the chart drawn as SVG text (the costly part of :func:`svg`), to be made
    inline-ready by :func:`svg` (``body=``); raises :class:`ChartDataError` for data that cannot be read."""
    return figure(key, data, units, failing).svg()


def draw_series(result: Mapping[str, Any], series: Mapping[str, Any], units: str = "si") -> dict[str, str]:
    """Return every chart of a spec drawn (chart key → :func:`svg_body` text) from its result (which rules
    failed) and its chart series; a chart whose data cannot be drawn is left out (the report says why when it
    describes it). The check gives this to its workers, so charts are drawn where the spec is checked."""
    failing = failing_rules(result)
    drawn = {}
    for key in available({"charts": series}):
        try:
            drawn[key] = svg_body(key, series[key], units, failing)
        except ChartDataError:
            continue
    return drawn


def svg(key: str, data: Mapping[str, Any], units: str = "si", *, chart_id: str = "chart",
        failing: Iterable[str] = (), body: str | None = None, text: ChartText | None = None) -> str:
    """Return the chart as an SVG element ready to inline in HTML, with ``<title>``/``<desc>`` from its text.

    Element ids (and the references to them) are prefixed with ``chart_id`` so several charts can share one
    page; the root element keeps only its view box (namespace, width and height are not needed inline in
    HTML: the page's CSS sizes the chart). ``body``: the chart already drawn by
    :func:`svg_body` (or :func:`draw_series`) for the same arguments; ``text``: its :func:`describe`, when the
    caller has it already.
    """
    from markupsafe import escape

    prefix = re.sub(r"[^A-Za-z0-9_-]", "-", chart_id)[:40] or "chart"
    text = text if text is not None else describe(key, data, units, failing)
    body = body if body is not None else svg_body(key, data, units, failing)
    start = body.index("<svg")
    head_end = body.index(">", start) + 1
    box = _VIEW_BOX.search(body, start, head_end)
    labels = f"{prefix}-title {prefix}-desc"
    head = f'<svg {box.group(0) if box else ""} class="chart" role="img" aria-labelledby="{labels}">'
    # plot.py writes no comments or whitespace between elements, and escapes quotes in text: every ' id="' and
    # 'url(#' is markup (str.replace: 1970 charts 0.72 s with regular expressions, 0.055 s so)
    rest = body[head_end:].replace(' id="', f' id="{prefix}-').replace("url(#", f"url(#{prefix}-")
    desc = f"{text.description} {' '.join(text.series)}".strip()
    inner = f'<title id="{prefix}-title">{escape(text.title)}</title><desc id="{prefix}-desc">{escape(desc)}</desc>'
    return head + inner + rest.strip()
