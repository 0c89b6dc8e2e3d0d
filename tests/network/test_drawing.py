"""The front-end ladder drawing: open and closed switches, marks with a symbol and a label."""

import xml.etree.ElementTree as ET

from registry.drawing import FAIL_SYMBOL, MARK_SYMBOL, front_end_svg

from .conftest import LOWZ, VDC, kx7


def texts(svg):
    root = ET.fromstring(svg)
    return " ".join(t.text or "" for t in root.iter() if t.tag.endswith("text")
                    or t.tag.endswith("tspan"))


def test_ladder_names_every_element_and_the_switch_state():
    svg_open = front_end_svg(kx7(), VDC)
    svg_closed = front_end_svg(kx7(), LOWZ)
    t_open, t_closed = texts(svg_open), texts(svg_closed)
    for id in ("R1", "PT1", "RV1", "S1", "IN"):
        assert id in t_open and id in t_closed
    assert "S1 (open)" in t_open and "S1 (closed)" in t_closed
    assert "V" in t_open and "COM" in t_open
    assert svg_open != svg_closed


def test_marks_carry_a_symbol_and_a_text_label():
    svg = front_end_svg(kx7(), VDC, {"S1": "fail: 4 kV against 2.5 kV, impulse",
                                     "IN": "12% headroom: 1.3 kV of 1.5 kV, impulse"})
    t = texts(svg)
    # the symbol stands on the element's own label, the words in the legend beside its id
    assert f"{FAIL_SYMBOL} S1 (open)" in t and f"{MARK_SYMBOL} IN" in t
    assert f"{FAIL_SYMBOL} S1: fail: 4 kV against 2.5 kV" in t
    assert f"{MARK_SYMBOL} IN: 12% headroom" in t
