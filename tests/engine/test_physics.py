"""The engine's formulas against independent computation and hand-worked facts."""


import pytest
from scipy.integrate import solve_ivp

from registry.engine import checks, derived
from registry.engine.derived import derive
from registry.engine.setups import SetupContext
from registry.engine.spec import Circuit, Mode, ModelSpec, Plan, Rating

from helpers.builders import JOB_DAY, meter


def _integrate_discharge(r, c, v0, v_safe):
    """dV/dt = -V/(RC), integrated numerically; returns the time V reaches ``v_safe`` and the
    energy dissipated in R up to then (integral of V^2/R dt), both independent of the
    closed forms under test."""
    def rhs(t, y):
        v = y[0]
        return [-v / (r * c), v * v / r]
    def hit(t, y):
        return y[0] - v_safe
    hit.terminal, hit.direction = True, -1
    sol = solve_ivp(rhs, (0, 50 * r * c), [v0, 0.0], events=hit, rtol=1e-10, atol=1e-12)
    return sol.t_events[0][0], sol.y_events[0][0][1]


@pytest.mark.parametrize("r,c,v0,vs", [
    (1e3, 2e-3, 800.0, 50.0),     # a discharge tool on a DC link
    (100e3, 2e-3, 800.0, 60.0),   # a high-resistance stick: minutes
    (3e3, 470e-6, 400.0, 35.0),   # a low-Z input on a drive's bus, wet-location level
    (1e6, 10e-9, 20e3, 60.0),     # a HV supply's output capacitance
])
def test_discharge_time_and_energy_against_integration(r, c, v0, vs):
    t_num, e_num = _integrate_discharge(r, c, v0, vs)
    assert checks.discharge_time(r, c, v0, vs) == pytest.approx(t_num, rel=1e-6)
    assert checks.absorbed_to(c, v0, vs) == pytest.approx(e_num, rel=1e-6)


def test_energy_absorbed_in_a_duration_against_integration():
    r, c, v0, t = 3e3, 2e-3, 800.0, 10.0
    sol = solve_ivp(lambda _t, y: [-y[0] / (r * c), y[0] ** 2 / r], (0, t), [v0, 0.0],
                    rtol=1e-10, atol=1e-12)
    assert checks.absorbed_in(c, v0, r, t) == pytest.approx(sol.y[1][-1], rel=1e-6)


def test_already_safe_discharge_takes_no_time():
    assert checks.discharge_time(1e3, 1e-3, 40.0, 60.0) == 0.0
    assert checks.absorbed_to(1e-3, 40.0, 60.0) == 0.0


def test_low_z_input_on_2kv():
    # Ohm's law, common practice (no source): 2 kohm across 2000 V draws 1 A, 2 kW.
    assert 2000.0 / 2e3 == 1.0
    assert checks.input_power(2000.0, 2e3) == pytest.approx(2000.0)
    lowz = Mode("lowz", "Low-Z volts", "voltage", "dc", ("V", "COM"), input_resistance=2e3,
                max_input=2500.0, max_duration=10.0)
    inst = ModelSpec("hv-m", "multimeter", ratings=(Rating("none", 3000.0, 20e3),),
                     modes=(lowz,), connectors=("4mm",), integrated_leads=True)
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 2000.0), altitude=0.0,
                duration=60.0, on=JOB_DAY)
    (f,) = checks.check_duration(SetupContext(plan, derive(plan), inst, lowz))
    assert f.status == "fail"
    assert "1 A" in f.message and "2 kW" in f.message


def test_divider_shows_2_volts_for_2_kv():
    # Common practice (no source): a 1000:1 divider shows 2.000 V for 2 kV.
    div = ModelSpec("dv-1", "hv-divider", ratings=(Rating("none", 40e3, 48e3),),
                    connector="4mm", attenuation=1000.0, required_load=10e6,
                    output_resistance=10e3, resistance=1e9)
    inst = meter()
    vdc = inst.mode("vdc")
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 2000.0, source_impedance=1.0),
                altitude=0.0, on=JOB_DAY)
    ctx = SetupContext(plan, derive(plan), inst, vdc, div)
    assert ctx.seen_voltage == pytest.approx(2.000)
    texts = " ".join(f.message for f in checks.check_loading(ctx))
    assert "shows 2 V" in texts or "show 2 V" in texts


def test_divider_load_error_formula():
    # Hand-worked: Rout 10 kohm calibrated into 10 Mohm, loaded with 1 Mohm:
    # 1e6*(1e7+1e4) / (1e7*(1e6+1e4)) - 1 = 10.01e12/10.1e12 - 1 = -0.008911
    assert checks.divider_error(1e6, 10e6, 10e3) == pytest.approx(10.01 / 10.1 - 1)


def test_reading_with_source_impedance():
    # Voltage divider: 10 kohm input on 100 V behind 1 kohm reads 100*10/11 = 90.909 V.
    assert checks.reading_with_source(100.0, 10e3, 1e3) == pytest.approx(1000 / 11)


def test_prospective_current_and_peak():
    assert derived.prospective_current(480.0, 0.02) == pytest.approx(24e3)
    assert derived.source_impedance_of(480.0, 24e3) == pytest.approx(0.02)
    assert derived.peak_of(230.0, "ac") == pytest.approx(325.27, abs=0.01)
    assert derived.peak_of(800.0, "dc") == 800.0


def test_derived_energy_from_capacitance_uses_peak_on_ac():
    plan = Plan("measure-voltage", Circuit("isolated", "ac", 230.0, capacitance=100e-6),
                altitude=0.0)
    d = derive(plan)
    # 0.5 * 100e-6 * (230*sqrt2)^2 = 0.5 * 1e-4 * 105800 = 5.29 J
    assert d.energy == pytest.approx(5.29)
    plan = Plan("discharge", Circuit("isolated", "dc", 800.0, stored_energy=640.0),
                altitude=0.0)
    assert derive(plan).capacitance == pytest.approx(2e-3)
    assert derive(plan).safe_level == 60.0  # dc hazardous-live level, IEC 61010-031
