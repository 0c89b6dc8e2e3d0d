"""`withstand check` on the demo DC-link discharge plan: check 9 states the KX-7 low-Z path's
front-end discharge, which tests/engine/test_discharge.py holds against scipy's solve_ivp of
the circuit written out; here the CLI must carry the same numbers."""

import json
from importlib import resources

from registry.cli import main


def test_the_cli_reports_the_front_end_discharge(runner, demo):
    plan = str(resources.files("registry.seeddata") / "plans" / "dc-link-discharge.yaml")
    result = runner.invoke(main, ["check", plan, "--on", "2026-12-02", "--json", "--findings"],
                           catch_exceptions=False)
    doc = json.loads(result.output)
    kx7 = next(s for s in doc["setups"] if s["instrument"] == "NB-0001" and s["mode"] == "lowz")
    assert kx7["verdict"] == "unsuitable"
    (hold,) = [f for f in kx7["findings"]
               if f["check"] == "discharge" and "Held on for" in f["message"]]
    # solve_ivp reference (tests/engine/test_discharge.py): PT1 trips at 0.220 s, 710.3 V and
    # C V**2/2 = 0.5 * 2e-3 * 710.3**2 = 504.5 J left after 60 s, 2132 s to 50 V; the RC
    # formula through 2.6 kohm would have said 2.6 kohm * 2 mF * ln 16 = 14.42 s
    assert hold["status"] == "fail"
    assert "it needs 2132 s" in hold["message"]
    assert "710.3 V and 504.5 J are left" in hold["message"]
    assert "14.42 s" not in json.dumps(kx7)
    dr1 = next(s for s in doc["setups"] if s["instrument"] == "BL-0002")
    # the tool: R C ln(V0/Vs) = 1 kohm * 2 mF * ln 16 = 5.545 s (circuit theory)
    assert any("reaches 50 V after 5.545 s" in f["message"] for f in dr1["findings"])
