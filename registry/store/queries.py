"""Read-only queries the web pages and the API share: the fleet list with its filters, the
dashboard's counts and coverage, and a unit's history as one timeline."""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date, datetime

from sqlalchemy import and_, bindparam, exists, func, or_, select
from sqlalchemy.orm import Session, selectinload

from ..engine import rules, spec
from . import models as m

MAINS_CATEGORIES = spec.MAINS_CATEGORIES
# The rows of the coverage chart: the voltage rows of the impulse table that check 3 rounds up
# to (docs/rules.md, check 3), which are also the voltages ratings are usually stated at.
COVERAGE_VOLTAGES = (150.0, 300.0, 600.0, 1000.0)
SORTS = {
    "tag": m.Unit.tag, "model": m.Model.key, "kind": m.Model.kind, "site": m.Site.name,
    "status": m.Unit.status, "due": m.Unit.verification_due,
}
DUE_FILTERS = ("overdue", "30", "90")


def _takes(category: str | None, voltage: float):
    """SQL: the unit's model has one rating that covers ``category`` (or any, for ``None``) and
    ``voltage`` at once, built from the engine's own rule (rules.rating_covers: the categories
    from rules.categories_at_least, the voltage at least the one asked). A property test holds
    it to ``fitting_ratings``."""
    return exists().where(and_(m.Rating.model_id == m.Unit.model_id,
                               m.Rating.category.in_(rules.categories_at_least(category)),
                               m.Rating.voltage >= voltage))


def _overdue(on: date):
    """SQL: rules.unit_overdue: a unit not retired whose verification was due before ``on``."""
    return and_(m.Unit.status.in_(rules.VERIFIED_STATUSES), m.Unit.verification_due < on)


def _due_within(on: date, days: int):
    """SQL: rules.unit_due_within: a unit not retired due by ``on`` + ``days`` (overdue too)."""
    return and_(m.Unit.status.in_(rules.VERIFIED_STATUSES),
                m.Unit.verification_due.is_not(None),
                m.Unit.verification_due <= rules.due_by(on, days))


@dataclass
class FleetQuery:
    q: str = ""
    kind: str = ""
    site: str = ""
    status: str = ""
    category: str = ""
    voltage: float | None = None
    due: str = ""
    sort: str = "tag"
    desc: bool = False
    page: int = 1
    size: int = 50


@dataclass
class FleetPage:
    units: list
    total: int
    page: int
    pages: int


def _fleet_select(columns, filters: FleetQuery, today: date):
    """SELECT ``columns`` of the units the filters keep, joined to the model and the site only
    when a filter or the sort reads them (the plain list pages through the tag's index)."""
    by_model = bool(filters.q or filters.kind in spec.KINDS
                    or filters.sort in ("model", "kind"))
    by_site = bool(filters.site or filters.sort == "site")
    stmt = select(*columns).select_from(m.Unit)
    if by_model:
        stmt = stmt.join(m.Unit.model)
    if by_site:
        stmt = stmt.outerjoin(m.Unit.site)
    if filters.q:
        like = f"%{filters.q.lower()}%"
        stmt = stmt.where(or_(func.lower(m.Unit.tag).like(like),
                              func.lower(m.Unit.serial).like(like),
                              func.lower(m.Model.name).like(like),
                              func.lower(m.Model.key).like(like),
                              func.lower(m.Model.maker).like(like)))
    if filters.kind in spec.KINDS:
        stmt = stmt.where(m.Model.kind == filters.kind)
    if filters.site:
        stmt = stmt.where(m.Site.name == filters.site)
    if filters.status in spec.UNIT_STATUSES:
        stmt = stmt.where(m.Unit.status == filters.status)
    if filters.category in MAINS_CATEGORIES or filters.voltage is not None:
        # no category asked: any rating (a not-for-mains one too) of that voltage
        stmt = stmt.where(_takes(filters.category if filters.category in MAINS_CATEGORIES else None,
                                 filters.voltage or 0.0))
    if filters.due == "overdue":
        stmt = stmt.where(_overdue(today))
    elif filters.due in DUE_FILTERS:
        stmt = stmt.where(_due_within(today, int(filters.due)))
    return stmt


def fleet_count(session: Session, filters: FleetQuery, today: date | None = None) -> int:
    """How many units the filters keep (every page of the list)."""
    stmt = _fleet_select([m.Unit.id], filters, today or date.today())
    return session.scalar(select(func.count()).select_from(stmt.subquery())) or 0


def _page_ids(session: Session, filters: FleetQuery, today: date, total: int):
    column = SORTS.get(filters.sort, m.Unit.tag)
    order = [column.desc() if filters.desc else column.asc()]
    if column is not m.Unit.tag:
        order.append(m.Unit.tag.asc())
    pages = max((total + filters.size - 1) // filters.size, 1)
    page = min(max(filters.page, 1), pages)
    ids = list(session.connection().scalars(
        _fleet_select([m.Unit.id], filters, today).order_by(*order)
        .limit(filters.size).offset((page - 1) * filters.size)))
    return ids, page, pages


def fleet_page(session: Session, filters: FleetQuery, today: date | None = None,
               total: int | None = None) -> FleetPage:
    """A page of the fleet list as unit rows (with their model, its ratings and the site);
    ``total`` is :func:`fleet_count` when the caller has it already."""
    today = today or date.today()
    if total is None:
        total = fleet_count(session, filters, today)
    ids, page, pages = _page_ids(session, filters, today, total)
    loaded = {u.id: u for u in session.scalars(
        select(m.Unit).where(m.Unit.id.in_(ids))
        .options(selectinload(m.Unit.model).selectinload(m.Model.ratings),
                 selectinload(m.Unit.site)))}
    return FleetPage(units=[loaded[i] for i in ids], total=total, page=page, pages=pages)


@dataclass(frozen=True)
class RatingLine:
    category: str
    voltage: float


@dataclass(frozen=True)
class ModelLine:
    """What the fleet list shows of a model."""

    key: str
    maker: str
    name: str
    kind: str
    ratings: tuple[RatingLine, ...]


@dataclass(frozen=True)
class UnitLine:
    """What the fleet list shows of a unit: plain values, no ORM row."""

    tag: str
    status: str
    verification_due: date | None
    site_name: str | None
    model: ModelLine


def model_lines(session: Session) -> dict[int, ModelLine]:
    """Every model as the fleet list shows it, by id, its ratings in their order (two plain
    queries; the page keeps it per fleet version)."""
    ratings: dict[int, list[RatingLine]] = {}
    for model_id, cat, volts in session.execute(
            select(m.Rating.model_id, m.Rating.category, m.Rating.voltage)
            .order_by(m.Rating.model_id, m.Rating.position)):
        ratings.setdefault(model_id, []).append(RatingLine(cat, volts))
    return {i: ModelLine(key, maker, name, kind, tuple(ratings.get(i, ())))
            for i, key, maker, name, kind in session.execute(
                select(m.Model.id, m.Model.key, m.Model.maker, m.Model.name, m.Model.kind))}


_LINES = (select(m.Unit.id, m.Unit.tag, m.Unit.status, m.Unit.verification_due,
                 m.Unit.model_id, m.Site.name.label("site_name"))
          .outerjoin(m.Unit.site).where(m.Unit.id.in_(bindparam("ids", expanding=True))))


def fleet_lines(session: Session, filters: FleetQuery, models: dict[int, ModelLine],
                today: date | None = None, total: int | None = None) -> FleetPage:
    """:func:`fleet_page` as plain lines (:class:`UnitLine`) for the web's list: the page's
    unit ids, then their columns and sites in one query, the models from ``models``
    (:func:`model_lines`); Core statements on the session's connection (no ORM work)."""
    today = today or date.today()
    if total is None:
        total = fleet_count(session, filters, today)
    ids, page, pages = _page_ids(session, filters, today, total)
    rows = {r.id: r for r in session.connection().execute(_LINES, {"ids": ids})}
    units = [UnitLine(r.tag, r.status, r.verification_due, r.site_name, models[r.model_id])
             for r in (rows[i] for i in ids)]
    return FleetPage(units=units, total=total, page=page, pages=pages)


def status_due_groups(session: Session) -> list[tuple[str, date | None, int]]:
    """(status, verification due, units) for every pair the units hold: one scan, from which
    the dashboard's counts by status, due and overdue units and due by month are made with
    the engine's rules (a few dozen pairs for a lab of thousands of units)."""
    return [tuple(r) for r in session.connection().execute(
        select(m.Unit.status, m.Unit.verification_due, func.count())
        .group_by(m.Unit.status, m.Unit.verification_due))]


def status_counts(session: Session, groups=None) -> dict[str, int]:
    """Units per status (``groups``: :func:`status_due_groups`, read when not given)."""
    out = dict.fromkeys(spec.UNIT_STATUSES, 0)
    for status, _due, n in (groups if groups is not None else status_due_groups(session)):
        if status in out:
            out[status] += n
    return out


def due_soon(session: Session, days: int = 30, today: date | None = None,
             limit: int | None = None) -> list[m.Unit]:
    """Units not retired whose verification falls due within ``days`` (or is overdue), the
    soonest first; the first ``limit`` of them when given."""
    today = today or date.today()
    q = (select(m.Unit).where(_due_within(today, days))
         .order_by(m.Unit.verification_due, m.Unit.tag)
         .options(selectinload(m.Unit.model), selectinload(m.Unit.site)))
    return list(session.scalars(q if limit is None else q.limit(limit)))


def due_soon_count(session: Session, days: int = 30, today: date | None = None,
                   groups=None) -> int:
    """How many units :func:`due_soon` would list (``groups``: :func:`status_due_groups`,
    counted by rules.unit_due_within, the rule :func:`due_soon`'s SQL is held to)."""
    today = today or date.today()
    if groups is None:
        return session.scalar(select(func.count()).select_from(m.Unit)
                              .where(_due_within(today, days)))
    return sum(n for status, due, n in groups if rules.unit_due_within(status, due, today, days))


def month_starts(today: date, months: int, back: bool = False) -> list[date]:
    """The first days of ``months`` calendar months: from this month on, or (``back``) ending
    with this month."""
    first = today.replace(day=1)
    index = first.year * 12 + first.month - 1
    start = index - (months - 1) if back else index
    return [date(i // 12, i % 12 + 1, 1) for i in range(start, start + months)]


def _month_of(d: date) -> date:
    return d.replace(day=1)


def due_by_month(session: Session, today: date | None = None, months: int = 12,
                 groups=None):
    """(overdue count, [(month, units falling due in it)]) over the next ``months`` calendar
    months, this one first; the engine's rules say which units count and which are overdue
    (``groups``: :func:`status_due_groups`, read when not given)."""
    today = today or date.today()
    starts = month_starts(today, months)
    counts = dict.fromkeys(starts, 0)
    overdue = 0
    # one row per (status, due date) with its count: the rules run per distinct pair
    for status, due, n in (groups if groups is not None else status_due_groups(session)):
        if rules.unit_overdue(status, due, today):
            overdue += n
        elif status in rules.VERIFIED_STATUSES and due is not None \
                and _month_of(due) in counts:
            counts[_month_of(due)] += n
    return overdue, list(counts.items())


def events_by_month(session: Session, today: date | None = None, months: int = 12):
    """[(month, {kind: events})] over the last ``months`` calendar months, this one last, by
    when the event happened."""
    today = today or date.today()
    starts = month_starts(today, months, back=True)
    counts = {s: dict.fromkeys(spec.EVENT_KINDS, 0) for s in starts}
    since = datetime(starts[0].year, starts[0].month, 1)
    for kind, at in session.execute(select(m.Event.kind, m.Event.occurred_at)
                                    .where(m.Event.occurred_at >= since)):
        month = _month_of(at.date())
        if month in counts and kind in counts[month]:
            counts[month][kind] += 1
    return list(counts.items())


def open_holds(session: Session) -> list[m.Hold]:
    return list(session.scalars(
        select(m.Hold).where(m.Hold.released_at.is_(None)).order_by(m.Hold.opened_at.desc())
        .options(selectinload(m.Hold.unit).selectinload(m.Unit.model),
                 selectinload(m.Hold.event))))


def recent_events(session: Session, limit: int = 10) -> list[m.Event]:
    return list(session.scalars(
        select(m.Event).order_by(m.Event.logged_at.desc(), m.Event.id.desc()).limit(limit)
        .options(selectinload(m.Event.unit), selectinload(m.Event.logged_by))))


@dataclass
class Coverage:
    voltages: tuple[float, ...]
    categories: tuple[str, ...]
    instruments: dict[tuple[str, float], int] = field(default_factory=dict)
    accessories: dict[tuple[str, float], int] = field(default_factory=dict)

    @property
    def largest(self) -> int:
        return max([1, *self.instruments.values(), *self.accessories.values()])


def coverage(session: Session) -> Coverage:
    """For each mains category and voltage row: how many in-service instruments, and how many
    in-service accessories, have a rating that takes it, by the engine's own rule (a rating at
    least that category and that voltage at once, docs/rules.md, check 2). The dashboard and the
    audit workbook both show this."""
    out = Coverage(COVERAGE_VOLTAGES, MAINS_CATEGORIES)
    for table in (out.instruments, out.accessories):
        table.update({(cat, v): 0 for cat in MAINS_CATEGORIES for v in COVERAGE_VOLTAGES})
    # each model judged once, on its rating rows alone (what fitting_ratings reads), and
    # counted with its number of in-service units
    ratings: dict[int, list[tuple[str, float]]] = {}
    for model_id, cat, volts in session.execute(select(m.Rating.model_id, m.Rating.category,
                                                       m.Rating.voltage)):
        ratings.setdefault(model_id, []).append((cat, volts))
    # the units counted per model id alone (one scan of the units, no join), the kinds
    # from the models table
    kinds = dict(session.execute(select(m.Model.id, m.Model.kind)).all())
    in_service = session.execute(select(m.Unit.model_id, func.count())
                                 .where(m.Unit.status == "in-service")
                                 .group_by(m.Unit.model_id))
    for model_id, units in in_service:
        kind = kinds[model_id]
        table = out.instruments if kind in spec.INSTRUMENT_KINDS else out.accessories
        for cat, v in table:
            if any(rules.rating_covers(rc, rv, cat, v) for rc, rv in ratings.get(model_id, ())):
                table[(cat, v)] += units
    return out


@dataclass(frozen=True)
class TimelineEntry:
    at: datetime
    kind: str  # event | hold-opened | hold-released | change
    title: str
    detail: str = ""
    who: str = ""
    row: object = None
    hold: object = None  # for an event: the hold it opened, if any


def person(user: m.User | None, username: str | None = None) -> str:
    """The one way a person is named in a history: "Display Name (username)"; a recorded actor
    that is no login (an import script) keeps its own word."""
    if user is not None:
        return _named(user.display_name, user.username)
    return username or ""


def _named(display_name: str | None, username: str) -> str:
    return f"{display_name} ({username})" if display_name else username


def _with_login(table, user_id, by_name: bool = False):
    """SELECT every column of ``table`` with the display name and username of the login it
    names (``user_id``: the column that holds the login's id, or with ``by_name`` its
    username), as ``by_name`` and ``by_username`` (``None`` for no login)."""
    user = m.User.__table__.alias()
    on = (user.c.username if by_name else user.c.id) == user_id
    return (select(*table.__table__.columns, user.c.display_name.label("by_name"),
                   user.c.username.label("by_username")).outerjoin(user, on))


# built once: building a statement costs more than SQLite answering it for one unit
_UNIT_LINE = (select(*m.Unit.__table__.columns, m.Site.name.label("site_name"))
              .outerjoin(m.Site, m.Site.id == m.Unit.site_id)
              .where(m.Unit.tag == bindparam("tag")))
_HOLDS = (_with_login(m.Hold, m.Hold.released_by_id)
          .where(m.Hold.unit_id == bindparam("unit_id")).order_by(m.Hold.id))
_EVENTS = (_with_login(m.Event, m.Event.logged_by_id)
           .where(m.Event.unit_id == bindparam("unit_id")).order_by(m.Event.id))
_CHANGES = (_with_login(m.Change, m.Change.actor, by_name=True)
            .where(m.Change.entity == "unit", m.Change.entity_key == bindparam("tag"))
            .order_by(m.Change.id))


def unit_line(session: Session, tag: str):
    """The unit page's unit: its columns and its site's name (``site_name``, ``None`` for no
    site) as one plain row, or ``None``."""
    return session.connection().execute(_UNIT_LINE, {"tag": tag}).first()


def unit_timeline(session: Session, unit) -> list[TimelineEntry]:
    """The unit's events, holds and recorded changes, newest first; ``unit`` is a unit row
    or :func:`unit_line`'s row (its ``id`` and ``tag`` are read). Three plain statements,
    each with the login that logged, released or changed (no ORM objects): the rows carry
    the table's columns by name, as the ORM's would."""
    conn = session.connection()
    holds = conn.execute(_HOLDS, {"unit_id": unit.id}).all()
    events = conn.execute(_EVENTS, {"unit_id": unit.id}).all()
    changes = conn.execute(_CHANGES, {"tag": unit.tag}).all()

    def who(row, fallback: str = "") -> str:
        return fallback if row.by_username is None else _named(row.by_name, row.by_username)

    out: list[TimelineEntry] = []
    opened_by_event = {h.event_id: h for h in holds if h.event_id is not None}
    for ev in events:
        out.append(TimelineEntry(ev.occurred_at, "event", f"Event: {ev.kind}", who=who(ev),
                                 row=ev, hold=opened_by_event.get(ev.id)))
    for h in holds:
        out.append(TimelineEntry(h.opened_at, "hold-opened", f"Hold {h.id} opened", h.reason,
                                 row=h))
        if h.released_at is not None:
            out.append(TimelineEntry(h.released_at, "hold-released",
                                     f"Hold {h.id} released: {h.result}", h.notes,
                                     who=who(h), row=h))
    for c in changes:
        out.append(TimelineEntry(c.at, "change", f"Changed {c.field}",
                                 f"{c.old if c.old is not None else '—'} → "
                                 f"{c.new if c.new is not None else '—'}",
                                 who=who(c, c.actor), row=c))
    out.sort(key=lambda e: (e.at, e.kind), reverse=True)
    return out


def site_names(session: Session) -> list[str]:
    return list(session.scalars(select(m.Site.name).order_by(m.Site.name)))
