"""`withstand check` end to end: the demo plans against the demo fleet in a real database,
with every check including the front-end analysis (check 10)."""

import json
from importlib import resources

import pytest

from registry.cli import main


def plan_path(name):
    return str(resources.files("registry.seeddata") / "plans" / f"{name}.yaml")


def check(runner, *args):
    return runner.invoke(main, ["check", *args], catch_exceptions=False)


def test_mains_panel_text_output(runner, demo):
    result = check(runner, plan_path("mains-panel"), "--on", "2026-12-02")
    assert result.exit_code == 0
    out = result.output
    assert "expected transient   4 kV peak" in out  # CAT III, 277 V to earth -> 300 V row
    assert "SY-0003" in out and "suitable" in out
    # the safety cautions are always printed
    assert "risk assessment" in out and "known live source" in out


def test_json_is_the_result_format(runner, demo):
    result = check(runner, plan_path("mains-panel"), "--on", "2026-12-02", "--json",
                   "--findings")
    doc = json.loads(result.output)
    assert doc["format"] == "withstand-result/1"
    assert {"plan", "setups", "excluded", "cautions", "counts"} <= set(doc)
    first = doc["setups"][0]
    assert {"instrument", "mode", "accessories", "verdict", "margin", "findings"} <= set(first)
    assert {"check", "status", "subject", "required", "available", "message", "source"} \
        <= set(first["findings"][0])
    order = ["suitable", "conditional", "unverified", "unsuitable"]
    ranks = [order.index(s["verdict"]) for s in doc["setups"]]
    assert ranks == sorted(ranks)
    excluded = {e["unit"]: e["reason"] for e in doc["excluded"]}
    assert excluded["NB-0003"] == "on-hold" and excluded["NB-0005"] == "retired"
    assert excluded["NB-0007"] == "verification-overdue"


def test_json_holds_findings_only_when_asked(runner, demo):
    def doc(*extra):
        return json.loads(check(runner, plan_path("mains-panel"), "--on", "2026-12-02",
                                "--json", *extra).output)
    plain, explained = doc(), doc("--explain", "SY-0005")
    # without asking, every setup has its deciding finding and no list of findings
    assert plain["setups"] and all("findings" not in s and "message" in s["deciding"]
                                   for s in plain["setups"])
    counts = plain["counts"]
    assert counts["setups"] == len(plain["setups"])
    assert sum(counts["setups_by_verdict"].values()) == len(plain["setups"])
    assert counts["accessories"] == len(plain["accessories"])
    # --explain TAG puts in the findings of that unit's setups only, the same setups otherwise
    with_findings = [s for s in explained["setups"] if "findings" in s]
    assert with_findings and all(s["instrument"] == "SY-0005" or "SY-0005" in s["accessories"]
                                 for s in with_findings)
    assert [dict(s, findings=None) for s in with_findings] == \
        [dict(s, findings=None) for s in plain["setups"] if s["instrument"] == "SY-0005"]
    # the deciding finding is one of the setup's findings
    for s in with_findings:
        assert {k: s["deciding"][k] for k in ("check", "subject", "message")} in \
            [{k: f[k] for k in ("check", "subject", "message")} for f in s["findings"]]


def test_front_end_findings_reach_the_result(runner, demo):
    result = check(runner, plan_path("mains-panel"), "--on", "2026-12-02", "--json",
                   "--findings")
    doc = json.loads(result.output)
    kx3 = [s for s in doc["setups"] if s["instrument"] == "SY-0007" and s["mode"] == "vac"]
    assert kx3 and kx3[0]["verdict"] == "unsuitable"
    paths = [f for f in kx3[0]["findings"] if f["check"] == "protection-path"]
    # the KX-3's ohms contact S1 sits ahead of its limiter: the impulse reaches it whole
    assert any(f["status"] == "fail" and "S1" in f["subject"] for f in paths)
    kx7 = [s for s in doc["setups"] if s["instrument"] == "SY-0005" and s["mode"] == "vac"]
    # conditional: its 17 kA Amps fuse falls short of the board's 24 kA (480 V / 20 mohm,
    # Ohm's law) were the leads left in the A socket (IEC 61010-2-033 foreseeable misuse), and
    # proving dead with a multimeter is a caution (a two-pole voltage tester is preferred;
    # common practice, no source)
    assert kx7 and kx7[0]["verdict"] == "conditional"
    assert {f["check"] for f in kx7[0]["findings"]
            if f["status"] not in ("pass", "not-run")} == {"misuse", "proving-dead"}
    assert any(f["check"] == "protection-path" for f in kx7[0]["findings"])


def test_explain_lists_every_finding(runner, demo):
    result = check(runner, plan_path("mains-panel"), "--on", "2026-12-02", "--explain",
                   "SY-0005")
    assert result.exit_code == 0
    assert result.output.count("protection-path") >= 3


def test_no_fitting_setup_exits_1(runner, demo):
    result = check(runner, plan_path("field-station-socket"), "--on", "2026-12-02")
    assert result.exit_code == 1


@pytest.mark.parametrize("args, words", [
    (["--on", "next tuesday"], "--on: 'next tuesday' is not a date"),
    (["--explain", "ZZ-9999"], "--explain: no unit 'ZZ-9999'"),
])
def test_bad_options_exit_2(runner, demo, args, words):
    result = runner.invoke(main, ["check", plan_path("mains-panel"), *args])
    assert result.exit_code == 2 and words in result.output


def test_invalid_plan_exits_2_with_the_field(runner, demo, tmp_path):
    bad = tmp_path / "plan.yaml"
    bad.write_text("format: withstand-plan/1\ntask: measure-voltage\n"
                   "circuit: {supply: mains, waveform: ac, voltage: 2 kA}\n"
                   "site: {name: North bench}\n")
    result = runner.invoke(main, ["check", str(bad)])
    assert result.exit_code == 2
    assert "circuit.voltage" in result.output and "circuit.category" in result.output
    assert "Traceback" not in result.output


def test_a_plan_that_is_not_utf8_exits_2_naming_it(runner, demo, tmp_path):
    bad = tmp_path / "plan.yaml"
    bad.write_bytes("format: withstand-plan/1\ntitle: Prüfung\n".encode("latin-1"))
    result = runner.invoke(main, ["check", str(bad)])
    assert result.exit_code == 2, result.output
    assert f"'{bad}' is not UTF-8 text" in result.output
    assert "Traceback" not in result.output and isinstance(result.exception, SystemExit)


def test_summary_first_and_explain_an_accessory(runner, demo):
    result = check(runner, plan_path("mains-panel"), "--on", "2026-12-02", "--explain",
                   "LD-0003")
    assert result.exit_code == 0
    out = result.output
    assert out.splitlines()[0].startswith("Best setup: ")
    assert "Accessories (each unit's best setup; the reason when none fits):" in out
    # the demo's LD-2 leads are CAT II 600 V; the board is CAT III (IEC 61010-031:2015)
    assert "do not use LD-0003: bw-ld2 must not be used here" in out
    doc = json.loads(check(runner, plan_path("mains-panel"), "--on", "2026-12-02",
                           "--json").output)
    assert doc["summary"]["text"] == out.splitlines()[0]
