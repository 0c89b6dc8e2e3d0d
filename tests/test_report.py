"""The text report and the exit code of a check."""


from helpers.builders import METER_RATINGS, fleet_of, leads, meter, panel_plan, unit
from registry.engine.evaluate import evaluate
from registry.engine.spec import Rating
from registry.report import exit_code, render_text


def _result(n_meters=1, ratings=METER_RATINGS):
    units = [unit(f"M{i:02d}", "mx-3") for i in range(n_meters)] + [unit("L1", "tl-4"),
                                                                     unit("X1", "mx-3",
                                                                          status="away")]
    return evaluate(panel_plan(), fleet_of([meter(ratings=ratings), leads()], units))


def test_table_derived_values_and_cautions():
    text = render_text(_result())
    for words in ("unit", "mode", "accessories", "verdict", "margin", "deciding reason",
                  "expected transient   4 kV peak", "prospective current  24 kA",
                  "hazardous live", "Cautions:", "qualified person", "X1 (away)"):
        assert words in text, words
    assert text.index("expected transient") < text.index("deciding reason") < \
        text.index("Cautions:")


def test_only_twenty_setups_without_all():
    result = _result(n_meters=12)  # 12 units x 2 modes = 24 setups
    assert len(result.setups) == 24
    text = render_text(result)
    assert "4 more setups (use --all)" in text
    assert "M11" in render_text(result, show_all=True)


def test_explain_prints_every_finding_of_the_unit():
    result = _result()
    text = render_text(result, explain="M00")
    for s in result.setups_for("M00"):
        for f in s.findings:
            assert f.message in text
    assert "X1 is not offered for this plan: away." in render_text(result, explain="X1")


def test_exit_code():
    assert exit_code(_result()) == 0
    assert exit_code(_result(ratings=(Rating("II", 600.0),))) == 1


def test_needs_and_has_show_only_the_sides_a_finding_states():
    from registry.engine.findings import Finding
    from registry.report import needs_has
    both = Finding("mode-input", "pass", "m", "msg", "src", "480 V", "1 kV")
    need = Finding("tip", "unknown", "m", "msg", "src", "<= 2 mm", "")
    none = Finding("setup", "pass", "m", "msg", "src")
    assert needs_has(both) == " [needs 480 V; has 1 kV]"
    assert needs_has(need) == " [needs <= 2 mm]"
    assert needs_has(none) == ""


def test_many_like_accessory_units_fold_into_one_row_without_all():
    # 45 lead units of one model, all with the same verdict: one row naming the first and
    # the count; --all lists each unit. The verdict and reason are the engine's, not restated.
    units = [unit("M00", "mx-3")] + [unit(f"L{i:02d}", "tl-4") for i in range(45)]
    result = evaluate(panel_plan(), fleet_of([meter(), leads()], units))
    assert len(result.accessories) == 45
    verdict = result.accessory("L00").verdict
    assert all(a.verdict == verdict for a in result.accessories)
    text = render_text(result)
    acc = text[text.index("Accessories ("):text.index("Cautions:")]
    assert "L00 and 44 more tl-4" in acc and verdict in acc
    assert "L44" not in acc
    assert "45 accessory units" in acc and "use --all" in acc
    full = render_text(result, show_all=True)
    assert all(f"L{i:02d}" in full for i in range(45))
    assert "more tl-4" not in full


def test_few_accessory_units_are_each_listed():
    text = render_text(_result())
    assert "L1 " in text[text.index("Accessories ("):] and "and 0 more" not in text
