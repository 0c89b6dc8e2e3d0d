"""The discharge curve: the engine's RC profile against a numerical solution of the circuit's
equation (scipy's solve_ivp on C dV/dt = -V/R, the reference), and the drawing against it."""

import math
import re

import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from registry.engine.discharge import rc_profile
from registry.web.plots import DischargePath, discharge_svg, nice_step

R, C, V0, VS = 1e3, 2e-3, 800.0, 50.0  # the demo DC link through a 1 kohm tool
HOLD = 60.0


def numeric():
    # C dV/dt = -V / R (Kirchhoff's current law at the capacitor), integrated numerically
    return solve_ivp(lambda t, v: -v / (R * C), (0, 20), [V0], dense_output=True,
                     rtol=1e-10, atol=1e-9)


def test_voltage_matches_the_numerical_solution():
    sol = numeric()
    p = rc_profile(R, C, V0, VS, HOLD)
    for t in (0.0, 0.5, 2.0, 5.5, 12.0):
        assert p.voltage_at(t) == pytest.approx(sol.sol(t)[0], rel=1e-6)


def test_time_to_safe_level_matches_the_numerical_crossing():
    sol = numeric()
    crossing = brentq(lambda t: sol.sol(t)[0] - VS, 0, 20)
    p = rc_profile(R, C, V0, VS, HOLD)
    assert p.time_to_safe == pytest.approx(crossing, rel=1e-6)
    # R C ln(V0/Vs) = 2 s * ln 16 = 5.545 s, which the demo plan's comment rounds to "about 5 s"
    assert p.time_to_safe == pytest.approx(5.545, abs=1e-3)
    assert rc_profile(R, C, 40.0, VS, HOLD).time_to_safe == 0.0
    assert math.isinf(rc_profile(R, C, V0, 0.0, HOLD).time_needed)


def _points(svg):
    return [tuple(map(float, p.split(","))) for p in
            re.search(r'<polyline points="([^"]+)"', svg).group(1).split()]


def test_drawing_follows_the_curve():
    p = rc_profile(R, C, V0, VS, HOLD)
    svg = discharge_svg(DischargePath("BL-0002 discharge", p, "suitable"))
    points = _points(svg)
    x0, y0 = points[0]
    t_max = 1.25 * crossing_time()
    # the plot's axes: 70 px left margin, 550 px of width; 30 px top, 240 px of height
    for x, y in points[::25]:
        t = (x - 70) / 550 * t_max
        v = (1 - (y - 30) / 240) * V0
        assert v == pytest.approx(V0 * math.exp(-t / (R * C)), abs=V0 * 0.01)
    assert y0 == pytest.approx(30)  # starts at V0
    assert "safe level 50 V" in svg and "style=" not in svg and "<script" not in svg
    assert "reaches 50 V after 5.545 s" in svg and 'class="hold"' not in svg
    # the label stays clear of the time axis: in the top band of the 30..270 px plot area,
    # far above the tick labels below it
    y_label = float(re.search(r'<text x="[\d.]+" y="([\d.]+)"[^>]*class="reach-label"',
                              svg).group(1))
    assert y_label <= 30 + 240 / 3


def crossing_time():
    sol = numeric()
    return brentq(lambda t: sol.sol(t)[0] - VS, 0, 20)


def test_a_hold_shorter_than_the_discharge_is_marked_with_what_is_left():
    # 100 kohm: tau 200 s; held 60 s the voltage is 800 exp(-0.3) = 592.7 V and
    # E = C V**2 / 2 = 351.2 J remain (circuit theory)
    p = rc_profile(100e3, C, V0, VS, HOLD)
    svg = discharge_svg(DischargePath("BL-0004 discharge", p, "unsuitable"))
    assert 'class="hold"' in svg and "held 60 s: 592.7 V, 351.2 J left" in svg
    assert "reaches 50 V after 554.5 s" in svg


# the smallest 1-2-5 step giving at most five intervals: common practice (no source)
@pytest.mark.parametrize("span, step", [(10, 2), (7, 2), (640, 200), (0.03, 0.01), (1, 0.2)])
def test_nice_step(span, step):
    assert nice_step(span) == pytest.approx(step)


def test_needs_has_bars_are_the_ratio_of_has_to_needs():
    # CAT IV 600 V against CAT III 480 V: 600 / 480 = 1.25 (arithmetic); a fuse breaking
    # 20 kA of 24 kA: 20 / 24 = 0.83, short of the mark
    from registry.engine.findings import Finding
    from registry.web.plots import BAR_LEFT, BAR_SCALE_MAX, BAR_W, needs_has_svg
    ok = Finding("category", "pass", "tm-ir10", "m", "s", "CAT III 480 V", "CAT IV 600 V",
                 required_value=480.0, available_value=600.0, unit="V")
    short = Finding("misuse", "caution", "kx-7/amp", "m", "s", required_value=24e3,
                    available_value=20e3, unit="A")
    # a limit the job sets: 2 mm allowed, 1 mm exposed leaves 2 / 1 = 2 (arithmetic)
    tip = Finding("tip", "pass", "tl-4", "m", "s", required_value=2e-3, available_value=1e-3,
                  unit="m", compare="at-most")
    # values that are to agree (a divider's load) are not a headroom: no bar
    match = Finding("loading", "pass", "dv-1", "m", "s", required_value=1e6,
                    available_value=1.1e6, unit="ohm", compare="match")
    text = Finding("setup", "pass", "kx-7", "m", "s")  # not numeric: no bar
    svg = needs_has_svg([ok, short, tip, match, text])
    widths = [float(w) for w in re.findall(r'<rect x="[\d.]+" y="[\d.]+" width="([\d.]+)"', svg)]
    span = BAR_W - BAR_LEFT - 70
    assert widths == pytest.approx([span * 1.25 / BAR_SCALE_MAX, span * (20 / 24) / BAR_SCALE_MAX,
                                    span * 2 / BAR_SCALE_MAX], abs=0.1)
    mark = float(re.search(r'<line x1="([\d.]+)"[^>]*class="need-mark"', svg).group(1))
    assert mark == pytest.approx(BAR_LEFT + span / BAR_SCALE_MAX, abs=0.1)
    assert "x1.25" in svg and "x0.83" in svg and "x2.00" in svg and "bar-caution" in svg
    # the tooltip says the numbers in words, rendered from the numbers
    assert "has 20 kA, needs 24 kA" in svg and "has 1 mm, needs &lt;= 2 mm" in svg
    assert needs_has_svg([text]) == ""
