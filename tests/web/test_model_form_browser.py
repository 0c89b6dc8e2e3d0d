"""The model form in a real browser (headless Chromium, Debian's package, through Playwright,
against the real server): a steward adds a row, saves and sees the change; a type chosen for
a front-end element brings its fields; a refused value is shown beside its field."""

import pytest

from helpers.browser import log_in

pytestmark = pytest.mark.browser


def test_steward_adds_a_rating_and_sees_it_on_the_model_page(browser, server, shots):
    context, page = log_in(browser, server, "steward", "larkspur-steward")
    page.goto(server + "/models/kx-7/edit")
    shots(page, "form")
    ratings = page.locator("fieldset.rating").count()
    page.click("button[value=add-ratings]")  # no script: the server shows one more row
    assert page.locator("fieldset.rating").count() == ratings + 1
    row = page.locator("fieldset.rating").nth(ratings)
    row.locator("select[name$=-category]").select_option("II")
    row.locator("input[name$=-voltage]").fill("1250 V")
    shots(page, "new-rating")
    page.locator("button[value=save]").first.click()
    page.wait_for_url(server + "/models/kx-7")
    shots(page, "saved")
    body = page.locator("main").inner_text()
    assert "Saved kx-7: 2 fields changed." in body  # the new rating's category and voltage
    assert "CAT II 1.25 kV" in body  # the new rating, as the model page writes it
    context.close()


def test_an_elements_type_brings_its_fields_and_a_bad_value_is_shown_beside_it(
        browser, server, shots):
    context, page = log_in(browser, server, "steward", "larkspur-steward")
    page.goto(server + "/models/kx-7/edit")
    n = page.locator("fieldset.element").count()
    page.click("button[value=add-front_end]")
    row = page.locator("fieldset.element").nth(n)
    assert row.locator("input[name$=-power]").count() == 1  # a new element is a resistor
    # our script presses the row's "Show this type's fields" button on a change of type
    with page.expect_navigation():
        row.locator("select[name$=-type]").select_option("switch")
    row = page.locator("fieldset.element").nth(n)
    assert row.locator("input[name$=-gap]").count() == 1
    assert row.locator("input[name$=-power]").count() == 0
    row.locator("input[name$=-id]").fill("S7")
    row.locator("input[name$=-between-0]").fill("V")
    row.locator("input[name$=-between-1]").fill("n9")
    row.locator("input[name$=-gap]").fill("3 kV")  # a voltage where a length belongs
    page.locator("button[value=save]").first.click()
    shots(page, "refused")
    gap = row.locator("label:has(input[name$=-gap])")
    assert "is a voltage; this field needs a length" in gap.locator(".field-error").inner_text()
    assert f"front_end[{n}].gap" in gap.inner_text()
    assert row.locator("input[name$=-gap]").input_value() == "3 kV"
    page.goto(server + "/models/kx-7")
    assert "S7" not in page.locator("main").inner_text()  # nothing was saved
    context.close()
