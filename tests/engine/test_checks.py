"""Worked examples for each check and each verdict (an invented lab; sources beside each)."""

from dataclasses import replace
from datetime import date, datetime

import pytest

from registry.engine import checks
from registry.engine.derived import derive
from registry.engine.evaluate import evaluate
from registry.engine.findings import Finding
from registry.engine.setups import SetupContext
from registry.engine.spec import (Circuit, Fuse, Mode, ModelSpec, PastEvent, Plan, Rating)

from helpers.builders import JOB_DAY, fleet_of, leads, meter, panel_plan, unit


def _only(result, tag, mode):
    (s,) = [s for s in result.setups if s.instrument == tag and s.mode == mode]
    return s


def _by(setup, check, subject=None):
    return [f for f in setup.findings if f.check == check
            and (subject is None or f.subject == subject)]


def test_cat_iii_meter_with_cat_iv_leads_fits_a_480_277_board():
    # IEC 61010-1: CAT III 600 V covers a CAT III circuit at 480 V (to earth 277 V); the
    # CAT IV 600 V / CAT III 1000 V leads cover it too; the 300 V row gives 4 kV, within the
    # 6 kV a CAT III 600 V rating stands for (IEC 61010-2-030 Table 102).
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(), fleet), "M1", "vac")
    assert s.verdict == "suitable"
    assert s.accessories == ("L1",)
    assert all(f.status == "pass" for f in _by(s, "category"))
    (t,) = _by(s, "transient", "mx-3")
    assert (t.required_value, t.available_value, t.unit, t.basis) == (4000.0, 6000.0, "V", "peak")
    assert t.required == "4 kV peak" and t.available == "6 kV peak"  # rendered from them


def test_cat_ii_meter_does_not_fit_a_cat_iii_board():
    # A higher voltage in a lower category does not stand in for the category (docs/rules.md,
    # check 2).
    m = meter("mx-2", ratings=(Rating("II", 1000.0),))
    fleet = fleet_of([m, leads()], [unit("M2", "mx-2"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(), fleet), "M2", "vac")
    assert s.verdict == "unsuitable"
    (f,) = _by(s, "category", "mx-2")
    assert f.status == "fail" and f.required == "CAT III 480 V" and f.required_value == 480.0
    assert s.deciding.check in ("category", "transient")


def test_higher_category_at_lower_voltage_does_not_stand_in():
    # CAT IV 300 V on a CAT III 480 V board: category enough, voltage not (docs/rules.md, check 2).
    m = meter("mx-4", ratings=(Rating("IV", 300.0),))
    fleet = fleet_of([m, leads()], [unit("M4", "mx-4"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(), fleet), "M4", "vac")
    (f,) = _by(s, "category", "mx-4")
    assert f.status == "fail" and f.margin == pytest.approx(300 / 480 - 1)


def test_leads_of_a_lower_category_decide_the_chain():
    m = meter("mx-9", ratings=(Rating("IV", 1000.0),))
    cheap = leads("tl-2", ratings=(Rating("II", 1000.0),))
    fleet = fleet_of([m, cheap], [unit("M9", "mx-9"), unit("L2", "tl-2")])
    s = _only(evaluate(panel_plan(), fleet), "M9", "vac")
    assert s.verdict == "unsuitable"
    assert s.deciding.subject == "tl-2"
    assert [f.status for f in _by(s, "category", "mx-9")] == ["pass"]


def test_rating_above_the_sites_altitude_does_not_hold():
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(altitude=3000.0), fleet), "M1", "vac")
    assert s.verdict == "unsuitable"
    (f,) = _by(s, "altitude", "mx-3")
    # IEC 60664-1 Table A.2: 1.14 at 3000 m against 1.00 at 2000 m
    assert f.status == "fail" and "1.14 times" in f.message


def test_rating_stated_for_high_altitude_holds():
    m = meter("mx-h", ratings=(Rating("III", 600.0, max_altitude=5000.0),))
    tl = leads("tl-h", ratings=(Rating("IV", 600.0, max_altitude=5000.0),))
    fleet = fleet_of([m, tl], [unit("MH", "mx-h"), unit("LH", "tl-h")])
    s = _only(evaluate(panel_plan(altitude=4500.0), fleet), "MH", "vac")
    assert [f.status for f in _by(s, "altitude")] == ["pass", "pass"]
    assert s.verdict == "suitable"


def test_impulse_withstand_comes_from_the_rating_that_covers_the_circuit():
    # An item rated CAT IV 600 V and CAT II 1000 V on a CAT II circuit at 800 V (to earth
    # 800 V) where a site survey gives 7 kV: only CAT II 1000 V covers 800 V, and it stands
    # for 6 kV (IEC 61010-2-030 Table 102 / IEC 60664-1 Table F.1, 1000 V row); the 8 kV of
    # CAT IV 600 V belongs to a rating that does not cover the circuit and must not be used.
    m = meter("mx-6", ratings=(Rating("IV", 600.0), Rating("II", 1000.0)))
    fleet = fleet_of([m, leads()], [unit("M6", "mx-6"), unit("L1", "tl-4")])
    plan = panel_plan(circuit={"category": "II", "voltage": 800.0, "voltage_to_earth": 800.0,
                               "transient": 7000.0})
    s = _only(evaluate(plan, fleet), "M6", "vac")
    assert [f.status for f in _by(s, "category", "mx-6")] == ["pass"]
    (t,) = _by(s, "transient", "mx-6")
    assert t.status == "fail" and (t.required_value, t.available_value) == (7000.0, 6000.0)
    assert "by its rating CAT II 1 kV" in t.message
    # the leads' CAT III 1000 V covers it: 8 kV (Table 102, CAT III 1000 V row)
    (tl,) = _by(s, "transient", "tl-4")
    assert tl.status == "pass" and tl.available_value == 8000.0


def test_a_rating_that_does_not_cover_the_circuit_vouches_for_no_impulse():
    # CAT IV 300 V on a CAT III 480 V / 277 V board: the 6 kV that CAT IV 300 V stands for
    # (Table 102) would exceed the 4 kV the board delivers, but the rating does not cover
    # 480 V, so no withstand applies: the transient check fails with the category check.
    m = meter("mx-4", ratings=(Rating("IV", 300.0),))
    fleet = fleet_of([m, leads()], [unit("M4", "mx-4"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(), fleet), "M4", "vac")
    (t,) = _by(s, "transient", "mx-4")
    assert t.status == "fail" and "no rating that covers CAT III 480 V" in t.message
    assert checks.withstand_of(m) == 6000.0  # all ratings: what a logged event is held to


def _tip_setup(exposure, plan):
    tl = leads("tl-t", tip_exposure=exposure)
    fleet = fleet_of([meter(ratings=(Rating("IV", 1000.0),)), tl],
                     [unit("M1", "mx-3"), unit("LT", "tl-t")])
    return _only(evaluate(plan, fleet), "M1", "vdc" if plan.circuit.waveform == "dc"
                 else "vac")


def test_tip_over_4_mm_fails_on_cat_iii_and_over_2_mm_is_a_caution():
    # IEC 61010-031:2015 (CAT III/IV probe assemblies) and HSE GS38 para 9: at most 4 mm of
    # exposed metal; GS38 recommends 2 mm or less.
    s = _tip_setup(4.5e-3, panel_plan())
    (f,) = _by(s, "tip")
    assert f.status == "fail" and "IEC 61010-031" in f.source
    assert (f.required_value, f.available_value, f.unit, f.compare) == (4e-3, 4.5e-3, "m",
                                                                        "at-most")
    assert f.required == "<= 4 mm"
    assert s.verdict == "unsuitable"
    (f,) = _by(_tip_setup(3e-3, panel_plan()), "tip")
    assert f.status == "caution" and (f.required_value, f.available_value) == (2e-3, 3e-3)
    (f,) = _by(_tip_setup(2e-3, panel_plan()), "tip")
    assert f.status == "pass"


def test_tip_is_checked_on_isolated_hazardous_live_work():
    # 500 V dc is above the 60 V dc hazardous-live level (IEC 61010-031:2015), so the tip is
    # checked though the circuit is isolated; with no category GS38 applies as a caution.
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 500.0), altitude=40.0,
                on=JOB_DAY)
    (f,) = _by(_tip_setup(4.5e-3, plan), "tip")
    assert f.status == "caution" and "GS38" in f.source and "no measurement category" in \
        f.message
    (f,) = _by(_tip_setup(None, plan), "tip")
    assert f.status == "unknown"
    # 24 V dc is below the hazardous-live level: no tip rule applies
    low = Plan("measure-voltage", Circuit("isolated", "dc", 24.0), altitude=40.0, on=JOB_DAY)
    assert _by(_tip_setup(4.5e-3, low), "tip") == []


def test_altitude_factor_is_the_next_row_up_and_stated():
    # IEC 60664-1 Table A.2 read conservatively: 2500 m takes the 3000 m row, 1.14 (not the
    # 1.07 of interpolation); a rating valid to 2000 m does not hold there.
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(altitude=2500.0), fleet), "M1", "vac")
    (f,) = _by(s, "altitude", "mx-3")
    assert f.status == "fail" and "factor of 1.14" in f.message and "1.14 times" in f.message
    assert "row up to 3000 m" in f.message
    # 2000 m exactly: the 2000 m row, 1.00; the rating holds
    s = _only(evaluate(panel_plan(altitude=2000.0), fleet), "M1", "vac")
    assert [f.status for f in _by(s, "altitude")] == ["pass", "pass"]
    # a rating stated to 5000 m holds at 4500 m, where the factor is 1.48 (the 5000 m row)
    m = meter("mx-h", ratings=(Rating("III", 600.0, max_altitude=5000.0),))
    fleet = fleet_of([m, leads()], [unit("MH", "mx-h"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(altitude=4500.0), fleet), "MH", "vac")
    (f,) = _by(s, "altitude", "mx-h")
    assert f.status == "pass" and "1.48" in f.message


def _current_plan(**circuit):
    c = dict(voltage=400.0, voltage_to_earth=230.0, frequency=50.0, source_impedance=0.05,
             current=5.0)
    c.update(circuit)
    return panel_plan(task="measure-current", circuit=c)


def test_fuse_breaking_less_than_the_prospective_current_fails_a_current_task():
    # 400 V / 0.05 ohm = 8 kA prospective; a 1.5 kA fuse cannot clear it (IEC 61010-2-033
    # foreseeable misuse: the current input put across the circuit).
    weak = Fuse(current=10.0, voltage=1000.0, voltage_dc=1000.0, breaking_capacity=1.5e3)
    m = meter("mx-w", amp_fuse=weak)
    fleet = fleet_of([m, leads()], [unit("MW", "mx-w"), unit("L1", "tl-4")])
    s = _only(evaluate(_current_plan(), fleet), "MW", "amp")
    assert s.verdict == "unsuitable"
    (f,) = [f for f in _by(s, "misuse") if "in the meter" in f.message]
    assert f.status == "fail" and "8 kA" in f.message


def test_adequate_fuse_passes_and_low_voltage_fuse_fails_on_dc():
    m = meter()  # 50 kA, 1000 V ac and dc
    fleet = fleet_of([m, leads(current_rating=10.0)], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(_current_plan(), fleet), "M1", "amp")
    assert [f.status for f in _by(s, "misuse")] == ["pass"]
    assert s.verdict == "suitable"
    acfuse = Fuse(current=10.0, voltage=1000.0, voltage_dc=250.0, breaking_capacity=20e3)
    m2 = meter("mx-d", amp_fuse=acfuse)
    plan = Plan("measure-current", Circuit("isolated", "dc", 400.0, source_impedance=0.05,
                                           current=5.0), altitude=40.0, on=JOB_DAY)
    fleet = fleet_of([m2, leads()], [unit("MD", "mx-d"), unit("L1", "tl-4")])
    s = _only(evaluate(plan, fleet), "MD", "amp")
    assert s.verdict == "unsuitable" and "dc voltage rating" in s.deciding.message


def test_current_mode_above_its_maximum_fails():
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(_current_plan(current=60.0), fleet), "M1", "amp")
    (f,) = _by(s, "mode-input", "mx-3/amp")
    assert f.status == "fail" and (f.required_value, f.available_value, f.unit) == (60.0, 10.0,
                                                                                    "A")


def test_other_mode_on_the_same_terminals_is_a_caution():
    # docs/rules.md, check 6: the low-Z mode (600 V) shares V/COM with DC volts (1000 V) on
    # an 800 V link.
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 800.0), altitude=40.0,
                on=JOB_DAY, site="North bench")
    m = meter(ratings=(Rating("III", 1000.0),))
    fleet = fleet_of([m, leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    result = evaluate(plan, fleet)
    s = _only(result, "M1", "vdc")
    assert s.verdict == "conditional"
    (f,) = [f for f in _by(s, "misuse") if f.status == "caution"]
    assert "Low-Z volts" in f.message
    assert _only(result, "M1", "lowz").verdict == "unsuitable"  # 600 V input on 800 V


def test_missing_instrument_value_is_unknown_and_unverified():
    m = meter(max_input=None)
    fleet = fleet_of([m, leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(), fleet), "M1", "vac")
    assert [f.status for f in _by(s, "mode-input")] == ["unknown"]
    assert s.verdict == "unverified"


def test_isolated_transient_not_run_without_plan_value_and_unknown_without_withstand():
    scope = ModelSpec("sc-1", "oscilloscope", ratings=(Rating("none", 300.0),),
                      modes=(Mode("ch1", "Channel 1", "voltage", "both", ("CH1", "GND"),
                                  input_resistance=1e6, max_input=300.0),),
                      connectors=("bnc",))
    probe = ModelSpec("pb-1", "test-leads", ratings=(Rating("none", 300.0, 2500.0),),
                      connector="bnc")
    fleet = fleet_of([scope, probe], [unit("S1", "sc-1"), unit("P1", "pb-1")])
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 48.0), altitude=0.0, on=JOB_DAY)
    s = _only(evaluate(plan, fleet), "S1", "ch1")
    assert [f.status for f in _by(s, "transient")] == ["not-run"]
    assert "circuit.transient" in _by(s, "transient")[0].message
    assert s.verdict == "suitable"
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 48.0, transient=1000.0),
                altitude=0.0, on=JOB_DAY)
    s = _only(evaluate(plan, fleet), "S1", "ch1")
    assert {f.subject: f.status for f in _by(s, "transient")} == {"sc-1": "unknown",
                                                                   "pb-1": "pass"}
    assert s.verdict == "unverified"


def test_loading_caution_on_a_soft_source():
    # A 2.6 kohm low-Z input on a source behind 100 ohm reads 480*2600/2700 = 462.2 V: 3.7 % low.
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(circuit={"source_impedance": 100.0}), fleet), "M1", "lowz")
    (f,) = _by(s, "loading")
    assert f.status == "caution" and "462.2 V" in f.message
    # the reading error against the 1 % allowed, as numbers: 1 - 2600/2700 = 3.70 %
    assert f.available_value == pytest.approx(1 - 2600 / 2700) and f.required_value == 0.01
    assert f.unit == "1" and f.compare == "at-most"


def test_divider_into_the_wrong_load_is_a_caution_with_its_error():
    # A 10 kohm output and 1000:1 into 10 Mohm fit a divider of about 10 Mohm (9.99 Mohm over
    # 10.01 kohm), so the divider's own data agree and only the load is wrong.
    div = ModelSpec("dv-1", "hv-divider", ratings=(Rating("none", 40e3, 48e3),),
                    connector="4mm", attenuation=1000.0, required_load=10e6,
                    output_resistance=10e3, resistance=10e6, min_voltage=1e3,
                    tip_exposure=2e-3)  # its tip is checked on hazardous-live work too
    m = meter()
    fleet = fleet_of([m, div], [unit("M1", "mx-3"), unit("D1", "dv-1")])
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 20e3), altitude=40.0, on=JOB_DAY)
    result = evaluate(plan, fleet)
    ohm_into_1meg = _only(result, "M1", "vdc")
    assert ohm_into_1meg.verdict == "suitable"
    low = _only(result, "M1", "lowz")
    (f,) = [f for f in _by(low, "loading", "dv-1") if "calibrated" in f.message]
    # 2.6 kohm into a divider calibrated for 10 Mohm with 10 kohm output: 2.6e3*(1e7+1e4) /
    # (1e7*(2.6e3+1e4)) - 1 = -79.3 %
    assert f.status == "caution" and "79.3% low" in f.message
    assert (f.required_value, f.available_value, f.compare) == (10e6, 2.6e3, "match")
    # a divider is not offered below its min_voltage
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 500.0), altitude=40.0, on=JOB_DAY)
    assert all(s.accessories != ("D1",) for s in evaluate(plan, fleet).setups)


def test_loaded_divider_attenuation_worked_example():
    # Worked by hand (series/parallel resistors, Thevenin): Rt = 999 Mohm over Rb = 1.25 Mohm,
    # loaded by 5 Mohm: Rb||RL = 1.25*5/6.25 = 1 Mohm, so A = (999 + 1)/1 = 1000. The divider
    # alone: R = Rt + Rb = 1000.25 Mohm, Rout = Rt*Rb/R = 999*1.25/1000.25 Mohm.
    r, r_out = 1000.25e6, 999e6 * 1.25e6 / 1000.25e6
    assert checks.loaded_divider_attenuation(r, r_out, 5e6) == pytest.approx(1000.0, rel=1e-9)
    # unloaded (RL -> infinity) it is R/Rb = 1000.25/1.25 = 800.2
    assert checks.loaded_divider_attenuation(r, r_out, 1e30) == pytest.approx(800.2, rel=1e-9)
    # Rt||Rb can be at most (Rt + Rb)/4 (equal legs): 1 Mohm with 300 kohm out is no divider
    assert checks.loaded_divider_attenuation(1e6, 300e3, 10e6) is None


def _divider(**kw):
    data = dict(ratings=(Rating("none", 40e3, 48e3),), connector="4mm", attenuation=1000.0,
                required_load=5e6, resistance=1000.25e6,
                output_resistance=999e6 * 1.25e6 / 1000.25e6,
                tip_exposure=2e-3)  # within GS38's 2 mm, so only the data caution shows
    data.update(kw)
    return ModelSpec("dv-1", "hv-divider", **data)


def _data_findings(div):
    fleet = fleet_of([meter(), div], [unit("M1", "mx-3"), unit("D1", "dv-1")])
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 20e3), altitude=40.0, on=JOB_DAY)
    s = _only(evaluate(plan, fleet), "M1", "vdc")
    return [f for f in _by(s, "loading", "dv-1") if "recorded data" in f.message], s


def test_divider_data_that_agree_give_no_caution():
    # the worked example above: its resistances give 1000:1, as recorded
    assert _data_findings(_divider())[0] == []


def test_divider_data_more_than_10_percent_apart_is_a_caution_naming_the_fields():
    # the same resistances recorded as 1200:1: 1000 vs 1200 is 16.7 % apart (> 10 %)
    (f,), s = _data_findings(_divider(attenuation=1200.0))
    assert f.status == "caution" and s.verdict == "conditional"
    for field in ("attenuation 1200:1", "resistance", "output_resistance", "required_load"):
        assert field in f.message
    assert "about 1000:1" in f.message and "17%" in f.message
    # 1100:1 is 9.1 % from 1000:1 (within 10 %): no caution
    assert _data_findings(_divider(attenuation=1100.0))[0] == []
    # 1 Gohm with a 10 kohm output into 10 Mohm is about 100100:1, not 1000:1
    (f,), _ = _data_findings(_divider(resistance=1e9, output_resistance=10e3,
                                      required_load=10e6))
    assert "about 100099:1" in f.message


def test_divider_data_no_divider_can_have_is_a_caution():
    (f,), _ = _data_findings(_divider(resistance=1e6, output_resistance=300e3))
    assert f.status == "caution" and "quarter of the input resistance" in f.message


def test_low_z_longer_than_its_limit_fails():
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(duration=120.0), fleet), "M1", "lowz")
    (f,) = _by(s, "low-z")
    assert f.status == "fail" and f.margin == pytest.approx(-0.5)


def _tool(key="dt-1", r=1e3, energy=2e3, power=1e3):
    return ModelSpec(key, "discharge-tool", ratings=(Rating("none", 1500.0, 8e3),),
                     integrated_leads=True, resistance=r, energy=energy, power=power,
                     max_voltage=1500.0)


def _discharge_plan(**kw):
    return Plan("discharge", Circuit("isolated", "dc", 800.0, capacitance=2e-3), altitude=40.0,
                on=JOB_DAY, **kw)


def test_discharge_tool_suitable_and_slow_stick_unsuitable():
    fleet = fleet_of([_tool(), _tool("dt-25", r=100e3, energy=10e3)],
                     [unit("T1", "dt-1"), unit("T2", "dt-25")])
    result = evaluate(_discharge_plan(discharge_to=50.0), fleet)
    fast, slow = _only(result, "T1", "discharge"), _only(result, "T2", "discharge")
    assert fast.verdict == "suitable"
    # t = 1e3 * 2e-3 * ln(800/50) = 5.545 s; E = 0.5*2e-3*(800^2-50^2) = 637.5 J
    (f,) = _by(fast, "discharge")
    assert "5.545 s" in f.message
    assert f.required_value == pytest.approx(637.5) and f.unit == "J"
    assert slow.verdict == "unsuitable"  # 554.5 s, more than the 60 s the plan holds it on
    assert result.setups[0].instrument == "T1"


def test_discharge_beyond_the_tools_energy_fails():
    fleet = fleet_of([_tool(energy=100.0)], [unit("T1", "dt-1")])
    s = _only(evaluate(_discharge_plan(), fleet), "T1", "discharge")
    assert s.verdict == "unsuitable" and s.deciding.check == "discharge"


def test_low_z_input_draining_a_bank_without_a_limit_is_unknown():
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    plan = Plan("measure-voltage", Circuit("isolated", "dc", 400.0, capacitance=1e-3),
                altitude=40.0, on=JOB_DAY)
    result = evaluate(plan, fleet)
    assert [f.status for f in _by(_only(result, "M1", "lowz"), "discharge")] == ["unknown"]
    # the 10 Mohm input: tau 10 000 s, it passes with the time constant stated
    (f,) = _by(_only(result, "M1", "vdc"), "discharge")
    assert f.status == "pass" and "tau" in f.message


def test_on_hold_overdue_away_retired_units_are_excluded_with_the_first_reason():
    units = [unit("M1", "mx-3", status="on-hold"), unit("M2", "mx-3", open_hold=True),
             unit("M3", "mx-3", verification_due=date(2026, 5, 31)),
             unit("M4", "mx-3", status="retired", verification_due=date(2020, 1, 1)),
             unit("M5", "mx-3", status="away"), unit("M6", "mx-3"),
             unit("L1", "tl-4", verification_due=date(2026, 1, 1)), unit("L2", "tl-4")]
    result = evaluate(panel_plan(), fleet_of([meter(), leads()], units))
    reasons = {e.unit: e.reason for e in result.excluded}
    assert reasons == {"M1": "on-hold", "M2": "on-hold", "M3": "verification-overdue",
                       "M4": "retired", "M5": "away", "L1": "verification-overdue"}
    assert {s.instrument for s in result.setups} == {"M6"}
    assert all(s.accessories == ("L2",) for s in result.setups)


def test_history_out_of_rating_event_and_worn_clamp_are_cautions():
    worn = tuple(PastEvent("vac", "transient", True, datetime(2026, 1, d), clamp_conducted=True)
                 for d in (2, 3, 4))
    bad = (PastEvent("vac", "overvoltage", False, datetime(2026, 2, 1)),)
    units = [unit("M1", "mx-3", history=bad), unit("M2", "mx-3", history=worn),
             unit("M3", "mx-3"), unit("L1", "tl-4")]
    result = evaluate(panel_plan(), fleet_of([meter(), leads()], units))
    assert _only(result, "M1", "vac").verdict == "conditional"
    assert _only(result, "M2", "vac").verdict == "conditional"
    assert "clamped 3 transients" in _by(_only(result, "M2", "vac"), "history")[0].message
    assert _only(result, "M3", "vac").verdict == "suitable"


def test_ranking_verdict_then_margin_then_site_then_due():
    wide = meter("mx-w", ratings=(Rating("III", 1000.0),), lowz=False)
    narrow = meter("mx-n", ratings=(Rating("III", 600.0),), lowz=False)
    units = [unit("N1", "mx-n"), unit("W1", "mx-w", site="Far yard"),
             unit("W2", "mx-w", verification_due=date(2026, 9, 1)),
             unit("W3", "mx-w", verification_due=date(2027, 9, 1)), unit("L1", "tl-4")]
    result = evaluate(panel_plan(), fleet_of([wide, narrow, leads()], units))
    order = [s.instrument for s in result.setups if s.mode == "vac"]
    # mx-w has more headroom than mx-n (1000 V vs 600 V, and 8 kV vs 6 kV); among the mx-w
    # units the plan's site first, then the later verification due.
    assert order == ["W3", "W2", "W1", "N1"]
    verdicts = [s.verdict for s in result.setups]
    order_index = ["suitable", "conditional", "unverified", "unsuitable"]
    assert verdicts == sorted(verdicts, key=order_index.index)


def test_extra_checks_receive_the_context_and_add_findings():
    seen = []

    def front_end(ctx: SetupContext):
        seen.append((ctx.instrument.key, ctx.mode.key, ctx.seen_voltage, ctx.expected_impulse,
                     ctx.generator_impedance, ctx.prospective_current))
        return [Finding("protection-path", "fail", "RV1", "varistor overstressed", "test")]

    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("M2", "mx-3"),
                                          unit("L1", "tl-4")])
    result = evaluate(panel_plan(), fleet, extra_checks=(front_end,))
    assert all(s.verdict == "unsuitable" for s in result.setups)
    assert ("mx-3", "vac", 480.0, 4000.0, 2.0, pytest.approx(24e3)) in seen
    # evaluated once per model combination, not once per unit
    assert len(seen) == len({(k, m) for k, m, *_ in seen})


def test_json_has_the_result_format():
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4"),
                                          unit("M9", "mx-3", status="away")])
    result = evaluate(panel_plan(), fleet)
    out = result.as_json(findings=True)
    assert out["format"] == "withstand-result/1"
    assert set(out) == {"format", "summary", "plan", "counts", "setups", "accessories",
                        "excluded", "cautions"}
    for key in ("transient", "energy", "prospective_current", "hazardous_live"):
        assert key in out["plan"]
    assert out["plan"]["transient"] == 4000.0
    s = out["setups"][0]
    assert set(s) == {"instrument", "mode", "accessories", "verdict", "margin", "margin_ratio",
                      "deciding", "findings"}
    assert set(s["findings"][0]) >= {"check", "status", "subject", "required", "available",
                                     "message", "source"}
    assert out["excluded"] == [{"unit": "M9", "reason": "away"}]
    assert any("qualified person" in c for c in out["cautions"])
    # without asking: the same setups with their deciding finding, no list of findings
    brief = result.as_json()
    assert [dict(x, findings=None) for x in out["setups"]] == \
        [dict(x, findings=None) for x in brief["setups"]]
    assert "findings" not in brief["setups"][0]
    assert brief["counts"]["excluded"] == 1 and brief["counts"]["setups"] == len(result.setups)


def test_cautions_state_hazards_plainly():
    plan = Plan("verify-absence", Circuit("isolated", "dc", 800.0, capacitance=2e-3),
                altitude=40.0, on=JOB_DAY)
    result = evaluate(plan, fleet_of([meter(), leads()], [unit("M1", "mx-3")]))
    text = " ".join(result.cautions)
    assert "Prove the tester" in text and "protective equipment" in text
    assert "640 J" in text and "shock" in text and "hazardous live" in text


# -- fuses, series current and foreseeable misuse ----------------------------------------------

FUSE_125V_DC = Fuse(current=10.0, voltage=250.0, voltage_dc=125.0, breaking_capacity=1.5e3)


def _dc_plan(task="measure-current", **circuit):
    c = dict(supply="isolated", waveform="dc", voltage=400.0)
    if task == "measure-current":
        c["current"] = 5.0
    c.update(circuit)
    return Plan(task, Circuit(**c), altitude=40.0, on=JOB_DAY)


def test_dc_fuse_voltage_is_checked_without_a_prospective_current():
    # A fuse must be rated for the voltage it interrupts, its dc rating for dc (IEC 60269-1
    # rated voltage; IEC 61010-2-033 fused current inputs): 125 V dc < 400 V dc fails the
    # current task although the plan gives no prospective current; only the breaking capacity
    # waits for one (not-run, naming the plan fields).
    m = meter("mx-5", amp_fuse=FUSE_125V_DC)
    fleet = fleet_of([m, leads(current_rating=10.0)], [unit("M5", "mx-5"), unit("L1", "tl-4")])
    s = _only(evaluate(_dc_plan(), fleet), "M5", "amp")
    assert s.verdict == "unsuitable"
    fuse = _by(s, "misuse", "mx-5/amp")
    assert [f.status for f in fuse] == ["fail", "not-run"]
    assert "dc voltage rating 125 V is below 400 V" in fuse[0].message
    assert fuse[0].margin == pytest.approx(125 / 400 - 1)
    assert "breaking capacity" in fuse[1].message
    assert "circuit.prospective_current" in fuse[1].message
    # a 1000 V dc fuse passes the voltage part on the same plan, breaking capacity still not-run
    s = _only(evaluate(_dc_plan(), fleet_of([meter(), leads(current_rating=10.0)],
                                            [unit("M1", "mx-3"), unit("L1", "tl-4")])),
              "M1", "amp")
    assert [f.status for f in _by(s, "misuse", "mx-3/amp")] == ["pass", "not-run"]
    assert s.verdict == "suitable"


def test_series_current_needs_every_lead_tip_and_clip_rated_the_lowest_governs():
    # IEC 61010-031:2015: a probe assembly carrying current has a rated current; in series
    # the whole current flows through each item, so the lowest rated one decides.
    tl = leads(current_rating=10.0)
    clip = ModelSpec("ck-5", "clip", ratings=(Rating("III", 1000.0),), connector="tip-2mm",
                     current_rating=5.0)
    m = meter()

    def chain(current):
        plan = _current_plan(current=current)
        ctx = SetupContext(plan, derive(plan), m, m.mode("amp"), tl, clip)
        return [f for f in checks.check_mode_input(ctx) if f.source == checks.SRC_CHAIN_CURRENT]

    (f,) = chain(8.0)
    assert f.status == "fail" and f.subject == "ck-5"  # 5 A < 8 A although the leads take 10 A
    assert (f.required_value, f.available_value) == (8.0, 5.0)
    assert f.margin == pytest.approx(5 / 8 - 1)
    (f,) = chain(4.0)
    assert f.status == "pass" and f.subject == "ck-5" and f.available_value == 5.0
    # a lead without a recorded rating is unknown, never a pass
    fleet = fleet_of([meter(), leads()], [unit("M1", "mx-3"), unit("L1", "tl-4")])
    s = _only(evaluate(_current_plan(current=4.0), fleet), "M1", "amp")
    (f,) = [f for f in _by(s, "mode-input") if f.source == checks.SRC_CHAIN_CURRENT]
    assert f.status == "unknown" and f.subject == "tl-4"
    assert s.verdict == "unverified"


def test_leads_left_in_the_current_socket_are_a_caution_naming_the_fuse():
    # The panel: 480 V / 20 mohm = 24 kA prospective (Ohm's law). Leads left in the A socket
    # of a meter set to AC volts put its 1.5 kA, 250 V fuse across it (IEC 61010-2-033
    # foreseeable misuse): a caution naming that fuse, on both counts.
    m = meter("mx-5", amp_fuse=FUSE_125V_DC)
    fleet = fleet_of([m, leads()], [unit("M5", "mx-5"), unit("L1", "tl-4")])
    s = _only(evaluate(panel_plan(), fleet), "M5", "vac")
    assert s.verdict == "conditional"
    (f,) = [f for f in _by(s, "misuse", "mx-5/amp")]
    assert f.status == "caution" and "leads left in its sockets" in f.message
    assert "in the meter, 10 A" in f.message
    assert "breaks only 1.5 kA of the 24 kA" in f.message and "250 V is below 480 V" in f.message
    # without a prospective current: the dc voltage rating still gives the caution, the
    # breaking capacity is not-run
    s = _only(evaluate(_dc_plan("measure-voltage"), fleet), "M5", "vdc")
    found = _by(s, "misuse", "mx-5/amp")
    assert [f.status for f in found] == ["caution", "not-run"]
    assert "dc voltage rating 125 V is below 400 V" in found[0].message
    assert s.verdict == "conditional"


def _meter_lowz_limit(key, limit):
    m = meter(key)
    modes = tuple(replace(x, discharge_energy=limit) if x.key == "lowz" else x for x in m.modes)
    return replace(m, modes=modes)


def test_low_z_selected_by_mistake_on_a_charged_bank():
    # 1 mF at 400 V dc stores E = C V^2 / 2 = 0.5 * 1e-3 * 400^2 = 80 J (circuit theory);
    # through 3 kohm (tau 3 s) the low-Z input takes all of it within 60 s (1 - e^-40).
    plan = _dc_plan("measure-voltage", capacitance=1e-3)
    for limit, status in ((20.0, "caution"), (100.0, "pass"), (None, "caution")):
        m = _meter_lowz_limit("mx-6", limit)
        fleet = fleet_of([m, leads()], [unit("M6", "mx-6"), unit("L1", "tl-4")])
        s = _only(evaluate(plan, fleet), "M6", "vdc")
        (f,) = [f for f in _by(s, "misuse", "mx-6/lowz") if "charged" in f.message]
        assert f.status == status, limit
        assert f.required_value == pytest.approx(80.0) and f.unit == "J"
        assert f.required == "80 J" and "80 J" in f.message
        if limit is None:
            assert "not recorded" in f.message  # an unknown limit is a caution, not a pass
        else:
            assert f.margin == pytest.approx(limit / 80.0 - 1)
        assert s.verdict == ("suitable" if status == "pass" else "conditional")


def test_other_mode_on_the_same_terminals_is_held_to_its_time_limit():
    # A tester's load-test position (7 kohm, 30 s at a time) on the same probes: a plan that
    # stays connected 60 s makes the detect setup a caution (check 8 held against the misused
    # mode; the maker's time limit, common practice, no source).
    vt = ModelSpec("vt-1", "voltage-tester", ratings=(Rating("IV", 690.0),),
                   integrated_leads=True, tip_exposure=2e-3,
                   modes=(Mode("detect", "Indication", "voltage", "both", ("L1", "L2"),
                               input_resistance=200e3, max_input=1000.0),
                          Mode("load", "Load test", "voltage", "both", ("L1", "L2"),
                               input_resistance=7e3, max_input=690.0, max_duration=30.0)))
    fleet = fleet_of([vt], [unit("T1", "vt-1")])
    s = _only(evaluate(panel_plan(duration=60.0), fleet), "T1", "detect")
    (f,) = [f for f in _by(s, "misuse", "vt-1/load") if f.message.startswith("If ")]
    assert f.status == "caution" and f.margin == pytest.approx(-0.5)
    assert s.verdict == "conditional"
    s = _only(evaluate(panel_plan(duration=20.0), fleet), "T1", "detect")
    (f,) = [f for f in _by(s, "misuse", "vt-1/load") if f.message.startswith("If ")]
    assert f.status == "pass"


def test_another_current_range_on_the_same_sockets_is_held_to_its_maximum_current():
    # Switching from the 10 A range to a 400 mA range on the same A/COM sockets with 5 A
    # flowing overloads it (check 5 held against the misused mode; the maker's rating).
    base = meter()
    ma = Mode("ma", "Milliamps", "current", "both", ("A", "COM"), max_current=0.4,
              input_resistance=1.0, fuse=base.mode("amp").fuse)
    m = replace(base, key="mx-7", modes=base.modes + (ma,))
    fleet = fleet_of([m, leads(current_rating=10.0)], [unit("M7", "mx-7"), unit("L1", "tl-4")])
    s = _only(evaluate(_current_plan(current=5.0), fleet), "M7", "amp")
    (f,) = [f for f in _by(s, "misuse", "mx-7/ma") if "maximum current" in f.message]
    assert f.status == "caution" and (f.required_value, f.available_value) == (5.0, 0.4)
    assert s.verdict == "conditional"
