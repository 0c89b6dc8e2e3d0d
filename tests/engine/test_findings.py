"""The structured finding: numbers, units, the texts rendered from them, the enumerations."""

import json

import pytest

from registry.engine.findings import (CheckName, Compare, Finding, Status, Verdict, verdict_of)
from registry.engine.quantity import VOLTAGE, format_quantity


def test_statuses_and_checks_are_the_same_strings():
    f = Finding("mode-input", "pass", "kx-7/vdc", "m", "s")
    assert f.status is Status.PASS and f.status == "pass"
    assert f.check is CheckName.MODE_INPUT and f.check == "mode-input"
    assert f.status in ("pass", "caution") and {"pass": 1}[f.status] == 1
    assert f"{f.status}/{f.check}" == "pass/mode-input"
    d = f.as_dict()
    # plain str in the dict, so every JSON writer and the database see the same text
    assert type(d["status"]) is str and type(d["check"]) is str
    assert json.loads(json.dumps(d))["status"] == "pass"


@pytest.mark.parametrize("field, value", [("status", "ok"), ("check", "protection")])
def test_an_unknown_status_or_check_name_is_refused(field, value):
    args = {"check": "category", "status": "pass"}
    args[field] = value
    with pytest.raises(ValueError, match=field):
        Finding(args["check"], args["status"], "x", "m", "s")


def test_the_texts_are_rendered_from_the_numbers():
    f = Finding("mode-input", "fail", "kx-7/vdc", "m", "s", required_value=1200.0,
                available_value=1000.0, unit="V", margin=1000 / 1200 - 1)
    assert (f.required, f.available) == ("1.2 kV", "1 kV")
    assert (f.required_value, f.available_value, f.unit) == (1200.0, 1000.0, "V")
    assert f.required == format_quantity(1200.0, VOLTAGE)  # the one formatter
    peak = Finding("transient", "pass", "mx-3", "m", "s", required_value=4000.0,
                   available_value=6000.0, unit="V", basis="peak")
    assert (peak.required, peak.available) == ("4 kV peak", "6 kV peak")
    limit = Finding("tip", "pass", "tl-4", "m", "s", required_value=2e-3,
                    available_value=1.5e-3, unit="m", compare="at-most")
    assert (limit.required, limit.available) == ("<= 2 mm", "1.5 mm")
    assert limit.compare is Compare.AT_MOST
    worded = Finding("category", "pass", "mx-3", "m", "s", "CAT III 480 V", "CAT III 600 V",
                     required_value=480.0, available_value=600.0, unit="V")
    assert worded.required == "CAT III 480 V"  # a check's own words stay


def test_ratios_from_the_numbers():
    # 600 V available for 480 V required: 600 / 480 = 1.25; a 2 mm limit on 1.5 mm exposed
    # metal leaves 2 / 1.5 = 1.33 (arithmetic)
    f = Finding("category", "pass", "mx-3", "m", "s", required_value=480.0,
                available_value=600.0, unit="V", margin=600 / 480 - 1)
    assert f.value_ratio == pytest.approx(1.25) and f.margin_ratio == pytest.approx(1.25)
    tip = Finding("tip", "pass", "tl-4", "m", "s", required_value=2e-3,
                  available_value=1.5e-3, unit="m", compare="at-most")
    assert tip.value_ratio == pytest.approx(2 / 1.5) and tip.margin_ratio is None
    match = Finding("loading", "pass", "dv-1", "m", "s", required_value=1e6,
                    available_value=1.05e6, unit="ohm", compare="match")
    assert match.value_ratio is None and match.numeric


def test_a_margin_that_disagrees_with_the_numbers_is_refused():
    with pytest.raises(ValueError, match="disagrees"):
        Finding("category", "pass", "mx-3", "m", "s", required_value=480.0,
                available_value=600.0, unit="V", margin=0.5)


@pytest.mark.parametrize("kwargs", [dict(required_value=1.0), dict(required_value=1.0,
                                                                    unit="volt"),
                                    dict(unit="V")])
def test_numbers_need_an_si_unit_and_a_unit_needs_numbers(kwargs):
    with pytest.raises(ValueError, match="unit"):
        Finding("mode-input", "pass", "x", "m", "s", **kwargs)


def test_json_carries_the_numbers():
    f = Finding("discharge", "fail", "ks-dr1", "m", "s", required_value=80.0,
                available_value=40.0, unit="J", margin=40 / 80 - 1)
    d = f.as_dict()
    assert d["required_value"] == 80.0 and d["available_value"] == 40.0 and d["unit"] == "J"
    assert d["margin"] == pytest.approx(-0.5) and d["margin_ratio"] == pytest.approx(0.5)
    assert d["compare"] == "at-least" and d["required"] == "80 J"
    # JSON has no infinity: an open input's resistance is written as null, its text says it
    open_ = Finding("input-consistency", "caution", "kx-7", "m", "s", "1 Mohm", "open",
                    required_value=1e6, available_value=float("inf"), unit="ohm",
                    compare="match")
    assert open_.as_dict()["available_value"] is None
    json.dumps(open_.as_dict(), allow_nan=False)


def test_verdicts_are_the_enumeration():
    # unsuitable if any fails, else unverified if any unknown, else conditional if any
    # caution, else suitable (docs/rules.md, "Verdicts")
    def of(*statuses):
        return verdict_of([Finding("setup", s, "x", "m", "s") for s in statuses])
    assert of() is Verdict.SUITABLE and of("pass", "not-run") == "suitable"
    assert of("pass", "caution") is Verdict.CONDITIONAL
    assert of("caution", "unknown") is Verdict.UNVERIFIED
    assert of("unknown", "fail", "pass") == "unsuitable"


# -- every numeric check fills the numbers: the demo plans against the demo fleet -----------

def _demo_findings():
    from datetime import date
    from pathlib import Path

    from registry.engine.evaluate import evaluate
    from registry.formats.fleet import fleet_from_file
    from registry.plans import load_plan

    root = Path(__file__).resolve().parents[2] / "seeddata"
    fleet = fleet_from_file(root / "fleet.yaml")
    for path in sorted((root / "plans").glob("*.yaml")):
        result = evaluate(load_plan(path, on=date(2026, 12, 2)), fleet)  # check 10 included
        for s in result.setups:
            yield from s.findings


# Checks whose pass or fail always holds a number against a number.
NUMERIC = {"category", "transient", "altitude", "mode-input", "low-z"}


def test_every_numeric_finding_of_the_demo_carries_its_numbers():
    findings = list(_demo_findings())
    assert len(findings) > 100
    seen_checks = set()
    for f in findings:
        if f.margin is not None:
            # a margin comes from two numbers, and __post_init__ holds them to agree
            assert f.required_value is not None and f.available_value is not None, f
            assert f.unit, f
        if f.check in NUMERIC and f.status in ("pass", "fail"):
            if "not connected" in f.message:
                continue  # an instrument reading a clamp's output: nothing to hold
            seen_checks.add(f.check)
            assert f.required_value is not None and f.unit, f
    assert seen_checks == NUMERIC
    # check 10's element stresses carry the element's numbers
    path = [f for f in findings if f.check == "protection-path" and f.status == "fail"]
    assert path and all(f.numeric and f.unit in ("V", "A", "W", "J") for f in path)
