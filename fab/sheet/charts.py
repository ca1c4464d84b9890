"""Line charts for black-and-white print: series told apart by dash and marker, with
round ticks and a legend under the axis.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from fab.sheet.document import MM, SANS, SANS_BOLD, _figure, _plain


@dataclass(frozen=True)
class _Series:
    label: str
    xs: Sequence[float]
    ys: Sequence[float]
    dash: tuple[float, ...] = ()
    marker: str = ""  # "o" open circle, "s" filled square, "^" open triangle, "" none
    every: int = 1  # a marker on every n-th point


@dataclass(frozen=True)
class _Mark:
    value: float
    label: str
    dash: tuple[float, ...]


def _nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """Round tick values covering [lo, hi], about n of them."""
    if hi <= lo:
        hi = lo + 1.0
    raw = (hi - lo) / n
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw * 0.999)
    first = math.floor(lo / step + 1e-9) * step
    ticks = []
    t = first
    while t <= hi + step * 1e-6:
        ticks.append(round(t, 10))
        t += step
    if ticks[-1] < hi - 1e-9:
        ticks.append(round(t, 10))
    return ticks


def _tick_label(v: float, ticks: Sequence[float]) -> str:
    step = ticks[1] - ticks[0] if len(ticks) > 1 else 1.0
    digits = max(0, -math.floor(math.log10(step) + 1e-9)) if step < 1 else 0
    return f"{v:.{digits}f}".replace("-", "\u2212") if v < 0 else f"{v:.{digits}f}"


def _dash(c, pattern: Sequence[float]) -> None:
    c.setDash(list(pattern), 0) if pattern else c.setDash()


def _marker(c, kind: str, x: float, y: float) -> None:
    k = 1.9
    if kind == "o":
        c.setFillGray(1)
        c.circle(x, y, k, fill=1, stroke=1)
    elif kind == "s":
        c.setFillGray(0)
        c.rect(x - k, y - k, 2 * k, 2 * k, fill=1, stroke=0)
    elif kind == "^":
        c.setFillGray(1)
        p = c.beginPath()
        p.moveTo(x, y + 1.3 * k)
        p.lineTo(x - 1.2 * k, y - k)
        p.lineTo(x + 1.2 * k, y - k)
        p.close()
        c.drawPath(p, fill=1, stroke=1)
    c.setFillGray(0)


def _draw_chart(
    c,
    w: float,
    h: float,
    title: str,
    xlabel: str,
    ylabel: str,
    series: Sequence[_Series],
    xlim: tuple[float, float] | None = None,
    vmarks: Sequence[_Mark] = (),
    hmarks: Sequence[_Mark] = (),
    y_from_zero: bool = True,
    xticks: Sequence[float] | None = None,
    ylim: tuple[float, float] | None = None,
    legend_rows: int = 1,
) -> None:
    """A line chart for black-and-white print: series told apart by dash and marker.

    The legend sits under the axis, `legend_rows` rows reserved for it (charts side by side
    reserve the same so their plots line up).
    """
    legend = _legend_layout(series, w)
    rows = max(legend_rows, max((r for r, _ in legend), default=-1) + 1)
    left, bottom, top, right = 13 * MM, 9 * MM + rows * _LEGEND_ROW, 7 * MM, 3 * MM
    pw, ph = w - left - right, h - bottom - top
    xs = [x for s in series for x in s.xs]
    ys = [y for s in series for y in s.ys] + [m.value for m in hmarks]
    x0, x1 = xlim if xlim else (min(xs), max(xs))
    y0, y1 = ylim if ylim else ((min(0.0, min(ys)) if y_from_zero else min(ys)), max(ys))
    xt, yt = list(xticks) if xticks else _nice_ticks(x0, x1, 6), _nice_ticks(y0, y1, 5)
    x0, x1 = (x0, x1) if xlim else (xt[0], xt[-1])
    y0, y1 = yt[0], yt[-1]

    def px(v):
        return left + (v - x0) / (x1 - x0) * pw

    def py(v):
        return bottom + (v - y0) / (y1 - y0) * ph

    c.setFont(SANS_BOLD, 8.5)
    c.drawString(0, h - 8, _plain(title))
    c.setLineWidth(0.25)
    c.setStrokeGray(0.7)
    for t in xt:
        if x0 - 1e-9 <= t <= x1 + 1e-9:
            c.line(px(t), bottom, px(t), bottom + ph)
    for t in yt:
        c.line(left, py(t), left + pw, py(t))
    c.setStrokeGray(0)
    c.setLineWidth(0.7)
    c.rect(left, bottom, pw, ph)
    c.setFont(SANS, 7)
    for t in xt:
        if x0 - 1e-9 <= t <= x1 + 1e-9:
            c.drawCentredString(px(t), bottom - 8, _tick_label(t, xt))
    for t in yt:
        c.drawRightString(left - 2, py(t) - 2.5, _tick_label(t, yt))
    c.drawCentredString(left + pw / 2, bottom - 16, _plain(xlabel))
    c.saveState()
    c.translate(7, bottom + ph / 2)
    c.rotate(90)
    c.drawCentredString(0, 0, _plain(ylabel))
    c.restoreState()
    for m in hmarks:
        c.setLineWidth(0.8)
        _dash(c, m.dash)
        c.line(left, py(m.value), left + pw, py(m.value))
        c.setDash()
        c.setFont(SANS, 6.5)
        c.drawRightString(left + pw - 2, py(m.value) + 2, _plain(m.label))
    for m in vmarks:
        if not x0 <= m.value <= x1:
            continue
        c.setLineWidth(0.8)
        _dash(c, m.dash)
        c.line(px(m.value), bottom, px(m.value), bottom + ph)
        c.setDash()
        c.setFont(SANS, 6.5)
        c.saveState()
        c.translate(px(m.value) - 1.5, bottom + ph - 2)
        c.rotate(90)
        c.drawRightString(0, 0, _plain(m.label))
        c.restoreState()
    c.saveState()
    p = c.beginPath()
    p.rect(left, bottom, pw, ph)
    c.clipPath(p, stroke=0, fill=0)
    for s in series:
        if len(s.xs) < 2:
            continue
        c.setLineWidth(1.1)
        _dash(c, s.dash)
        line = c.beginPath()
        line.moveTo(px(s.xs[0]), py(s.ys[0]))
        for x, y in zip(s.xs[1:], s.ys[1:], strict=True):
            line.lineTo(px(x), py(y))
        c.drawPath(line, stroke=1, fill=0)
        c.setDash()
        c.setLineWidth(0.7)
        for i in range(0, len(s.xs), s.every):
            _marker(c, s.marker, px(s.xs[i]), py(s.ys[i]))
    c.restoreState()
    # Legend under the axis label, entries left to right.
    c.setFont(SANS, 6.8)
    for (row, x), ser in zip(legend, series, strict=True):
        yy = bottom - 9 * MM - (row + 1) * _LEGEND_ROW + 2.5
        c.setLineWidth(1.1)
        _dash(c, ser.dash)
        c.line(left + x, yy + 2.3, left + x + 9 * MM, yy + 2.3)
        c.setDash()
        c.setLineWidth(0.7)
        _marker(c, ser.marker, left + x + 4.5 * MM, yy + 2.3)
        c.drawString(left + x + 10.5 * MM, yy, _plain(ser.label))


_LEGEND_ROW = 3.8 * MM


def _legend_layout(series: Sequence[_Series], width: float) -> list[tuple[int, float]]:
    """(row, x offset) of each series' legend entry, wrapping at the chart's width."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    out, row, x = [], 0, 0.0
    avail = width - 16 * MM
    for ser in series:
        size = 10.5 * MM + stringWidth(_plain(ser.label), SANS, 6.8) + 5 * MM
        if x > 0 and x + size > avail:
            row, x = row + 1, 0.0
        out.append((row, x))
        x += size
    return out


_SOLID, _DASHED, _DOTTED, _DASH_DOT = (), (5, 2.5), (1, 2), (6, 2, 1, 2)
_CHART_H = 62 * MM


def _chart(width: float, **kwargs):
    return _figure(width, _CHART_H, lambda c, w, h: _draw_chart(c, w, h, **kwargs))
