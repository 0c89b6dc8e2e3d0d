"""Check 9's discharge: the front-end solve for a model with a front end, the RC law otherwise,
held against the plan's hold time, with the discharge tool's power rating.

References: scipy's solve_ivp of the KX-7 low-Z circuit written out here from the demo fleet's
element values; the RC closed form V0 exp(-t/RC) and scipy for a path without a front end;
E = C V**2 / 2 (circuit theory)."""

import dataclasses
import math
from pathlib import Path

import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from registry.services.checks import run_check
from registry.engine import network
from registry.engine.checks import check_discharge
from registry.engine.derived import derive
from registry.engine.discharge import discharge_profile, rc_profile
from registry.engine.evaluate import evaluate
from registry.engine.network import NetworkError, scenarios
from registry.engine.protection import discharge_outcome, protection_path_check
from registry.engine.setups import SetupContext
from registry.engine.spec import Circuit, ModelSpec, Plan, Rating
from registry.formats.fleet import fleet_from_file

from helpers.builders import JOB_DAY, fleet_of, unit

ROOT = Path(__file__).resolve().parents[2] / "seeddata"
C, V0, VS, HOLD = 2e-3, 800.0, 50.0, 60.0  # the demo DC link, to 50 V, held on 60 s


@pytest.fixture(scope="module")
def fleet():
    return fleet_from_file(ROOT / "fleet.yaml")


def dc_link_plan(duration=HOLD):
    return Plan("discharge", Circuit("isolated", "dc", V0, capacitance=C), altitude=40.0,
                on=JOB_DAY, duration=duration, discharge_to=VS)


def kx7_lowz(fleet, plan=None):
    plan = plan or dc_link_plan()
    model = fleet.models["kx-7"]
    return SetupContext(plan, derive(plan), model, model.mode("lowz"))


# -- the reference: the KX-7 low-Z path written out from seeddata/fleet.yaml ----------------
# V -R1 1 kohm- n1 -PT1 1 kohm cold- n2; n2 -S1 closed- RL 600 ohm - COM; n2 -IN 10 Mohm- COM;
# n2 -RV1 varistor- COM. PT1 trips when its I**2 R reaches I_t**2 R t_t at its datasheet trip
# point (100 mA for 2 s: 20 J, the adiabatic approximation of PTC makers' notes), then holds
# the resistance at which it takes its tripped power, 1.5 W: the largest root of
# (Vc R / (Ra + R))**2 / R = P.
R1, RPTC, RL, RIN = 1e3, 1e3, 600.0, 10e6
RP = RL * RIN / (RL + RIN)
E_TRIP = 0.1 ** 2 * RPTC * 2.0
P_TRIPPED = 1.5


def varistor_current(v):
    # the power law through (1800 V, 1 mA) and (2900 V, 10 A), varistor makers' notes
    alpha = math.log(10 / 1e-3) / math.log(2900 / 1800)
    return 1e-3 * (v / 1800) ** alpha


def reference(hold):
    """(trip time, voltage at the end of the hold, time to VS) from scipy's solve_ivp."""
    rb = R1 + RPTC + RP

    def cold(t, y):
        i = y[0] / rb
        return [-i / C, i * i * RPTC]

    def trips(t, y):
        return y[1] - E_TRIP
    trips.terminal = True
    a = solve_ivp(cold, (0, hold), [V0, 0.0], events=trips, rtol=1e-11, atol=1e-12)
    t_trip, v_trip = a.t_events[0][0], a.y_events[0][0][0]
    ra = R1 + RP
    # P R**2 + (2 P Ra - Vc**2) R + P Ra**2 = 0, the larger root
    b = 2 * P_TRIPPED * ra - v_trip ** 2
    r_t = (-b + math.sqrt(b * b - 4 * P_TRIPPED * P_TRIPPED * ra * ra)) / (2 * P_TRIPPED)
    rafter = R1 + r_t + RP

    def hot(t, y):
        return [-y[0] / (rafter * C)]

    def safe(t, y):
        return y[0] - VS
    safe.terminal = True
    b = solve_ivp(hot, (t_trip, 1e6), [v_trip], events=safe, dense_output=True, rtol=1e-11,
                  atol=1e-9)
    return t_trip, float(b.sol(hold)[0]), float(b.t_events[0][0]), v_trip, r_t


def test_reference_may_leave_out_the_varistor():
    # n2 is at most V0 * RP / (R1 + RPTC + RP) = 184.6 V: the varistor's current there is
    # below 1e-15 of the path's 308 mA, so the written-out circuit can leave it out
    v_n2 = V0 * RP / (R1 + RPTC + RP)
    assert varistor_current(v_n2) < 1e-15 * V0 / (R1 + RPTC + RP)


def test_kx7_low_z_discharge_follows_the_front_end_not_the_formula(fleet):
    t_trip, v_hold, t_safe, v_trip, r_t = reference(HOLD)
    p = discharge_profile(kx7_lowz(fleet))
    assert p.method == "front-end"
    # solve_ivp reference: the trip at 0.220 s, 710.3 V left after 60 s, 2132 s to 50 V
    assert t_trip == pytest.approx(0.220, abs=1e-3)
    assert p.end_voltage == pytest.approx(v_hold, rel=1e-4)
    assert p.time_needed == pytest.approx(t_safe, rel=1e-4)
    assert p.time_to_safe is None and not p.reached
    # the engine's three significant figures of the reference's trip: 0.22 s at 766.8 V
    assert f"PT1 trips after {t_trip:.3g} s of the discharge at {v_trip:.4g} V" in p.events[0]
    # the formula through the stated 2.6 kohm would say R C ln(V0/Vs) = 5.2 s * ln 16 = 14.42 s
    assert rc_profile(2.6e3, C, V0, VS, HOLD).time_to_safe == pytest.approx(14.417, abs=1e-3)
    assert p.time_needed > 100 * 14.42
    # E = C V**2 / 2 left at the end of the hold (circuit theory)
    assert p.energy_left == pytest.approx(0.5 * C * v_hold ** 2, rel=2e-4)


def test_kx7_check_9_fails_the_hold_with_the_numbers(fleet):
    t_trip, v_hold, t_safe, _, _ = reference(HOLD)
    found = check_discharge(kx7_lowz(fleet))
    (hold,) = [f for f in found if "Held on for" in f.message]
    assert hold.status == "fail"
    # the numbers from the reference, in the engine's four significant figures
    assert f"it needs {t_safe:.0f} s" in hold.message  # 2132 s
    assert f"{v_hold:.1f} V" in hold.message  # 710.3 V
    assert f"{0.5 * C * v_hold ** 2:.1f} J are left" in hold.message  # 504.5 J
    assert hold.margin == pytest.approx(HOLD / t_safe - 1, rel=1e-3)
    # the time needed against the time held, as numbers (s)
    assert hold.required_value == pytest.approx(t_safe, rel=1e-3) and hold.unit == "s"
    assert hold.available_value == HOLD


def test_kx7_through_the_engine_and_check_10_give_one_number(fleet):
    _, v_hold, t_safe, _, _ = reference(HOLD)
    plan = dc_link_plan()
    result = run_check(plan, fleet)
    s = next(s for s in result.setups if s.instrument == "NB-0001" and s.mode == "lowz")
    assert s.verdict == "unsuitable"
    nine = [f for f in s.findings if f.check == "discharge"]
    ten = [f for f in s.findings if f.check == "protection-path"
           and "discharge through the front end" in f.message]
    assert len(ten) == 1
    text = f"is still at {v_hold:.1f} V"
    needs = f"it needs {t_safe:.0f} s (about {t_safe / 60:.0f} min) to reach 50 V"
    assert text in nine[0].message and needs in nine[0].message
    assert text in ten[0].message and needs in ten[0].message


def test_check_9_and_10_integrate_the_discharge_once(fleet, monkeypatch):
    calls = []
    import scipy.integrate  # the solver imports solve_ivp from here when it integrates
    real = scipy.integrate.solve_ivp

    def counting(*a, **k):
        calls.append(a[1])
        return real(*a, **k)
    monkeypatch.setattr(scipy.integrate, "solve_ivp", counting)
    network.cache_clear()
    ctx = kx7_lowz(fleet)
    check_discharge(ctx)
    alone = len(calls)
    assert alone > 0
    assert calls.count((0.0, HOLD)) == 1  # the hold, then its PTC-tripped segment
    protection_path_check(ctx)
    discharge_outcome(ctx)
    check_discharge(ctx)
    # check 10 adds one solve for the other modes on V/COM (S1 open in all three, so they
    # share it) and none for the low-Z mode: that solve is check 9's
    assert calls.count((0.0, HOLD)) == 2
    assert len([c for c in calls if c[1] == HOLD and c[0] > 0]) == 1  # lowz, after the trip
    assert len(calls) == alone + 1
    network.cache_clear()


def test_a_front_end_that_cannot_be_solved_is_unknown_not_a_crash(fleet, monkeypatch):
    def broken(*a, **k):
        raise NetworkError("the discharge integration failed: step size too small")
    monkeypatch.setattr(scenarios, "discharge", broken)
    (f,) = check_discharge(kx7_lowz(fleet))
    assert f.status == "unknown" and "step size too small" in f.message
    assert discharge_outcome(kx7_lowz(fleet)) == []


def test_a_ptc_without_its_resistance_is_unknown_not_a_crash(fleet):
    # The KX-7's PT1 keeps its trip point (100 mA for 2 s) but loses its resistance: the
    # adiabatic trip energy I**2 R t (PTC makers' application notes) has no R, and the front
    # end cannot be solved. This used to reach the arithmetic (a TypeError out of check 9).
    # The engine's rule (common practice, no source): missing data gives unknown, never pass.
    model = fleet.models["kx-7"]
    pt1 = next(e for e in model.front_end if e.id == "PT1")
    assert pt1.get("trip_time") is not None and pt1.get("trip_time_current") is not None
    bare = dataclasses.replace(pt1, params=tuple(p for p in pt1.params if p[0] != "resistance"))
    model = dataclasses.replace(model, front_end=tuple(bare if e is pt1 else e
                                                       for e in model.front_end))
    plan = dc_link_plan()
    ctx = SetupContext(plan, derive(plan), model, model.mode("lowz"))
    network.cache_clear()
    (f,) = check_discharge(ctx)
    assert f.status == "unknown" and "PT1 has no resistance" in f.message
    assert discharge_outcome(ctx) == []
    result = evaluate(plan, dataclasses.replace(fleet, models={**fleet.models, "kx-7": model}))
    lowz = [s for s in result.setups if s.instrument_model == "kx-7" and s.mode == "lowz"]
    assert lowz and all(s.verdict != "suitable" for s in lowz)
    network.cache_clear()


# -- without a front end: the RC law ---------------------------------------------------------

def _tool(key, r, power, energy=10e3):
    return ModelSpec(key, "discharge-tool", ratings=(Rating("none", 1500.0, 8e3),),
                     integrated_leads=True, resistance=r, energy=energy, power=power,
                     max_voltage=1500.0)


def _only(result, tag):
    return next(s for s in result.setups if s.instrument == tag)


def test_rc_law_against_the_closed_form_and_scipy():
    # C dV/dt = -V/R integrated by scipy, against V0 exp(-t/RC) and RC ln(V0/Vs)
    r = 100e3
    sol = solve_ivp(lambda t, v: -v / (r * C), (0, 1000), [V0], dense_output=True,
                    rtol=1e-11, atol=1e-9)
    p = rc_profile(r, C, V0, VS, HOLD)
    assert p.end_voltage == pytest.approx(sol.sol(HOLD)[0], rel=1e-7)
    assert p.end_voltage == pytest.approx(V0 * math.exp(-HOLD / (r * C)), rel=1e-12)
    crossing = brentq(lambda t: sol.sol(t)[0] - VS, 1, 1000)
    assert p.time_needed == pytest.approx(crossing, rel=1e-7)
    assert p.time_to_safe is None


def test_a_hold_shorter_than_the_discharge_fails_with_time_voltage_and_energy_left():
    # 100 kohm, 2 mF: t = RC ln(800/50) = 200 s * 2.7726 = 554.5 s; held 30 s:
    # V = 800 exp(-30/200) = 688.6 V, E = C V**2/2 = 474.1 J (circuit theory)
    fleet = fleet_of([_tool("dt-25", 100e3, 1e3)], [unit("T2", "dt-25")])
    s = _only(evaluate(dc_link_plan(duration=30.0), fleet), "T2")
    assert s.verdict == "unsuitable"
    (f,) = [f for f in s.findings if f.check == "discharge" and f.status == "fail"]
    v = V0 * math.exp(-30.0 / (100e3 * C))
    assert f"{v:.1f} V" == "688.6 V" and "688.6 V" in f.message
    assert f"{0.5 * C * v * v:.1f} J" == "474.1 J" and "474.1 J are left" in f.message
    assert "it needs 554.5 s" in f.message and "Held on for 30 s" in f.message
    # t = RC ln(V0/Vs) against the 30 s held, as numbers
    (hold,) = [f for f in s.findings if f.check == "discharge" and f.unit == "s"]
    assert hold.available_value == 30.0 and hold.required_value == pytest.approx(554.5, abs=0.05)
    # held long enough, the same tool reaches the level: no fail
    s = _only(evaluate(dc_link_plan(duration=600.0), fleet), "T2")
    assert all(f.status != "fail" for f in s.findings)


def test_power_rating_below_the_peak_power_is_a_caution():
    # V0**2/R = 800**2 / 1000 = 640 W at the first moment: common practice (no source)
    fleet = fleet_of([_tool("dt-1", 1e3, 400.0), _tool("dt-2", 1e3, 700.0)],
                     [unit("T1", "dt-1"), unit("T2", "dt-2")])
    result = evaluate(dc_link_plan(), fleet)
    low, high = _only(result, "T1"), _only(result, "T2")
    (f,) = [f for f in low.findings if f.status == "caution"]
    assert "V0**2/R" in f.message
    assert (f.required_value, f.available_value, f.unit) == (pytest.approx(640.0), 400.0, "W")
    assert f.margin == pytest.approx(400 / 640 - 1)
    assert low.verdict == "conditional"
    assert high.verdict == "suitable"


def test_a_discharge_to_zero_volts_never_ends(fleet):
    # V0 exp(-t/RC) > 0 for every t (circuit theory): no time is given, front end or RC law
    plan = Plan("discharge", Circuit("isolated", "dc", V0, capacitance=C), altitude=40.0,
                on=JOB_DAY, discharge_to=0.0)
    p = discharge_profile(kx7_lowz(fleet, plan))
    assert math.isinf(p.time_needed) and not p.reached
    assert math.isinf(rc_profile(1e3, C, V0, 0.0, HOLD).time_needed)
    (hold,) = [f for f in check_discharge(kx7_lowz(fleet, plan)) if "Held on" in f.message]
    assert hold.status == "fail" and "never reaches 0 V" in hold.message
