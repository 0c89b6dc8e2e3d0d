"""What a result says: the accessory units and why one may not be used, the deciding finding's
margin as a ratio, the one-line summary, the dead-test caution, and proving dead with a
purpose-built tester rather than a multimeter."""

import dataclasses
from datetime import date, datetime

import pytest

from registry.engine.evaluate import evaluate
from registry.engine.result import format_ratio
from registry.engine.spec import Mode, ModelSpec, PastEvent, Rating
from registry.report import render_text

from helpers.builders import fleet_of, leads, meter, panel_plan, unit

CAT2_LEADS = dict(key="tl-2", ratings=(Rating("II", 600.0),))


def test_accessories_list_the_failing_leads_and_why():
    # A CAT III job (480 V, 277 V to earth). IEC 61010-031:2015: a probe assembly's rating
    # is for its measurement category; a CAT II 600 V lead is not rated for CAT III work.
    fleet = fleet_of([meter(), leads(), leads(**CAT2_LEADS)],
                     [unit("M1", "mx-3"), unit("L1", "tl-4"), unit("L2", "tl-2")])
    result = evaluate(panel_plan(), fleet)
    # L2 is never in a ranked setup (the better lead is chosen), yet the result says it
    assert all("L2" not in s.accessories for s in result.setups)
    bad = result.accessory("L2")
    assert bad.verdict == "unsuitable" and not bad.fits
    assert bad.reason.check == "category" and bad.reason.status == "fail"
    assert bad.reason.subject == "tl-2" and "IEC 61010-031" in bad.reason.source
    assert "CAT II 600 V" in bad.reason.available and "CAT III" in bad.reason.required
    good = result.accessory("L1")
    assert good.verdict == "suitable" and good.reason is None
    doc = {a["unit"]: a for a in result.as_json()["accessories"]}
    assert doc["L2"]["reason"]["check"] == "category"
    assert doc["L2"]["best_setup"]["instrument"] == "M1"
    assert doc["L1"]["reason"] is None
    text = render_text(result)
    section = text[text.index("Accessories"):text.index("Cautions:")]
    assert "L2" in section and "unsuitable" in section and "IEC 61010-031" in section
    explained = render_text(result, explain="L2")
    assert "do not use L2: tl-2 must not be used here" in explained


def test_accessory_not_at_fault_is_not_blamed():
    # CAT III leads on a CAT III job behind a CAT II-only meter: every setup fails, but on the
    # meter's category, so the leads' reason is the meter's (IEC 61010-1:2010 measurement
    # category), not a fault of their own.
    fleet = fleet_of([meter(ratings=(Rating("II", 600.0),)), leads()],
                     [unit("M1", "mx-3"), unit("L1", "tl-4")])
    a = evaluate(panel_plan(), fleet).accessory("L1")
    assert a.verdict == "unsuitable" and a.reason.subject == "mx-3"


def _meter_432():
    """An invented meter whose volts modes take 432 V and whose low-Z mode 300 V."""
    modes = (Mode("vac", "AC volts", "voltage", "ac", ("V", "COM"), input_resistance=10e6,
                  max_input=432.0),
             Mode("lowz", "Low-Z volts", "voltage", "both", ("V", "COM"),
                  input_resistance=3e3, max_input=300.0, max_duration=60.0))
    return ModelSpec(key="mx-4", kind="multimeter", maker="Quillby Instruments",
                     ratings=(Rating("III", 600.0),), modes=modes, connectors=("4mm",))


def test_margin_is_the_deciding_findings_ratio():
    # Worked example on a 480 V job: the AC volts mode takes 432 V (432/480 = 0.90, a fail,
    # which decides); the low-Z mode on the same jacks takes 300 V (300/480 = 0.625, only a
    # misuse caution). The margin shown is the deciding fail's 0.90, not the smallest 0.625.
    fleet = fleet_of([_meter_432(), leads()], [unit("M1", "mx-4"), unit("L1", "tl-4")])
    s = next(x for x in evaluate(panel_plan(), fleet).setups if x.mode == "vac")
    assert s.verdict == "unsuitable" and s.deciding.check == "mode-input"
    assert s.margin_ratio == pytest.approx(432 / 480)
    assert format_ratio(s.margin_ratio) == "x0.90"
    misuse = next(f for f in s.findings if f.check == "misuse" and f.status == "caution")
    assert format_ratio(1 + misuse.margin) == "x0.62"  # 300/480 = 0.625, rounded down
    out = s.as_dict()
    assert out["margin_ratio"] == pytest.approx(0.9) and out["deciding"]["check"] == "mode-input"
    row = next(line for line in render_text(evaluate(panel_plan(), fleet)).splitlines()
               if line.split()[1:3] == ["M1", "vac"])
    assert "x0.90" in row and "%" not in row


def test_ratio_text():
    # available / required, rounded down so that a fail never reads x1.00 (arithmetic)
    assert format_ratio(640 / 480) == "x1.33"
    assert format_ratio(479.9 / 480) == "x0.99"
    assert format_ratio(277.17) == "x277"
    assert format_ratio(float("inf")) == "no limit" and format_ratio(None) == "-"


def test_summary_with_and_without_a_fitting_setup():
    ok = evaluate(panel_plan(), fleet_of([meter(), leads()],
                                         [unit("M1", "mx-3"), unit("L1", "tl-4")]))
    best = ok.setups[0]
    assert ok.summary.startswith(f"Best setup: M1 (mx-3) in {best.mode_label} with L1: "
                                 f"{best.verdict}, margin {format_ratio(best.margin_ratio)}")
    assert ok.as_json()["summary"]["best"]["instrument"] == "M1"
    assert render_text(ok).splitlines()[0] == ok.summary
    # a CAT II 600 V meter on a CAT III job: IEC 61010-1:2010, the category must be covered
    none = evaluate(panel_plan(), fleet_of([meter(ratings=(Rating("II", 600.0),)), leads()],
                                           [unit("M1", "mx-3"), unit("L1", "tl-4")]))
    n = len(none.setups)
    assert none.summary.startswith("No setup in the fleet can take this job; the commonest "
                                   f"reason (category, {n} of {n} setups): mx-3 ")
    doc = none.as_json()["summary"]
    assert doc["fits"] is False and doc["best"] is None
    assert doc["commonest_reason"]["check"] == "category" and doc["commonest_reason"]["setups"] == n
    empty = evaluate(panel_plan(), fleet_of([leads()], [unit("L1", "tl-4")]))
    assert empty.summary == ("No setup in the fleet can take this job: no available "
                             "instrument has a mode that does measure-voltage.")


def test_resistance_task_carries_the_isolation_caution_and_checks_misuse():
    # An ohms mode that takes only 250 V on a circuit that could be 480 V if it is live:
    # the mode's maximum input is held against the plan's voltage (the maker's overload
    # rating; IEC 61010-2-033:2017 treats a meter's resistance function connected to a mains
    # voltage as reasonably foreseeable misuse, from memory).
    weak = meter("mx-5", lowz=False)
    weak = dataclasses.replace(weak, modes=tuple(
        dataclasses.replace(m, max_input=250.0) if m.key == "ohm" else m for m in weak.modes))
    fleet = fleet_of([meter(), weak, leads()],
                     [unit("M1", "mx-3"), unit("M5", "mx-5"), unit("L1", "tl-4")])
    result = evaluate(panel_plan(task="measure-resistance"), fleet)
    caution = next(c for c in result.cautions if "dead circuit" in c)
    assert "isolate it" in caution and "prove it dead" in caution and "480 V" in caution
    assert "misuse protection" in caution
    m5 = next(s for s in result.setups if s.instrument == "M5" and s.mode == "ohm")
    f = next(x for x in m5.findings if x.check == "mode-input")
    assert f.status == "fail" and (f.required_value, f.available_value) == (480.0, 250.0)
    m1 = next(s for s in result.setups if s.instrument == "M1" and s.mode == "ohm")
    assert next(x for x in m1.findings if x.check == "mode-input").status == "pass"
    # only dead tests carry it
    assert not any("dead circuit" in c for c in evaluate(panel_plan(), fleet).cautions)


def _tester(key="vt-9"):
    """An invented two-pole voltage tester with its own leads."""
    return ModelSpec(key=key, kind="voltage-tester", maker="Quillby Instruments",
                     ratings=(Rating("IV", 600.0), Rating("III", 1000.0)),
                     integrated_leads=True, tip_exposure=2e-3,
                     modes=(Mode("detect", "Voltage indication", "voltage", "both",
                                 ("L1", "L2"), input_resistance=200e3, max_input=1000.0),))


def test_verify_absence_ranks_a_two_pole_tester_ahead_of_a_multimeter():
    # Proving dead: a purpose-built two-pole voltage tester is preferred to a multimeter
    # (HSE GS38 advice, from memory; common practice, no source). Both setups here are
    # conditional (the tester's unit logged an out-of-rating event; the multimeter carries
    # the proving-dead caution), and the multimeter unit would come first on the other keys
    # (later verification due), so only the tester rule puts Z1 first.
    event = (PastEvent(None, "overvoltage", False, datetime(2026, 2, 1)),)
    fleet = fleet_of([meter(lowz=False), _tester(), leads()],
                     [unit("A1", "mx-3", verification_due=date(2028, 1, 1)),
                      unit("Z1", "vt-9", history=event), unit("L1", "tl-4")])
    result = evaluate(panel_plan(task="verify-absence"), fleet)
    first, second = result.setups[0], result.setups[1]
    assert first.instrument == "Z1" and second.instrument == "A1"
    assert first.verdict == second.verdict == "conditional"
    caution = next(f for f in second.findings if f.check == "proving-dead")
    assert caution.status == "caution" and "two-pole voltage tester" in caution.message
    assert "common practice, no source" in caution.source
    assert not any(f.check == "proving-dead" for f in first.findings)
    # on a measuring task the multimeter carries no such caution and no ranking applies
    measured = evaluate(panel_plan(), fleet)
    assert not any(f.check == "proving-dead" for s in measured.setups for f in s.findings)
