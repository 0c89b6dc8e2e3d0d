"""Pictures drawn here as hand-built SVG: the discharge curve (voltage against time through one
path, with the safe level marked) and a setup's needs-against-has bars. Presentation attributes
only (no style attribute, no script), so the page's
content security policy holds inside the image too."""

from __future__ import annotations

import math
from dataclasses import dataclass
from xml.sax.saxutils import escape

from ..engine.discharge import DischargeProfile
from ..engine.quantity import ENERGY, RESISTANCE, TIME, VOLTAGE, format_quantity as qtext
from ..engine.result import format_ratio


@dataclass(frozen=True)
class DischargePath:
    label: str  # e.g. "BL-0002 discharge (ks-dr1)"
    profile: DischargeProfile  # the engine's discharge for the setup (check 9 reads the same)
    verdict: str

    @property
    def through(self) -> str:
        """What the charge flows through, in words."""
        p = self.profile
        r = qtext(p.resistance, RESISTANCE)
        return f"the front end ({r} at the start)" if p.method == "front-end" else r


def nice_step(span: float, ticks: int = 5) -> float:
    """A round step (1, 2 or 5 times a power of ten) giving about ``ticks`` intervals."""
    if span <= 0 or not math.isfinite(span):
        return 1.0
    raw = span / ticks
    mag = 10 ** math.floor(math.log10(raw))
    for f in (1, 2, 5, 10):
        if raw <= f * mag:
            return f * mag
    return 10 * mag


W, H = 640, 320
LEFT, RIGHT, TOP, BOTTOM = 70, 20, 30, 50


def plot_span(p: DischargeProfile) -> float:
    """The time axis (s): a quarter past the time to the safe level under the RC law, the
    solver's last sample for a front end, five time constants when the level is never met."""
    if p.method == "front-end":
        return max(p.times[-1], p.duration if not p.reached else 0.0) or 1.0
    t = p.time_needed
    return 1.25 * t if t is not None and math.isfinite(t) and t > 0 else 5 * p.tau


def value_grid(left: float, width: float, y, top: float, step: float, label,
               colour: str) -> list[str]:
    """Horizontal grid lines from 0 to ``top`` every ``step``, each labelled at the left by
    ``label(value)`` (already escaped); ``y`` maps a value to its height."""
    out = []
    v = 0.0
    while v <= top + 1e-9:
        out.append(f'<line x1="{left}" y1="{y(v):.1f}" x2="{left + width}" y2="{y(v):.1f}" '
                   f'stroke="{colour}"/>')
        out.append(f'<text x="{left - 6}" y="{y(v) + 4:.1f}" text-anchor="end">'
                   f'{label(v)}</text>')
        v += step
    return out


def discharge_svg(path: DischargePath) -> str:
    """The curve of the setup's :class:`DischargeProfile`: the same numbers check 9 states."""
    p = path.profile
    v0, v_safe = p.v0, p.v_safe
    t_max = plot_span(p)
    t_safe = p.time_needed if p.time_needed is not None else math.inf
    pw, ph = W - LEFT - RIGHT, H - TOP - BOTTOM

    def x(t):
        return LEFT + pw * t / t_max

    def y(v):
        return TOP + ph * (1 - v / v0)

    n = 200
    points = " ".join(f"{x(t_max * i / n):.1f},{y(p.voltage_at(t_max * i / n)):.1f}"
                      for i in range(n + 1))
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {W} {H}" width="{W}" '
           f'height="{H}" role="img" font-family="sans-serif" font-size="12">',
           f'<title>{escape(path.label)}: discharge from {escape(qtext(v0, VOLTAGE))} through '
           f'{escape(path.through)}; it {escape(p.outcome())}</title>',
           f'<rect x="0" y="0" width="{W}" height="{H}" fill="#ffffff"/>']
    step_t = nice_step(t_max)
    t = 0.0
    while t <= t_max + 1e-12:
        out.append(f'<line x1="{x(t):.1f}" y1="{TOP}" x2="{x(t):.1f}" y2="{TOP + ph}" '
                   f'stroke="#dde3e8"/>')
        out.append(f'<text x="{x(t):.1f}" y="{TOP + ph + 16}" text-anchor="middle">'
                   f'{escape(qtext(t, TIME)) if t else "0"}</text>')
        t += step_t
    out += value_grid(LEFT, pw, y, v0, nice_step(v0),
                      lambda v: escape(qtext(v, VOLTAGE)) if v else "0", "#dde3e8")
    out.append(f'<rect x="{LEFT}" y="{TOP}" width="{pw}" height="{ph}" fill="none" '
               f'stroke="#5a6570"/>')
    # the safe level: a dashed line, labelled in words (not by colour alone)
    out.append(f'<line x1="{LEFT}" y1="{y(v_safe):.1f}" x2="{LEFT + pw}" y2="{y(v_safe):.1f}" '
               f'stroke="#1d6b2f" stroke-width="2" stroke-dasharray="8 5" class="safe-level"/>')
    out.append(f'<text x="{LEFT + pw - 4}" y="{y(v_safe) - 6:.1f}" text-anchor="end" '
               f'fill="#1d6b2f">safe level {escape(qtext(v_safe, VOLTAGE))}</text>')
    out.append(f'<polyline points="{points}" fill="none" stroke="#1f5f8b" stroke-width="2.5" '
               f'class="curve"/>')
    if not p.reached and p.duration < t_max:
        # the end of the hold: a dotted line with what is left there, in words
        xe = x(p.duration)
        right = xe > LEFT + 0.6 * pw
        out.append(f'<line x1="{xe:.1f}" y1="{TOP}" x2="{xe:.1f}" y2="{TOP + ph}" '
                   f'stroke="#8b1f1f" stroke-width="1.5" stroke-dasharray="2 3" class="hold"/>')
        out.append(f'<text x="{xe + (-6 if right else 6):.1f}" y="{TOP + 16}" '
                   f'text-anchor="{"end" if right else "start"}" fill="#8b1f1f">held '
                   f'{escape(qtext(p.duration, TIME))}: {escape(qtext(p.end_voltage, VOLTAGE))}, '
                   f'{escape(qtext(p.energy_left, ENERGY))} left</text>')
    if math.isfinite(t_safe) and t_safe <= t_max:
        out.append(f'<circle cx="{x(t_safe):.1f}" cy="{y(v_safe):.1f}" r="5" fill="#1d2329"/>')
        # The label sits in the plot's top right corner, which a falling curve leaves empty
        # (below the safe-level line it ran into the time axis's tick labels), a line lower
        # when the end-of-hold label is there.
        y_label = TOP + (34 if not p.reached and p.duration < t_max else 16)
        out.append(f'<text x="{LEFT + pw - 6:.1f}" y="{y_label}" text-anchor="end" '
                   f'class="reach-label">reaches {escape(qtext(v_safe, VOLTAGE))} after '
                   f'{escape(p.needed_text())}</text>')
    out.append(f'<text x="{LEFT + pw / 2}" y="{H - 8}" text-anchor="middle">time</text>')
    out.append(f'<text x="16" y="{TOP + ph / 2}" text-anchor="middle" '
               f'transform="rotate(-90 16 {TOP + ph / 2})">voltage</text>')
    head = f"{path.label}: {path.through}"
    if p.method == "rc":
        head += f", tau {qtext(p.tau, TIME)}"
    out.append(f'<text x="{LEFT}" y="{TOP - 10}">{escape(head)}</text>')
    out.append("</svg>")
    return "\n".join(out)


# -- needs against has --------------------------------------------------------------------------

BAR_W, BAR_H, BAR_LEFT, BAR_SCALE_MAX = 420, 22, 150, 3.0


def needs_has_rows(findings) -> list[dict]:
    """The numeric findings of a setup as bars, from their numbers (``required_value``,
    ``available_value``): what the item may take over what it must take (available /
    required; for a limit the job sets, the limit over the value), the need at 1. Findings
    without both numbers, with values that are to match rather than leave room, or without a
    finite ratio are left out."""
    rows = []
    for f in findings:
        ratio = f.value_ratio if f.numeric else None
        if ratio is None or not math.isfinite(ratio):
            continue
        rows.append({"label": f"{f.check}: {f.subject}", "ratio": ratio, "status": f.status,
                     "required": f.required, "available": f.available})
    return rows


def needs_has_svg(findings) -> str:
    """An SVG of one bar per numeric finding: the bar is what the item may take, the dark mark
    at x1 what the job needs; a bar short of the mark falls short. Drawn here, no script, so it
    needs no internet and passes the page's content security policy."""
    rows = needs_has_rows(findings)
    if not rows:
        return ""
    top = 18
    h = top + len(rows) * (BAR_H + 8) + 6
    span = BAR_W - BAR_LEFT - 70

    def x(r):
        return BAR_LEFT + span * min(r, BAR_SCALE_MAX) / BAR_SCALE_MAX

    colours = {"pass": "#2f6f3e", "caution": "#8a5a00", "fail": "#8b1f1f", "unknown": "#5a6570"}
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {BAR_W} {h}" width="100%" '
           f'role="img" class="needs-has" font-family="sans-serif" font-size="11">',
           "<title>What each item may take against what the job needs</title>",
           f'<text x="{x(1):.1f}" y="11" text-anchor="middle">needs (x1)</text>']
    for i, row in enumerate(rows):
        y = top + i * (BAR_H + 8)
        colour = colours.get(row["status"], "#5a6570")
        out.append(f'<text x="{BAR_LEFT - 6}" y="{y + 15}" text-anchor="end">'
                   f'{escape(row["label"][:28])}</text>')
        out.append(f'<rect x="{BAR_LEFT}" y="{y}" width="{x(row["ratio"]) - BAR_LEFT:.1f}" '
                   f'height="{BAR_H}" fill="{colour}" class="bar bar-{row["status"]}">'
                   f'<title>{escape(row["label"])}: has {escape(row["available"])}, needs '
                   f'{escape(row["required"])}</title></rect>')
        more = "+" if row["ratio"] > BAR_SCALE_MAX else ""
        out.append(f'<text x="{x(row["ratio"]) + 4:.1f}" y="{y + 15}">'
                   f'{escape(format_ratio(row["ratio"]))}{more}</text>')
    out.append(f'<line x1="{x(1):.1f}" y1="{top - 3}" x2="{x(1):.1f}" y2="{h - 4}" '
               f'stroke="#1d2329" stroke-width="2" class="need-mark"/>')
    out.append("</svg>")
    return "\n".join(out)


# -- month charts on the dashboard --------------------------------------------------------------

# Event kinds in a fixed order, each with a colour and a letter drawn on its bar segments, so a
# kind is told by the letter as well as the colour.
KIND_MARKS = {"overvoltage": ("#8b1f1f", "V"), "transient": ("#8a5a00", "T"),
              "discharge": ("#1f5f8b", "D"), "fuse-open": ("#5b3a8b", "F"),
              "mechanical": ("#3d6b2f", "M"), "other": ("#5a6570", "O")}
CHART_W, CHART_H, CHART_LEFT, CHART_TOP, CHART_BOTTOM = 640, 240, 40, 16, 46


def month_chart_svg(months, series: dict[str, list[int]], title: str,
                    marks: dict[str, tuple[str, str]] | None = None) -> str:
    """Stacked bars, one per month (``months``: dates of their first days), one segment per
    series (``series``: name -> a count per month), with a legend; every bar carries its
    numbers in a <title>. Drawn here as plain SVG, no script."""
    marks = marks or {}
    n = len(months)
    totals = [sum(values[i] for values in series.values()) for i in range(n)]
    top = max(max(totals, default=0), 1)
    step = nice_step(top, 4) if top > 4 else 1
    y_max = step * math.ceil(top / step)
    pw = CHART_W - CHART_LEFT - 10
    ph = CHART_H - CHART_TOP - CHART_BOTTOM
    bw = pw / n

    def y(v):
        return CHART_TOP + ph * (1 - v / y_max)

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {CHART_W} {CHART_H}" '
           f'width="100%" role="img" font-family="sans-serif" font-size="11" class="month-chart">',
           f"<title>{escape(title)}</title>"]
    out += value_grid(CHART_LEFT, pw, y, y_max, step, lambda v: f"{v:g}", "#e3e8ec")
    for i, month in enumerate(months):
        x0 = CHART_LEFT + i * bw + bw * 0.15
        base = 0
        parts = []
        for name, values in series.items():
            count = values[i]
            if not count:
                continue
            colour, letter = marks.get(name, ("#1f5f8b", ""))
            y_top, y_bot = y(base + count), y(base)
            out.append(f'<rect x="{x0:.1f}" y="{y_top:.1f}" width="{bw * 0.7:.1f}" '
                       f'height="{y_bot - y_top:.1f}" fill="{colour}" class="seg">'
                       f'<title>{escape(month.strftime("%Y-%m"))}: {count} {escape(name)}'
                       f'</title></rect>')
            if letter and y_bot - y_top >= 12:
                out.append(f'<text x="{x0 + bw * 0.35:.1f}" y="{(y_top + y_bot) / 2 + 4:.1f}" '
                           f'text-anchor="middle" fill="#fff">{letter}</text>')
            parts.append(f"{count} {name}")
            base += count
        if totals[i]:
            out.append(f'<text x="{x0 + bw * 0.35:.1f}" y="{y(totals[i]) - 3:.1f}" '
                       f'text-anchor="middle">{totals[i]}</text>')
        out.append(f'<text x="{x0 + bw * 0.35:.1f}" y="{CHART_TOP + ph + 14}" '
                   f'text-anchor="middle">{escape(month.strftime("%b"))}</text>')
        if i == 0 or month.month == 1:
            out.append(f'<text x="{x0 + bw * 0.35:.1f}" y="{CHART_TOP + ph + 27}" '
                       f'text-anchor="middle" fill="#5a6570">{month.year}</text>')
    if len(series) > 1:
        lx = CHART_LEFT
        for name in series:
            colour, letter = marks.get(name, ("#1f5f8b", ""))
            out.append(f'<rect x="{lx}" y="{CHART_H - 12}" width="10" height="10" '
                       f'fill="{colour}"/>')
            out.append(f'<text x="{lx + 14}" y="{CHART_H - 3}">{escape(letter)} '
                       f'{escape(name)}</text>')
            lx += 16 + 7 * (len(name) + 3)
    out.append("</svg>")
    return "\n".join(out)
