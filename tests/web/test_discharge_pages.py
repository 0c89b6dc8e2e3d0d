"""Check 9's finding, the discharge plot and the job card state one time to the safe level for
one setup: each reads the engine's discharge profile. The numbers are held against the RC
closed form (the DR-1 tool) and against what check 9 itself says (the KX-7 low-Z path, whose
front-end solve tests/engine/test_discharge.py holds against scipy)."""

import html
import math
import re

from helpers.web import DISCHARGE_PLAN, login_as

ROW = re.compile(r'<tr class="v-\w+">\s*<td>(\d+)</td>\s*<td><a href="/units/([A-Z]{2}-\d{4})"'
                 r'[^>]*>[^<]*</a> <small>([\w-]+)</small>(?:<br><small class="site">[^<]*'
                 r'</small>)?</td>\s*<td>([^<]*)</td>')


def _page(client, url, **args):
    response = client.get(url, query_string=dict(DISCHARGE_PLAN, **args))
    assert response.status_code == 200
    return html.unescape(response.get_data(as_text=True))


def _setup_index(page, model, mode_label):
    return next(int(i) for i, tag, m, label in ROW.findall(page)
                if m == model and label.strip() == mode_label)


def _plot_index(page, model):
    plots = page[page.index("<h2>Discharge curves</h2>"):]
    captions = re.findall(r'<figure class="plot">.*?<figcaption>(.*?)</figcaption>', plots,
                          re.S)
    return next(i for i, c in enumerate(captions, 1) if f"({model})" in c), captions


def test_check_9_the_plot_and_the_card_give_one_time(client, demo):
    login_as(client, "viewer")
    page = _page(client, "/checks/result")
    # the DR-1 tool: R C ln(V0/Vs) = 1 kohm * 2 mF * ln(800/50) = 5.545 s (circuit theory)
    t_rc = 1e3 * 2e-3 * math.log(800 / 50)
    assert f"{t_rc:.4g} s" == "5.545 s"
    # the KX-7 low-Z path: check 9's own words are the reference for the others
    for model, label, needle in (("ks-dr1", "Discharge", "reaches 50 V after 5.545 s"),
                                 ("kx-7", "Low-Z volts", None)):
        index = _setup_index(page, model, label)
        card = _page(client, "/checks/card", setup=index)
        findings = re.findall(r"Through [^<]*", card)
        (nine,) = [f for f in findings if "the path absorbs" in f]
        if needle is None:
            needle = re.search(r"is still at [\d.]+ V \([\d.]+ J\) after 60 s; it needs "
                               r"[\d.]+ s \(about \d+ min\) to reach 50 V", nine).group(0)
        assert needle in nine
        dd = re.search(r'<dd class="discharge-outcome">([^<]*)</dd>', card).group(1)
        assert needle in dd
        plot, captions = _plot_index(page, model)
        assert needle in captions[plot - 1]
        svg = _page(client, "/checks/discharge.svg", path=plot)
        time_text = (re.search(r"needs ([\d.]+ s)", needle)
                     or re.search(r"after ([\d.]+ s)$", needle)).group(1)
        assert re.search(rf"reaches [\d.]+ m?V after {re.escape(time_text)}", svg)
        if "still at" in needle:
            v_left = re.search(r"still at ([\d.]+ V)", needle).group(1)
            assert f"held 60 s: {v_left}" in svg
