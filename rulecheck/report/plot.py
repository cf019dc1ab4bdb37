"""A small SVG plotting module for the report's charts: lines with markers, levels, a hatched region, labels
placed apart, axes with round-number ticks, legends. It writes SVG text directly.

Why not a general plotting library: the HTML report of a large run draws two charts per drive train, and a
general library's figure costs about 40 ms at its barest and 140 ms for our charts, against about 3 ms here
(docs/performance.md, "The HTML report"): a thousand drive trains would wait minutes for their charts.

Units: the drawing is measured in points (1/72 inch), the SVG's user units; y grows downwards in SVG, so the
axes turn data into points with y flipped. Text widths come from the advance widths of DejaVu Sans (the font
the SVG names first; ``WIDTHS`` is checked against the font file in the tests) so that labels can be placed
apart and margins sized before anything is drawn.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any
from xml.sax.saxutils import escape as _xml_escape

FONT_FAMILY = "'DejaVu Sans', 'Bitstream Vera Sans', Verdana, sans-serif"
# advance widths of DejaVu Sans in thousandths of the font size (the font's horizontal advances, unhinted)
_WIDTH_CHARS = ("".join(chr(c) for c in range(32, 127))
                + "–—×√≤≥·°²³µΩ∝ηωπθΔ≈±→…’‘“”éèêüöäßçñ½Ø−")
_WIDTH_VALUES = (
    318, 401, 460, 838, 636, 950, 780, 275, 390, 390, 500, 838, 318, 361, 318, 337, 636, 636, 636, 636, 636, 636,
    636, 636, 636, 636, 337, 337, 838, 838, 838, 531, 1000, 684, 686, 698, 770, 632, 575, 775, 752, 295, 295, 656,
    557, 863, 748, 787, 603, 787, 695, 635, 611, 732, 684, 989, 685, 611, 685, 390, 337, 390, 838, 500, 500, 613,
    635, 550, 635, 615, 352, 635, 634, 278, 278, 579, 278, 974, 634, 612, 635, 635, 411, 521, 392, 634, 592, 818,
    592, 592, 525, 636, 337, 636, 838, 500, 1000, 838, 637, 838, 838, 318, 500, 401, 401, 636, 764, 714, 634, 837,
    602, 612, 684, 838, 838, 838, 1000, 318, 318, 518, 518, 615, 615, 615, 634, 612, 613, 630, 550, 634, 969, 787,
    838)
WIDTHS = dict(zip(_WIDTH_CHARS, _WIDTH_VALUES, strict=True))
UNKNOWN_WIDTH = 1000  # a character not in the table is taken as wide as an em: a label's box is never too small
LINE_SPACING = 1.2  # baseline to baseline, in font sizes
ASCENT = 0.93  # top of the line box to the baseline, in font sizes (DejaVu Sans: ascender 1901 of 2048 units)

MINUS = "−"


def escape(text: str) -> str:
    """Return text for an SVG text node or attribute: &, <, >, both quotes and # escaped (so no text can read as
    an id or a reference to one: :func:`charts.svg` prefixes those by plain replacement)."""
    return _xml_escape(text, {'"': "&quot;", "'": "&apos;", "#": "&#35;"})


def text_width(text: str, size: float) -> float:
    """Return the width in points of the longest line of ``text`` at font ``size``."""
    return max((sum(WIDTHS.get(ch, UNKNOWN_WIDTH) for ch in line) for line in text.split("\n")), default=0) \
        * size / 1000.0


def text_height(text: str, size: float) -> float:
    return (text.count("\n") + 1) * LINE_SPACING * size


@dataclass(frozen=True)
class Box:
    """A rectangle in points, y downwards: x0 ≤ x1, y0 (top) ≤ y1 (bottom)."""

    x0: float
    y0: float
    x1: float
    y1: float

    def overlaps(self, other: Box, pad: float = 0.0) -> bool:
        return (self.x0 - pad < other.x1 and other.x0 < self.x1 + pad
                and self.y0 - pad < other.y1 and other.y0 < self.y1 + pad)

    def inside(self, other: Box) -> bool:
        return other.x0 <= self.x0 and self.x1 <= other.x1 and other.y0 <= self.y0 and self.y1 <= other.y1


# --- numbers -------------------------------------------------------------------------------------------------

_STEPS = (1.0, 2.0, 2.5, 5.0, 10.0)


def nice_ticks(lo: float, hi: float, most: int = 8) -> list[float]:
    """Return round-number ticks inside [lo, hi]: the smallest step of 1, 2, 2.5 or 5 × 10^k that gives at most
    ``most`` + 1 ticks."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo]
    raw = (hi - lo) / most
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next(s * mag for s in _STEPS if s * mag >= raw * (1 - 1e-9))
    first = math.ceil(lo / step - 1e-9)
    last = math.floor(hi / step + 1e-9)
    return [k * step for k in range(first, last + 1)] or [lo]


def tick_text(value: float, step: float) -> str:
    """Return a tick's label with as many decimals as its step needs, a true minus sign, no "-0"."""
    decimals = 0
    while decimals < 6 and abs(step * 10 ** decimals - round(step * 10 ** decimals)) > 1e-6 * 10 ** decimals:
        decimals += 1
    text = f"{value:.{decimals}f}"
    if float(text) == 0:
        text = f"{0:.{decimals}f}"
    return text.replace("-", MINUS)


def _c(v: float) -> str:
    """A coordinate in points, two decimals without trailing zeros (the SVG stays small and deterministic)."""
    text = f"{v:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


# --- what is drawn -----------------------------------------------------------------------------------------

DASHES = {"-": None, "--": (3.7, 1.6), ":": (1.0, 1.65), "-.": (6.4, 1.6, 1.0, 1.6)}  # × line width


@dataclass
class Line:
    xs: list[float]
    ys: list[float]
    color: str = "#000000"
    width: float = 1.5
    style: str = "-"  # "-", "--", ":", "-.", or "none" (markers only)
    marker: str = ""  # "", "o", "s", "^", "x", "X", "D"
    size: float = 6.0  # marker size in points
    face: str | None = None  # marker face colour (the line colour when None)
    edge: str | None = None  # marker edge colour (the line colour when None)
    edge_width: float = 1.0
    label: str | None = None


@dataclass
class Level:
    """A horizontal (``axis`` "y") or vertical ("x") line across the axes at ``value``."""

    value: float
    axis: str = "y"
    color: str = "#000000"
    width: float = 1.0
    style: str = "-"
    label: str | None = None


@dataclass
class Region:
    """A hatched rectangle in data coordinates."""

    x0: float
    x1: float
    y0: float
    y1: float
    color: str = "#6b7680"
    label: str | None = None


@dataclass
class Label:
    """Text beside a point: the point in data coordinates (``x`` may be an axes fraction with ``x_fraction``),
    an offset in points (right and up positive, as a reader says it), alignment, and the box it takes once the
    figure is laid out (``box``, points in the figure)."""

    text: str
    x: float
    y: float
    dx: float = 0.0
    dy: float = 0.0
    ha: str = "left"  # left, center, right
    va: str = "bottom"  # bottom, top (of the text, against the point)
    size: float = 7.5
    color: str = "#000000"
    boxed: bool = False  # a white ground behind the text
    x_fraction: bool = False
    box: Box | None = None


@dataclass
class Axes:
    lines: list[Line] = field(default_factory=list)
    levels: list[Level] = field(default_factory=list)
    regions: list[Region] = field(default_factory=list)
    labels: list[Label] = field(default_factory=list)
    title: str = ""
    xlabel: str = ""
    ylabel: str = ""
    grid: bool = True
    xlim: tuple[float | None, float | None] = (None, None)
    ylim: tuple[float | None, float | None] = (None, None)
    legend: str | None = None  # None, "lower right", "best"
    share_x: Axes | None = None
    # set by the layout
    box: Box | None = None
    xrange: tuple[float, float] = (0.0, 1.0)
    yrange: tuple[float, float] = (0.0, 1.0)
    xticks: list[float] = field(default_factory=list)
    yticks: list[float] = field(default_factory=list)
    legend_box: Box | None = None
    legend_widths: list[float] = field(default_factory=list)  # its column widths (one column)

    def plot(self, xs: Iterable[float], ys: Iterable[float], **style: Any) -> Line:
        line = Line(list(xs), list(ys), **style)
        self.lines.append(line)
        return line

    def level(self, value: float, axis: str = "y", **style: Any) -> Level:
        lvl = Level(value, axis, **style)
        self.levels.append(lvl)
        return lvl

    def hatch(self, x0: float, x1: float, y0: float, y1: float, **style: Any) -> Region:
        region = Region(x0, x1, y0, y1, **style)
        self.regions.append(region)
        return region

    def annotate(self, text: str, x: float, y: float, **style: Any) -> Label:
        label = Label(text, x, y, **style)
        self.labels.append(label)
        return label

    # the data limits, before margins: what autoscaling sees
    def data_limits(self) -> tuple[float, float, float, float]:
        xs = [x for line in self.lines for x in line.xs if math.isfinite(x)]
        ys = [y for line in self.lines for y in line.ys if math.isfinite(y)]
        xs += [lv.value for lv in self.levels if lv.axis == "x"]
        ys += [lv.value for lv in self.levels if lv.axis == "y"]
        if not xs:
            xs = [0.0, 1.0]
        if not ys:
            ys = [0.0, 1.0]
        return min(xs), max(xs), min(ys), max(ys)

    def limits(self) -> tuple[float, float, float, float]:
        """Return the plotted ranges: the data with 5 % margins on each side, unless set."""
        x0, x1, y0, y1 = self.data_limits()
        if self.share_x is not None:
            x0, x1 = self.share_x.limits()[:2]
        else:
            x0, x1 = _widen(x0, x1, self.xlim)
        y0, y1 = _widen(y0, y1, self.ylim)
        return x0, x1, y0, y1

    # data → points in the figure
    def px(self, x: float) -> float:
        b, (lo, hi) = self.box, self.xrange
        return b.x0 + (x - lo) / (hi - lo) * (b.x1 - b.x0)  # type: ignore[union-attr]

    def py(self, y: float) -> float:
        b, (lo, hi) = self.box, self.yrange
        return b.y1 - (y - lo) / (hi - lo) * (b.y1 - b.y0)  # type: ignore[union-attr]


def _widen(lo: float, hi: float, fixed: tuple[float | None, float | None]) -> tuple[float, float]:
    if hi - lo <= 0:
        pad = abs(lo) * 0.05 or 1.0
        lo, hi = lo - pad, hi + pad
    margin = 0.05 * (hi - lo)
    lo = fixed[0] if fixed[0] is not None else lo - margin
    hi = fixed[1] if fixed[1] is not None else hi + margin
    if hi <= lo:
        hi = lo + 1.0
    return lo, hi


@dataclass
class LegendEntry:
    text: str
    sample: Line | Level | Region


class Figure:
    """A drawing of one or more axes stacked vertically, sharing the width; ``legend_below`` puts one legend for
    all axes under them, in ``legend_columns`` columns."""

    FONT = 9.0
    TITLE = 10.0
    LEGEND = 8.0
    TICK = 3.5  # tick length, points

    def __init__(self, width: float, height: float) -> None:
        self.width, self.height = width, height
        self.axes: list[Axes] = []
        self.legend_below = False
        self.legend_columns = 3
        self.legend_box: Box | None = None
        self.legend_widths: list[float] = []  # the legend's column widths, as the layout fitted them
        self._laid_out = False

    @property
    def box(self) -> Box:
        return Box(0.0, 0.0, self.width, self.height)

    def add_axes(self, **kw: Any) -> Axes:
        ax = Axes(**kw)
        self.axes.append(ax)
        return ax

    def entries(self, axes: Sequence[Axes]) -> list[LegendEntry]:
        out = []
        for ax in axes:
            out += [LegendEntry(x.label, x) for x in (*ax.lines, *ax.levels, *ax.regions) if x.label]
        return out

    # --- layout ---

    def _legend_grid(self, entries: list[LegendEntry], columns: int) -> tuple[list[float], int]:
        cols = max(1, min(columns, len(entries)))
        widths = [0.0] * cols
        for k, e in enumerate(entries):
            widths[k % cols] = max(widths[k % cols], 28.0 + text_width(e.text, self.LEGEND))
        rows = math.ceil(len(entries) / cols)
        return widths, rows

    def layout(self) -> Figure:
        """Place the axes, ticks, legends and labels (idempotent)."""
        if self._laid_out:
            return self
        self._laid_out = True
        f = self.FONT
        row_h = LINE_SPACING * self.LEGEND + 2.0
        below = self.entries(self.axes) if self.legend_below else []
        legend_h = 0.0
        if below:
            widths, rows = self._legend_grid(below, self.legend_columns)
            while sum(widths) + 12 > self.width and len(widths) > 1:
                widths, rows = self._legend_grid(below, len(widths) - 1)
            self.legend_widths = widths
            legend_h = rows * row_h + 8.0
            lw = sum(widths) + 8.0
            x0 = (self.width - lw) / 2
            self.legend_box = Box(x0, self.height - legend_h - 3.0, x0 + lw, self.height - 3.0)
        # vertical ticks and their labels first: the widest label sets the left margin of every panel
        ylabel_w = 0.0
        for ax in self.axes:
            x0, x1, y0, y1 = ax.limits()
            ax.xrange, ax.yrange = (x0, x1), (y0, y1)
            ax.yticks = nice_ticks(y0, y1, 6)
            ax.xticks = nice_ticks(x0, x1, 8)
            step = ax.yticks[1] - ax.yticks[0] if len(ax.yticks) > 1 else 1.0
            ylabel_w = max([ylabel_w, *(text_width(tick_text(t, step), f) for t in ax.yticks)])
        left = 6.0 + (LINE_SPACING * f if any(ax.ylabel for ax in self.axes) else 0.0) + 4.0 + ylabel_w + \
            self.TICK + 3.0
        right = self.width - 12.0
        top = 6.0
        bottom = self.height - legend_h - 4.0
        n = len(self.axes)
        titles = [LINE_SPACING * self.TITLE + 4.0 if ax.title else 4.0 for ax in self.axes]
        last = self.axes[-1]
        xaxis_h = self.TICK + 2.0 + LINE_SPACING * f + (LINE_SPACING * f + 2.0 if last.xlabel else 0.0)
        gap = 6.0  # between stacked panels that share x (no tick labels between them)
        room = bottom - top - xaxis_h - sum(titles) - gap * (n - 1)
        h = room / n
        y = top
        for ax, t in zip(self.axes, titles, strict=True):
            y += t
            ax.box = Box(left, y, right, y + h)
            y += h + gap
        for ax in self.axes:
            if ax.legend:
                self._place_axes_legend(ax)
        self._place_labels()
        return self

    def _place_axes_legend(self, ax: Axes) -> None:
        entries = self.entries([ax])
        if not entries:
            return
        ax.legend_widths, _rows = self._legend_grid(entries, 1)
        w = ax.legend_widths[0] + 8.0
        h = len(entries) * (LINE_SPACING * self.LEGEND + 2.0) + 6.0
        b = ax.box
        assert b is not None
        corners = {
            "lower right": Box(b.x1 - w - 4, b.y1 - h - 4, b.x1 - 4, b.y1 - 4),
            "upper right": Box(b.x1 - w - 4, b.y0 + 4, b.x1 - 4, b.y0 + 4 + h),
            "lower left": Box(b.x0 + 4, b.y1 - h - 4, b.x0 + 4 + w, b.y1 - 4),
            "upper left": Box(b.x0 + 4, b.y0 + 4, b.x0 + 4 + w, b.y0 + 4 + h),
        }
        if ax.legend in corners:
            ax.legend_box = corners[ax.legend]
            return

        def covered(box: Box) -> int:  # "best": the corner that hides the fewest plotted points
            return sum(1 for line in ax.lines for x, y in zip(line.xs, line.ys, strict=False)
                       if box.x0 <= ax.px(x) <= box.x1 and box.y0 <= ax.py(y) <= box.y1)

        ax.legend_box = min(corners.values(), key=covered)

    def _label_box(self, ax: Axes, lb: Label, dx: float, dy: float) -> Box:
        x = (ax.box.x0 + lb.x * (ax.box.x1 - ax.box.x0)) if lb.x_fraction else ax.px(lb.x)  # type: ignore[union-attr]
        y = ax.py(lb.y)
        w, h = text_width(lb.text, lb.size), text_height(lb.text, lb.size)
        ax_ = x + dx
        left = ax_ if lb.ha == "left" else ax_ - w if lb.ha == "right" else ax_ - w / 2
        ay = y - dy  # offsets are up-positive, SVG y grows downwards
        top = ay - h if lb.va == "bottom" else ay
        pad = 1.5 if lb.boxed else 0.0
        return Box(left - pad, top - pad, left + w + pad, top + h + pad)

    def _place_labels(self) -> None:
        """Move labels apart so that no two overlap, none sits on a legend and each stays inside its plot (or, where
        it cannot, inside the drawing): each label in turn is shifted up or down by its own height, in growing
        steps, until its box is clear of every label placed before it (greedy: deterministic)."""
        placed = [b for b in [self.legend_box, *(ax.legend_box for ax in self.axes)] if b is not None]
        for ax in self.axes:
            for lb in ax.labels:
                assert ax.box is not None
                found = self._fit(ax, lb, ax.box, placed) or self._fit(ax, lb, self.box, placed)
                if found is None:  # nowhere clear: where it was asked for, inside the drawing
                    found = self._fit(ax, lb, self.box, [])
                lb.dx, lb.dy, lb.box = found  # type: ignore[misc]
                placed.append(lb.box)  # type: ignore[arg-type]

    def _fit(self, ax: Axes, lb: Label, bound: Box, placed: list[Box]) -> tuple[float, float, Box] | None:
        """Return the offset and box of a label moved inside ``bound`` and clear of ``placed``, or None."""
        dx, dy = lb.dx, lb.dy
        box = self._label_box(ax, lb, dx, dy)
        shift = min(0.0, bound.x1 - 2 - box.x1) + max(0.0, bound.x0 + 2 - box.x0)
        if shift:  # wider than the room on its side of the point: moved back inside
            dx += shift
            box = self._label_box(ax, lb, dx, dy)
        step = box.y1 - box.y0 + 2.0
        for k in range(0, 61):
            moved = (k + 1) // 2 * step * (-1 if k % 2 else 1)
            box = self._label_box(ax, lb, dx, dy + moved)
            if box.inside(bound) and not any(box.overlaps(b, 2.0) for b in placed):
                return dx, dy + moved, box
        return None

    # --- writing ---

    def svg(self) -> str:
        """Return the drawing as an SVG document (text)."""
        self.layout()
        out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{_c(self.width)}pt" height="{_c(self.height)}pt" '
               f'viewBox="0 0 {_c(self.width)} {_c(self.height)}" version="1.1">',
               '<defs><pattern id="hatch" patternUnits="userSpaceOnUse" width="6" height="6">'
               '<path d="M-1 1L1 -1M0 6L6 0M5 7L7 5" stroke="#6b7680" stroke-width="0.8"/></pattern>']
        for k, ax in enumerate(self.axes):
            b = ax.box
            assert b is not None
            out.append(f'<clipPath id="clip{k}"><rect x="{_c(b.x0)}" y="{_c(b.y0)}" width="{_c(b.x1 - b.x0)}" '
                       f'height="{_c(b.y1 - b.y0)}"/></clipPath>')
        out.append("</defs>")
        out.append(f'<rect width="{_c(self.width)}" height="{_c(self.height)}" fill="#ffffff"/>')
        out.append(f'<g font-family="{escape(FONT_FAMILY)}" font-size="{_c(self.FONT)}">')
        for k, ax in enumerate(self.axes):
            self._write_axes(out, ax, k, last=k == len(self.axes) - 1)
        if self.legend_box is not None:
            self._write_legend(out, self.entries(self.axes), self.legend_box, self.legend_widths)
        for ax in self.axes:
            if ax.legend_box is not None:
                self._write_legend(out, self.entries([ax]), ax.legend_box, ax.legend_widths)
        for ax in self.axes:
            for lb in ax.labels:
                _write_label(out, lb)
        out.append("</g></svg>")
        return "".join(out)

    def _write_axes(self, out: list[str], ax: Axes, k: int, last: bool) -> None:
        b = ax.box
        assert b is not None
        f = self.FONT
        xstep = ax.xticks[1] - ax.xticks[0] if len(ax.xticks) > 1 else 1.0
        ystep = ax.yticks[1] - ax.yticks[0] if len(ax.yticks) > 1 else 1.0
        grid, ticks, texts = [], [], []
        for t in ax.xticks:
            x = ax.px(t)
            if ax.grid:
                grid.append(f"M{_c(x)} {_c(b.y0)}V{_c(b.y1)}")
            ticks.append(f"M{_c(x)} {_c(b.y1)}v{_c(self.TICK)}")
            if last:
                texts.append(f'<text x="{_c(x)}" y="{_c(b.y1 + self.TICK + 2 + ASCENT * f)}" text-anchor="middle">'
                             f"{escape(tick_text(t, xstep))}</text>")
        for t in ax.yticks:
            y = ax.py(t)
            if ax.grid:
                grid.append(f"M{_c(b.x0)} {_c(y)}H{_c(b.x1)}")
            ticks.append(f"M{_c(b.x0)} {_c(y)}h{_c(-self.TICK)}")
            texts.append(f'<text x="{_c(b.x0 - self.TICK - 2)}" y="{_c(y + 0.35 * f)}" text-anchor="end">'
                         f"{escape(tick_text(t, ystep))}</text>")
        if grid:
            out.append(f'<path d="{"".join(grid)}" stroke="#d5d9dd" stroke-width="0.6" fill="none"/>')
        out.append(f'<g clip-path="url(#clip{k})">')
        for r in ax.regions:
            x0, x1 = sorted((ax.px(r.x0), ax.px(r.x1)))
            y0, y1 = sorted((ax.py(r.y0), ax.py(r.y1)))
            out.append(f'<rect x="{_c(x0)}" y="{_c(y0)}" width="{_c(x1 - x0)}" height="{_c(y1 - y0)}" '
                       f'fill="url(#hatch)" stroke="none"/>')
        for lv in ax.levels:
            if lv.axis == "y":
                y = ax.py(lv.value)
                d = f"M{_c(b.x0)} {_c(y)}H{_c(b.x1)}"
            else:
                x = ax.px(lv.value)
                d = f"M{_c(x)} {_c(b.y0)}V{_c(b.y1)}"
            out.append(f'<path d="{d}"{_stroke(lv.color, lv.width, lv.style)} fill="none"/>')
        for line in ax.lines:
            _write_line(out, ax, line)
        out.append("</g>")
        out.append(f'<rect x="{_c(b.x0)}" y="{_c(b.y0)}" width="{_c(b.x1 - b.x0)}" height="{_c(b.y1 - b.y0)}" '
                   f'fill="none" stroke="#6b7680" stroke-width="0.8"/>')
        out.append(f'<path d="{"".join(ticks)}" stroke="#1d2b36" stroke-width="0.8"/>')
        out.append(f'<g fill="#1d2b36">{"".join(texts)}')
        if ax.title:
            out.append(f'<text x="{_c((b.x0 + b.x1) / 2)}" y="{_c(b.y0 - 4 - (1 - ASCENT) * self.TITLE)}" '
                       f'text-anchor="middle" font-size="{_c(self.TITLE)}">{escape(ax.title)}</text>')
        if ax.xlabel and last:
            y = b.y1 + self.TICK + 2 + LINE_SPACING * f + 2 + ASCENT * f
            out.append(f'<text x="{_c((b.x0 + b.x1) / 2)}" y="{_c(y)}" text-anchor="middle">'
                       f"{escape(ax.xlabel)}</text>")
        if ax.ylabel:
            x = 6.0 + ASCENT * f
            y = (b.y0 + b.y1) / 2
            out.append(f'<text transform="translate({_c(x)} {_c(y)}) rotate(-90)" text-anchor="middle">'
                       f"{escape(ax.ylabel)}</text>")
        out.append("</g>")

    def _write_legend(self, out: list[str], entries: list[LegendEntry], box: Box, widths: list[float]) -> None:
        cols = len(widths)
        row_h = LINE_SPACING * self.LEGEND + 2.0
        out.append(f'<rect class="legend" x="{_c(box.x0)}" y="{_c(box.y0)}" width="{_c(box.x1 - box.x0)}" '
                   f'height="{_c(box.y1 - box.y0)}" fill="#ffffff" fill-opacity="0.92" stroke="#cccccc" '
                   f'stroke-width="0.8"/>')
        out.append(f'<g font-size="{_c(self.LEGEND)}" fill="#1d2b36">')
        for k, e in enumerate(entries):
            col, row = k % cols, k // cols
            x = box.x0 + 4.0 + sum(widths[:col])
            y = box.y0 + 4.0 + row * row_h + row_h / 2
            s = e.sample
            if isinstance(s, Region):
                out.append(f'<rect x="{_c(x)}" y="{_c(y - 4)}" width="20" height="8" fill="url(#hatch)" '
                           f'stroke="{s.color}" stroke-width="0.5"/>')
            elif isinstance(s, Level):
                out.append(f'<path d="M{_c(x)} {_c(y)}h20"{_stroke(s.color, s.width, s.style)}/>')
            else:
                if s.style != "none":
                    out.append(f'<path d="M{_c(x)} {_c(y)}h20"{_stroke(s.color, s.width, s.style)}/>')
                if s.marker:
                    out.append(_marker(s, x + 10, y))
            out.append(f'<text x="{_c(x + 24)}" y="{_c(y + 0.35 * self.LEGEND)}">{escape(e.text)}</text>')
        out.append("</g>")


def _stroke(color: str, width: float, style: str) -> str:
    dash = DASHES.get(style)
    extra = f' stroke-dasharray="{",".join(_c(d * width) for d in dash)}"' if dash else ""
    return f' stroke="{color}" stroke-width="{_c(width)}"{extra}'


def _marker(line: Line, x: float, y: float) -> str:
    r = line.size / 2
    face = line.face or line.color
    edge = line.edge or line.color
    paint = f' fill="{face}" stroke="{edge}" stroke-width="{_c(line.edge_width)}"'
    m = line.marker
    if m == "o":
        return f'<circle cx="{_c(x)}" cy="{_c(y)}" r="{_c(r)}"{paint}/>'
    if m == "s":
        return f'<rect x="{_c(x - r)}" y="{_c(y - r)}" width="{_c(2 * r)}" height="{_c(2 * r)}"{paint}/>'
    if m == "^":
        return f'<path d="M{_c(x)} {_c(y - r)}L{_c(x + r)} {_c(y + r)}L{_c(x - r)} {_c(y + r)}Z"{paint}/>'
    if m == "D":
        q = r * 0.75
        return (f'<path d="M{_c(x)} {_c(y - r)}L{_c(x + q)} {_c(y)}L{_c(x)} {_c(y + r)}L{_c(x - q)} {_c(y)}Z"'
                f"{paint}/>")
    if m == "x":
        return (f'<path d="M{_c(x - r)} {_c(y - r)}L{_c(x + r)} {_c(y + r)}M{_c(x - r)} {_c(y + r)}'
                f'L{_c(x + r)} {_c(y - r)}" stroke="{edge}" stroke-width="{_c(max(1.0, line.edge_width))}"/>')
    if m == "X":  # a filled cross: the mark of a failing point
        a = r * 0.5  # arms about a third of the size wide
        pts = [(-r + a, -r), (0, -a), (r - a, -r), (r, -r + a), (a, 0), (r, r - a), (r - a, r), (0, a), (-r + a, r),
               (-r, r - a), (-a, 0), (-r, -r + a)]
        d = "M" + "L".join(f"{_c(x + px)} {_c(y + py)}" for px, py in pts) + "Z"
        return f'<path d="{d}"{paint}/>'
    return ""


def _write_line(out: list[str], ax: Axes, line: Line) -> None:
    pts = [(ax.px(x), ax.py(y)) for x, y in zip(line.xs, line.ys, strict=False) if math.isfinite(x)
           and math.isfinite(y)]
    if not pts:
        return
    if line.style != "none" and len(pts) > 1:
        d = "M" + "L".join(f"{_c(x)} {_c(y)}" for x, y in pts)
        out.append(f'<path d="{d}"{_stroke(line.color, line.width, line.style)} fill="none" '
                   f'stroke-linejoin="round"/>')
    if line.marker:
        out.append("".join(_marker(line, x, y) for x, y in pts))


def _write_label(out: list[str], lb: Label) -> None:
    b = lb.box
    assert b is not None
    pad = 1.5 if lb.boxed else 0.0
    if lb.boxed:
        out.append(f'<rect x="{_c(b.x0)}" y="{_c(b.y0)}" width="{_c(b.x1 - b.x0)}" height="{_c(b.y1 - b.y0)}" '
                   f'fill="#ffffff" fill-opacity="0.85"/>')
    anchor = {"left": "start", "center": "middle", "right": "end"}[lb.ha]
    x = {"left": b.x0 + pad, "center": (b.x0 + b.x1) / 2, "right": b.x1 - pad}[lb.ha]
    lines = lb.text.split("\n")
    first = b.y0 + pad + ASCENT * lb.size
    spans = "".join(f'<tspan x="{_c(x)}" y="{_c(first + i * LINE_SPACING * lb.size)}">{escape(t)}</tspan>'
                    for i, t in enumerate(lines))
    out.append(f'<text class="label" font-size="{_c(lb.size)}" fill="{lb.color}" text-anchor="{anchor}">{spans}'
               "</text>")
