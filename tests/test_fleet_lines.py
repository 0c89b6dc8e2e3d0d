"""The web's fleet list reads plain lines (queries.fleet_lines, the models kept per fleet
version) where the API reads unit rows (queries.fleet_page): the two list the same units, in
the same order, with the same total, the same model, ratings, site, status and due date, for
every filter and sort (the filters themselves are held to the engine's rules in
tests/test_rules.py)."""

from datetime import date

import pytest

from registry.store import queries

CASES = [dict(), dict(sort="model"), dict(sort="kind", desc=True), dict(sort="site"),
         dict(sort="due", desc=True), dict(sort="status"), dict(q="kx"), dict(kind="probe"),
         dict(site="North bench"), dict(status="retired"), dict(category="III"),
         dict(category="IV", voltage=600.0), dict(voltage=1000.0), dict(due="overdue"),
         dict(due="90"), dict(q="nb-", sort="due", page=2, size=3),
         dict(page=3, size=5), dict(page=99, size=5)]


@pytest.mark.parametrize("case", CASES, ids=[str(c) for c in CASES])
def test_fleet_lines_list_what_fleet_page_lists(demo, case):
    on = date(2026, 12, 3)
    with demo.session() as s:
        filters = queries.FleetQuery(**{"size": 1000, **case})
        rows = queries.fleet_page(s, filters, today=on)
        lines = queries.fleet_lines(s, filters, queries.model_lines(s), today=on)
        assert rows.units, case
        assert (lines.total, lines.page, lines.pages) == (rows.total, rows.page, rows.pages)
        assert [u.tag for u in lines.units] == [u.tag for u in rows.units]
        for line, row in zip(lines.units, rows.units, strict=True):
            assert (line.status, line.verification_due) == (row.status, row.verification_due)
            assert line.site_name == (row.site.name if row.site else None)
            assert (line.model.key, line.model.maker, line.model.name, line.model.kind) == \
                (row.model.key, row.model.maker, row.model.name, row.model.kind)
            assert [(r.category, r.voltage) for r in line.model.ratings] == \
                [(r.category, r.voltage) for r in row.model.ratings]
