"""The check result is kept per (plan, fleet version): the result page, its job card and its
plots run one check between them, and a logged event, an opened or released hold or an edited
unit makes the next page show the fleet as it is now."""

import re

from helpers.web import MAINS_PLAN, login_as

from registry.services.events import log_event
from registry.services.holds import release_hold
from registry.store.versions import fleet_version
from registry.web.result_cache import ResultCache


def _page(client) -> str:
    return client.get("/checks/result", query_string=MAINS_PLAN).get_data(as_text=True)


def _best(page: str) -> str:
    summary = re.search(r'id="summary">(.*?)</p>', page, re.S).group(1)
    return re.search(r"Best setup: ([^ ,]+)", re.sub(r"<[^>]+>", "", summary)).group(1)


def _shown(page: str) -> str:
    """The result as shown: from the summary to the cautions."""
    return page[page.index('id="summary"'):page.index("<h2>Cautions")]


def _computed(app) -> int:
    return app.extensions["withstand.results"].computed


def test_page_card_and_plots_share_one_check(app, client, demo):
    login_as(client, "viewer")
    assert client.get("/checks/result", query_string=MAINS_PLAN).status_code == 200
    assert _computed(app) == 1
    assert client.get("/checks/card", query_string=dict(MAINS_PLAN, setup=1)).status_code == 200
    client.get("/checks/front-end.svg", query_string=dict(MAINS_PLAN, setup=1))
    client.get("/checks/result", query_string=dict(MAINS_PLAN, all="1"))
    assert _computed(app) == 1
    # another plan is another result
    client.get("/checks/result", query_string=dict(MAINS_PLAN, voltage="400 V"))
    assert _computed(app) == 2


def test_an_event_and_a_hold_change_the_result_shown(app, client, demo):
    login_as(client, "viewer")
    before = _page(client)
    best = _best(before)
    # a transient far beyond any rating puts the unit on hold (an open hold excludes it)
    logged = log_event(demo, unit=best, kind="transient", voltage=50_000.0, by="tech",
                       symptoms=["none"])
    assert logged.hold_id is not None
    held = _page(client)
    assert _best(held) != best
    assert _computed(app) == 2
    # released after an inspection: the unit is no longer excluded by an open hold, though
    # its logged transient still counts against it (check 11)
    release_hold(demo, unit=best, result="pass", by="steward", note="inspected")
    released = _page(client)
    assert _computed(app) == 3
    assert _shown(released) != _shown(held)
    # nothing written: kept (compared as shown: the page's CSRF token carries the second)
    assert _shown(_page(client)) == _shown(released) and _computed(app) == 3


def test_fleet_version_moves_with_every_kind_of_write(app, demo):
    from sqlalchemy.orm import Session

    from registry.formats.fleet import FORMAT, unit_to_document
    from registry.store.fleet import export_fleet, import_fleet

    def version():
        with Session(demo.engine) as s:
            return fleet_version(s)

    seen = [version()]
    log_event(demo, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=400.0,
              symptoms=["smell"], by="tech")  # an event (and the hold it opens)
    seen.append(version())
    release_hold(demo, unit="NB-0002", result="pass", by="steward")
    seen.append(version())
    with Session(demo.engine) as s:
        unit = next(u for u in export_fleet(s).units if u.tag == "NB-0001")
    edited = dict(unit_to_document(unit), custodian="Someone Else")
    import_fleet(demo, {"format": FORMAT, "units": [edited]})
    seen.append(version())  # an edited unit
    import_fleet(demo, {"format": FORMAT, "units": [{"tag": "NB-9999", "model": "kx-7"}]})
    seen.append(version())  # a new unit
    assert len(set(seen)) == len(seen), seen
    assert version() == seen[-1]  # and it stays put while nothing is written


def test_cache_keeps_the_newest_and_computes_a_miss_once():
    cache = ResultCache(size=2)
    calls = []
    for key in ("a", "b", "a", "c", "a", "b"):
        # k=key binds this round's key (the cache calls the function at once, on a miss)
        cache.get(key, lambda k=key: calls.append(k) or k.upper())
    # "a" stays (used most recently before "c" came); "b" was pushed out by "c"
    assert calls == ["a", "b", "c", "b"]


def _core_digest(session) -> str:
    """The version as the statement built anew and run through SQLAlchemy gives it."""
    import hashlib

    from registry.store.versions import version_statement
    row = session.execute(version_statement()).one()
    return hashlib.sha256(repr(tuple(row)).encode()).hexdigest()[:24]


def test_fleet_version_text_compiled_once_reads_what_the_statement_reads(demo, pg_demo):
    # the text handed to the driver is the statement compiled for each dialect: SQLite and
    # PostgreSQL answer it as they answer the statement itself, before and after a write
    # (the digest is of the same ids and counts)
    for database in (demo, pg_demo):
        with database.session() as s:
            assert fleet_version(s) == _core_digest(s)
        log_event(database, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=400.0,
                  symptoms=["smell"], by="tech")
        with database.session() as s:
            assert fleet_version(s) == _core_digest(s)
