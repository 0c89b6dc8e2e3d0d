"""The result page, the job card and the API say in one line what the job gets, list the
accessory units under their own heading, and show margins as ratios."""

import re

from helpers.web import MAINS_PLAN, api_token, bearer, login_as

# A plan no setup in the demo fleet fits: CAT IV at 1000 V to earth is beyond every rating
# in the demo lab (IEC 61010-1:2010: the rating must cover the category and the voltage).
TOO_MUCH = dict(MAINS_PLAN, category="IV", voltage="1000 V", voltage_to_earth="1000 V",
                title="Overhead line")


def test_result_page_summary_accessories_and_ratio(client, demo):
    login_as(client, "viewer")
    page = client.get("/checks/result", query_string=MAINS_PLAN).get_data(as_text=True)
    summary = re.search(r'<p class="summary[^"]*" id="summary">(.*?)</p>', page, re.S).group(1)
    assert "Best setup: " in summary and "margin x" in summary
    assert page.index('id="summary"') < page.index('id="verdicts"')
    table = page[page.index('id="verdicts"'):page.index("<h2>Accessories")]
    margins = re.findall(r"<td>(x\d+(?:\.\d+)?|no limit|—)</td>", table)
    assert margins and "%" not in "".join(margins)
    acc = page[page.index("<h2>Accessories"):page.index("<h2>Cautions")]
    # the demo's CAT II leads on a CAT III job (IEC 61010-031:2015)
    row = acc[acc.index("/units/LD-0003"):]
    row = re.sub(r"<[^>]+>", "", row[:row.index("</tr>")])  # the text, tags kept whole aside
    assert "unsuitable" in row and "Do not use LD-0003" in row and "IEC 61010-031" in row


def test_job_card_and_api_carry_the_summary(client, demo):
    login_as(client, "viewer")
    card = client.get("/checks/card", query_string=dict(MAINS_PLAN, setup=1)).get_data(
        as_text=True)
    assert 'id="summary">Best setup: ' in card
    none = client.get("/checks/result", query_string=TOO_MUCH).get_data(as_text=True)
    assert "No setup in the fleet can take this job; the commonest reason" in none
    token = api_token(demo, "viewer")
    plan = {"format": "withstand-plan/1", "task": "verify-absence",
            "circuit": {"supply": "mains", "category": "III", "waveform": "ac",
                        "voltage": "480 V", "voltage_to_earth": "277 V", "frequency": "60 Hz"},
            "site": {"name": "North bench"}}
    body = client.post("/api/v1/checks?on=2026-12-01", headers=bearer(token),
                       json=plan).get_json()
    assert body["summary"]["fits"] is True
    assert body["summary"]["text"].startswith("Best setup: " + body["setups"][0]["instrument"])
    assert isinstance(body["setups"][0]["margin_ratio"], float)
    leads = {a["unit"]: a for a in body["accessories"]}
    assert leads["LD-0003"]["reason"]["check"] == "category"
