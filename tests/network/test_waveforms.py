"""The impulse waves and the clamp-energy factor K, by numerical integration."""

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import fsolve

from registry.engine.network import devices


def _shape(f, t_end, n=400_001):
    """Front time T1 = 1.25 (t90 - t10), time to half value T2 from the virtual origin
    (the line through the 10 % and 90 % points meets zero), and integral(f/peak dt), by the
    definitions of IEC 60060-1 (the same for the currents of IEC 61000-4-5, where the front
    time of a current wave is also 1.25 (t90 - t10))."""
    t = np.linspace(0.0, t_end, n)
    y = f(t)
    k = int(np.argmax(y))
    y = y / y[k]
    t10 = np.interp(0.1, y[:k + 1], t[:k + 1])
    t90 = np.interp(0.9, y[:k + 1], t[:k + 1])
    t1 = 1.25 * (t90 - t10)
    origin = t10 - 0.1 * t1
    t50 = np.interp(0.5, y[k:][::-1], t[k:][::-1])
    return t1, t50 - origin, np.trapezoid(y, t), np.trapezoid(y ** 2, t)


def test_8_20_wave_has_its_front_and_tail():
    tau = devices.TAU_8_20
    t1, t2, _, _ = _shape(lambda t: (t / tau) ** 3 * np.exp(-t / tau), 400e-6)
    # IEC 61000-4-5: 8 us front time, 20 us time to half value, each +-20 % there; the
    # analytic form must hit both within 2 %.
    assert t1 == pytest.approx(8e-6, rel=0.02)
    assert t2 == pytest.approx(20e-6, rel=0.02)


def test_k_factor_for_8_20_by_numerical_integration():
    # Fit the form's tau from the definition (time to half value 20 us) instead of taking the
    # module's constant, integrate the wave numerically, and compare K = integral / (Ip * t2).
    def t2_of(tau):
        return _shape(lambda t: (t / tau) ** 3 * np.exp(-t / tau), 400e-6, 200_001)[1]
    tau = fsolve(lambda x: [t2_of(x[0] * 1e-6) - 20e-6], [4.0])[0] * 1e-6
    _, _, area, _ = _shape(lambda t: (t / tau) ** 3 * np.exp(-t / tau), 400e-6)
    k = area / 20e-6
    assert k == pytest.approx(devices.K_8_20, rel=0.02)
    # "near 1.0", as the issue says, and well below the 10/1000 wave's 1.4
    assert 0.8 < k < 1.1


def test_k_factor_1_4_belongs_to_the_10_1000_wave():
    # A double exponential fitted to a 10 us front and a 1000 us time to half value gives
    # K = integral / (Ip * t2) close to the 1.4 quoted in varistor makers' application notes.
    def resid(x):
        a, b = np.exp(x)
        t1, t2, _, _ = _shape(lambda t: np.exp(-t / a) - np.exp(-t / b), 8000.0, 400_001)
        return [t1 - 10.0, t2 - 1000.0]
    a, b = np.exp(fsolve(resid, np.log([1400.0, 3.0])))
    t1, t2, area, _ = _shape(lambda t: np.exp(-t / a) - np.exp(-t / b), 8000.0)
    assert t1 == pytest.approx(10.0, rel=1e-3) and t2 == pytest.approx(1000.0, rel=1e-3)
    assert area / 1000.0 == pytest.approx(1.4, rel=0.03)


def test_1_2_50_constants_refitted_from_the_definition():
    def resid(x):
        a, b = np.exp(x)
        t1, t2, _, _ = _shape(lambda t: np.exp(-t / a) - np.exp(-t / b), 600.0, 600_001)
        return [t1 - 1.2, t2 - 50.0]
    a, b = np.exp(fsolve(resid, np.log([60.0, 0.3])))
    assert a * 1e-6 == pytest.approx(devices.TAU_TAIL_1250, rel=0.01)
    assert b * 1e-6 == pytest.approx(devices.TAU_FRONT_1250, rel=0.01)


def test_1_2_50_wave_constants_and_square_integral():
    a, b = devices.TAU_TAIL_1250, devices.TAU_FRONT_1250
    t1, t2, _, sq = _shape(lambda t: np.exp(-t / a) - np.exp(-t / b), 600e-6, 1_200_001)
    # IEC 60060-1: 1.2 us front (+-30 %), 50 us to half value (+-20 %); the module's fitted
    # constants must give both within 0.5 %.
    assert t1 == pytest.approx(1.2e-6, rel=5e-3)
    assert t2 == pytest.approx(50e-6, rel=5e-3)
    # the closed form in the module against scipy's quadrature
    peak = devices._double_exp_peak(a, b)
    num, _ = quad(lambda t: ((math.exp(-t / a) - math.exp(-t / b)) / peak) ** 2, 0, 2e-3,
                  points=[1e-6, 1e-5], limit=200)
    assert devices.square_integral_1250() == pytest.approx(num, rel=1e-6)
    assert sq == pytest.approx(num, rel=1e-3)


def test_clamp_energy_formula():
    # E = K * Vc * Ip * t2: 1 kV at 100 A over the 8/20 wave, K = 0.873: 1.746 J.
    assert devices.impulse_clamp_energy(1000.0, 100.0) == pytest.approx(
        devices.K_8_20 * 1000 * 100 * 20e-6)
    assert devices.impulse_clamp_energy(1000.0, 100.0) == pytest.approx(1.746, rel=1e-3)


def test_power_law_through_both_datasheet_points():
    law = devices.PowerLaw(470.0, 775.0, 5.0)
    # alpha = ln(5 A / 1 mA) / ln(775/470) = 8.517 / 0.5001 = 17.03
    assert law.alpha == pytest.approx(math.log(5000) / math.log(775 / 470))
    assert law.current(470.0) == pytest.approx(1e-3)
    assert law.current(775.0) == pytest.approx(5.0)
    assert law.current(-775.0) == pytest.approx(-5.0)
    assert law.voltage(5.0) == pytest.approx(775.0)
    with pytest.raises(ValueError):
        devices.PowerLaw(470.0, 400.0, 5.0)


def test_ptc_adiabatic_trip_time():
    # Datasheet point 100 mA trips in 2 s at 1 kohm cold: E = 0.1^2 * 1000 * 2 = 20 J. At
    # 160 mA: t = 20 / (0.16^2 * 1000) = 0.78125 s (worked by hand).
    e = devices.ptc_trip_energy(1000.0, 2.0, 0.1)
    assert e == pytest.approx(20.0)
    assert devices.ptc_trip_time(0.16, 1000.0, e) == pytest.approx(0.78125)
