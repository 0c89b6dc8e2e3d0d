"""The "Rules and sources" page: the check registry docs/rules.md is generated from, read-only."""

from html import unescape

from registry.engine.rulebook import RULES, VERDICTS, rule_for
from registry.rules_doc import render

from helpers.web import login_as


def _text(response) -> str:
    return unescape(response.get_data(as_text=True))


def test_a_viewer_reads_every_rule_with_its_sources_and_tests(client, demo):
    login_as(client, "viewer")
    page = client.get("/rules/")
    assert page.status_code == 200
    text = _text(page)
    assert VERDICTS in text
    doc = render()
    for rule in RULES:
        # the same words as docs/rules.md, section by section
        assert f'id="{rule.anchor}"' in text and f"## {rule.heading}" in doc
        assert rule.heading in text and rule.rule in text and rule.rule in doc
        for source in rule.sources:
            assert source in text and source in doc
        for test in rule.tests:
            assert test in text and test in doc
    # the safety cautions stand at the top, as on every result
    assert "risk assessment" in text and "before and after" in text


def test_the_page_is_in_the_navigation_and_read_only(client, demo):
    login_as(client, "viewer")
    dashboard = client.get("/dashboard").get_data(as_text=True)
    assert 'href="/rules/"' in dashboard and ">Rules</a>" in dashboard
    page = client.get("/rules/").get_data(as_text=True)
    assert "<form" not in page.split("</header>", 1)[1]  # nothing on it writes
    assert client.post("/rules/").status_code in (400, 405)


def test_logged_out_it_asks_for_a_login(client, demo):
    response = client.get("/rules/")
    assert response.status_code == 302 and "/login" in response.headers["Location"]


def test_a_result_links_each_finding_to_its_rule(client, demo):
    login_as(client, "viewer")
    page = client.get("/checks/result?task=measure-voltage&supply=mains&category=III"
                      "&waveform=ac&voltage=480+V&voltage_to_earth=277+V"
                      "&site=Substation+yard").get_data(as_text=True)
    category = rule_for("category")
    assert f'href="/rules/#{category.anchor}"' in page
    assert client.get("/rules/").get_data(as_text=True).count(f'id="{category.anchor}"') == 1
