"""The dashboard's month charts: verification due by month for the next 12 months and events
per month by kind, counted against the fleet file read directly and against events logged at
known times."""

from collections import Counter
from datetime import date, datetime

import yaml
from sqlalchemy.orm import Session

from helpers.web import login_as
from registry.demo import demo_fleet_path
from registry.store import queries
from registry.services.events import log_event

TODAY = date(2026, 12, 2)


def test_month_starts_run_across_the_year_end():
    assert queries.month_starts(TODAY, 3) == [date(2026, 12, 1), date(2027, 1, 1),
                                              date(2027, 2, 1)]
    assert queries.month_starts(TODAY, 3, back=True) == [date(2026, 10, 1), date(2026, 11, 1),
                                                         date(2026, 12, 1)]


def test_due_by_month_against_the_fleet_file(demo):
    doc = yaml.safe_load(demo_fleet_path().read_text(encoding="utf-8"))
    # by hand from the file: units not retired, due from this month on, by calendar month;
    # overdue means due before today (common practice, no source)
    counted = [u for u in doc["units"] if u.get("status", "in-service") != "retired"
               and u.get("verification_due")]
    ahead = Counter(u["verification_due"].replace(day=1) for u in counted
                    if u["verification_due"] >= TODAY)
    before = sum(1 for u in counted if u["verification_due"] < TODAY)
    with Session(demo.engine) as session:
        overdue, months = queries.due_by_month(session, TODAY)
    assert overdue == before
    assert [n for _, n in months] == [ahead.get(m, 0) for m in queries.month_starts(TODAY, 12)]
    assert sum(n for _, n in months) > 0


def test_events_by_month_counts_each_kind_in_its_month(demo):
    for at, kind in ((datetime(2026, 11, 3, 9), "overvoltage"),
                     (datetime(2026, 11, 20, 9), "transient"),
                     (datetime(2026, 6, 1, 9), "overvoltage"),
                     (datetime(2025, 6, 1, 9), "overvoltage")):  # more than a year ago
        log_event(demo, unit="NB-0001", kind=kind, mode="vdc", voltage=500.0, by="tech",
                  symptoms=["none"], at=at)
    with Session(demo.engine) as session:
        months = dict(queries.events_by_month(session, TODAY))
    assert months[date(2026, 11, 1)]["overvoltage"] == 1
    assert months[date(2026, 11, 1)]["transient"] == 1
    assert months[date(2026, 6, 1)]["overvoltage"] == 1
    assert sum(sum(c.values()) for c in months.values()) == 3


def test_dashboard_draws_both_charts(client, demo):
    login_as(client, "viewer")
    page = client.get("/dashboard").get_data(as_text=True)
    assert 'id="due-chart"' in page and 'id="events-chart"' in page
    assert page.count('class="month-chart"') == 2 and "<script" not in page.split("<main")[1]
