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


def test_the_unit_pages_model_read_as_plain_rows_is_the_rows_spec(demo):
    # specs.model_spec_by_id (four Core statements) against specs.model_spec of the ORM row
    # with its relationships, for every demo model (front ends, fuses, modes, ratings)
    from sqlalchemy import select

    from registry.store import models as m
    from registry.store.specs import model_spec, model_spec_by_id
    with demo.session() as s:
        rows = list(s.scalars(select(m.Model)))
        assert rows
        for row in rows:
            assert model_spec_by_id(s, row.id) == model_spec(row), row.key
        assert model_spec_by_id(s, max(r.id for r in rows) + 1) is None


def test_the_unit_line_is_the_units_row_with_its_sites_name(demo):
    from sqlalchemy import select

    from registry.store import models as m
    with demo.session() as s:
        for unit in s.scalars(select(m.Unit)):
            line = queries.unit_line(s, unit.tag)
            assert (line.id, line.tag, line.model_id, line.serial, line.custodian,
                    line.status, line.verified_on, line.verification_due, line.notes) == \
                (unit.id, unit.tag, unit.model_id, unit.serial, unit.custodian, unit.status,
                 unit.verified_on, unit.verification_due, unit.notes)
            assert line.site_name == (unit.site.name if unit.site else None)
        assert queries.unit_line(s, "no-such-tag") is None


@pytest.mark.parametrize("on", [date(2020, 1, 1), date(2026, 12, 3), date(2027, 6, 1),
                                date(2040, 1, 1)])
def test_dashboard_counts_from_one_scan_are_the_sql_counts(demo, on):
    # the dashboard's counts made from (status, due) pairs by the engine's rules
    # (rules.unit_due_within) against the SQL filter and GROUP BY they replace
    from sqlalchemy import func, select

    from registry.store import models as m
    with demo.session() as s:
        groups = queries.status_due_groups(s)
        assert sum(n for *_, n in groups) == s.scalar(select(func.count()).select_from(m.Unit))
        by_status = dict(s.execute(select(m.Unit.status, func.count())
                                   .group_by(m.Unit.status)).all())
        assert queries.status_counts(s, groups) == \
            {st: by_status.get(st, 0) for st in queries.spec.UNIT_STATUSES}
        for days in (0, 30, 90, 400):
            assert queries.due_soon_count(s, days, on, groups=groups) == \
                queries.due_soon_count(s, days, on) == len(queries.due_soon(s, days, on))
        assert queries.due_by_month(s, on, groups=groups) == queries.due_by_month(s, on)
