"""The database tables, as SQLAlchemy 2.0 typed mappings.

Quantities are SI floats in canonical units (V, ohm, F, A, J, W, s, m); ``NULL`` means the
datasheet does not give the value. Enumerations and non-negative quantities are enforced by
check constraints so that a row written by hand cannot contradict the engine's vocabulary.
"""

from __future__ import annotations

from datetime import date, datetime

from sqlalchemy import (JSON, Boolean, CheckConstraint, Date, DateTime, Float, ForeignKey,
                        Integer, MetaData, String, Text, UniqueConstraint)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship

from ..engine import spec

NAMING_CONVENTION = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

ROLES = ("viewer", "technician", "steward")


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING_CONVENTION)


def _one_of(column: str, values, name: str | None = None, nullable: bool = False):
    listed = ", ".join(f"'{v}'" for v in values)
    expr = f"{column} IN ({listed})"
    if nullable:
        expr = f"{column} IS NULL OR {expr}"
    return CheckConstraint(expr, name=name or f"{column}_allowed")


def _non_negative(*columns: str):
    return [CheckConstraint(f"{c} IS NULL OR {c} >= 0", name=f"{c}_non_negative")
            for c in columns]


Quantity = Float  # an SI float; named so the mappings read as what they hold


class Site(Base):
    __tablename__ = "site"
    __table_args__ = tuple(_non_negative("altitude"))

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120), unique=True)
    altitude: Mapped[float] = mapped_column(Quantity, default=0.0)

    units: Mapped[list[Unit]] = relationship(back_populates="site")


class User(Base):
    __tablename__ = "user_account"
    __table_args__ = (_one_of("role", ROLES),)

    id: Mapped[int] = mapped_column(primary_key=True)
    username: Mapped[str] = mapped_column(String(64), unique=True)
    display_name: Mapped[str] = mapped_column(String(120), default="")
    password_hash: Mapped[str] = mapped_column(String(255))
    role: Mapped[str] = mapped_column(String(16), default="viewer")
    active: Mapped[bool] = mapped_column(Boolean, default=True)
    created_at: Mapped[datetime] = mapped_column(DateTime)

    tokens: Mapped[list[ApiToken]] = relationship(back_populates="user",
                                                    cascade="all, delete-orphan")


class ApiToken(Base):
    """An API token, stored as a SHA-256 digest only: the token itself is shown once."""

    __tablename__ = "api_token"

    id: Mapped[int] = mapped_column(primary_key=True)
    user_id: Mapped[int] = mapped_column(ForeignKey("user_account.id", ondelete="CASCADE"))
    digest: Mapped[str] = mapped_column(String(64), unique=True)
    created_at: Mapped[datetime] = mapped_column(DateTime)
    revoked_at: Mapped[datetime | None] = mapped_column(DateTime)

    user: Mapped[User] = relationship(back_populates="tokens")


_FUSE_COLUMNS = ("fuse_current", "fuse_voltage", "fuse_voltage_dc", "fuse_breaking_capacity",
                 "fuse_i2t")


class Model(Base):
    __tablename__ = "model"
    __table_args__ = (
        _one_of("kind", spec.KINDS),
        CheckConstraint("pollution_degree BETWEEN 1 AND 4", name="pollution_degree_range"),
        CheckConstraint("attenuation IS NULL OR attenuation >= 1", name="attenuation_ratio"),
        *_non_negative("max_altitude", "current_rating", "tip_exposure", "required_load",
                       "output_resistance", "min_voltage", "resistance", "energy", "power",
                       "max_voltage", *_FUSE_COLUMNS),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    key: Mapped[str] = mapped_column(String(64), unique=True)
    maker: Mapped[str] = mapped_column(String(120), default="")
    name: Mapped[str] = mapped_column(String(200), default="")
    kind: Mapped[str] = mapped_column(String(32))
    connectors: Mapped[list] = mapped_column(JSON, default=list)
    integrated_leads: Mapped[bool] = mapped_column(Boolean, default=False)
    max_altitude: Mapped[float] = mapped_column(Quantity, default=spec.DEFAULT_MAX_ALTITUDE)
    pollution_degree: Mapped[int] = mapped_column(Integer, default=spec.DEFAULT_POLLUTION_DEGREE)
    connector: Mapped[str | None] = mapped_column(String(64))
    current_rating: Mapped[float | None] = mapped_column(Quantity)
    tip_exposure: Mapped[float | None] = mapped_column(Quantity)
    attenuation: Mapped[float | None] = mapped_column(Quantity)
    required_load: Mapped[float | None] = mapped_column(Quantity)
    output_resistance: Mapped[float | None] = mapped_column(Quantity)
    min_voltage: Mapped[float | None] = mapped_column(Quantity)
    resistance: Mapped[float | None] = mapped_column(Quantity)
    energy: Mapped[float | None] = mapped_column(Quantity)
    power: Mapped[float | None] = mapped_column(Quantity)
    max_voltage: Mapped[float | None] = mapped_column(Quantity)
    fuse_current: Mapped[float | None] = mapped_column(Quantity)
    fuse_voltage: Mapped[float | None] = mapped_column(Quantity)
    fuse_voltage_dc: Mapped[float | None] = mapped_column(Quantity)
    fuse_breaking_capacity: Mapped[float | None] = mapped_column(Quantity)
    fuse_i2t: Mapped[float | None] = mapped_column(Quantity)
    has_fuse: Mapped[bool] = mapped_column(Boolean, default=False)

    ratings: Mapped[list[Rating]] = relationship(
        back_populates="model", cascade="all, delete-orphan", order_by="Rating.position")
    modes: Mapped[list[Mode]] = relationship(
        back_populates="model", cascade="all, delete-orphan", order_by="Mode.position")
    elements: Mapped[list[FrontEndElement]] = relationship(
        back_populates="model", cascade="all, delete-orphan",
        order_by="FrontEndElement.position")
    units: Mapped[list[Unit]] = relationship(back_populates="model")


class Rating(Base):
    __tablename__ = "rating"
    __table_args__ = (
        _one_of("category", spec.CATEGORIES),
        CheckConstraint("voltage > 0", name="voltage_positive"),
        *_non_negative("transient", "max_altitude"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    model_id: Mapped[int] = mapped_column(ForeignKey("model.id", ondelete="CASCADE"))
    position: Mapped[int] = mapped_column(Integer, default=0)
    category: Mapped[str] = mapped_column(String(8))
    voltage: Mapped[float] = mapped_column(Quantity)
    transient: Mapped[float | None] = mapped_column(Quantity)
    max_altitude: Mapped[float | None] = mapped_column(Quantity)

    model: Mapped[Model] = relationship(back_populates="ratings")


class Mode(Base):
    __tablename__ = "mode"
    __table_args__ = (
        UniqueConstraint("model_id", "key", name="uq_mode_model_key"),
        _one_of("measures", spec.MEASURES),
        _one_of("waveform", spec.WAVEFORMS),
        *_non_negative("input_resistance", "input_capacitance", "max_input", "max_current",
                       "max_duration", "discharge_energy", *_FUSE_COLUMNS),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    model_id: Mapped[int] = mapped_column(ForeignKey("model.id", ondelete="CASCADE"))
    position: Mapped[int] = mapped_column(Integer, default=0)
    key: Mapped[str] = mapped_column(String(64))
    label: Mapped[str] = mapped_column(String(120), default="")
    measures: Mapped[str] = mapped_column(String(16))
    waveform: Mapped[str] = mapped_column(String(8), default="both")
    terminals: Mapped[list] = mapped_column(JSON, default=list)
    input_resistance: Mapped[float | None] = mapped_column(Quantity)
    input_capacitance: Mapped[float | None] = mapped_column(Quantity)
    max_input: Mapped[float | None] = mapped_column(Quantity)
    max_current: Mapped[float | None] = mapped_column(Quantity)
    max_duration: Mapped[float | None] = mapped_column(Quantity)
    discharge_energy: Mapped[float | None] = mapped_column(Quantity)
    clamp: Mapped[bool] = mapped_column(Boolean, default=False)
    has_fuse: Mapped[bool] = mapped_column(Boolean, default=False)
    fuse_current: Mapped[float | None] = mapped_column(Quantity)
    fuse_voltage: Mapped[float | None] = mapped_column(Quantity)
    fuse_voltage_dc: Mapped[float | None] = mapped_column(Quantity)
    fuse_breaking_capacity: Mapped[float | None] = mapped_column(Quantity)
    fuse_i2t: Mapped[float | None] = mapped_column(Quantity)
    closes: Mapped[list] = mapped_column(JSON, default=list)

    model: Mapped[Model] = relationship(back_populates="modes")


class FrontEndElement(Base):
    __tablename__ = "front_end_element"
    __table_args__ = (
        UniqueConstraint("model_id", "element_id", name="uq_front_end_element_model_element"),
        _one_of("type", spec.ELEMENT_TYPES),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    model_id: Mapped[int] = mapped_column(ForeignKey("model.id", ondelete="CASCADE"))
    position: Mapped[int] = mapped_column(Integer, default=0)
    element_id: Mapped[str] = mapped_column(String(32))
    type: Mapped[str] = mapped_column(String(16))
    node_a: Mapped[str] = mapped_column(String(32))
    node_b: Mapped[str] = mapped_column(String(32))
    params: Mapped[dict] = mapped_column(JSON, default=dict)  # name -> SI float

    model: Mapped[Model] = relationship(back_populates="elements")


class Unit(Base):
    __tablename__ = "unit"
    __table_args__ = (_one_of("status", spec.UNIT_STATUSES),)

    id: Mapped[int] = mapped_column(primary_key=True)
    tag: Mapped[str] = mapped_column(String(64), unique=True)
    model_id: Mapped[int] = mapped_column(ForeignKey("model.id", ondelete="RESTRICT"))
    serial: Mapped[str] = mapped_column(String(64), default="")
    site_id: Mapped[int | None] = mapped_column(ForeignKey("site.id", ondelete="RESTRICT"))
    custodian: Mapped[str] = mapped_column(String(120), default="")
    status: Mapped[str] = mapped_column(String(16), default="in-service")
    verified_on: Mapped[date | None] = mapped_column(Date)
    verification_due: Mapped[date | None] = mapped_column(Date)
    notes: Mapped[str] = mapped_column(Text, default="")

    model: Mapped[Model] = relationship(back_populates="units")
    site: Mapped[Site | None] = relationship(back_populates="units")
    events: Mapped[list[Event]] = relationship(back_populates="unit", order_by="Event.id")
    holds: Mapped[list[Hold]] = relationship(back_populates="unit", order_by="Hold.id")


class Event(Base):
    """An overstress or damage event; append-only, each row hashed onto the one before."""

    __tablename__ = "event"
    __table_args__ = (
        _one_of("kind", spec.EVENT_KINDS),
        _one_of("waveform", spec.EVENT_WAVEFORMS, nullable=True),
        *_non_negative("voltage", "energy", "duration"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    unit_id: Mapped[int] = mapped_column(ForeignKey("unit.id", ondelete="RESTRICT"))
    occurred_at: Mapped[datetime] = mapped_column(DateTime)
    logged_at: Mapped[datetime] = mapped_column(DateTime)
    logged_by_id: Mapped[int | None] = mapped_column(
        ForeignKey("user_account.id", ondelete="RESTRICT"))
    mode_key: Mapped[str | None] = mapped_column(String(64))
    kind: Mapped[str] = mapped_column(String(16))
    voltage: Mapped[float | None] = mapped_column(Quantity)
    energy: Mapped[float | None] = mapped_column(Quantity)
    duration: Mapped[float | None] = mapped_column(Quantity)
    waveform: Mapped[str | None] = mapped_column(String(8))  # ac or dc; None: not logged
    symptoms: Mapped[list] = mapped_column(JSON, default=list)
    notes: Mapped[str] = mapped_column(Text, default="")
    within_rating: Mapped[bool | None] = mapped_column(Boolean)
    clamp_conducted: Mapped[bool] = mapped_column(Boolean, default=False)
    prev_hash: Mapped[str] = mapped_column(String(64))
    hash: Mapped[str] = mapped_column(String(64), unique=True)

    unit: Mapped[Unit] = relationship(back_populates="events")
    logged_by: Mapped[User | None] = relationship()


class Hold(Base):
    __tablename__ = "hold"
    __table_args__ = (_one_of("result", spec.INSPECTION_RESULTS, nullable=True),)

    id: Mapped[int] = mapped_column(primary_key=True)
    unit_id: Mapped[int] = mapped_column(ForeignKey("unit.id", ondelete="RESTRICT"))
    event_id: Mapped[int | None] = mapped_column(ForeignKey("event.id", ondelete="RESTRICT"))
    opened_at: Mapped[datetime] = mapped_column(DateTime)
    reason: Mapped[str] = mapped_column(Text, default="")
    released_at: Mapped[datetime | None] = mapped_column(DateTime)
    released_by_id: Mapped[int | None] = mapped_column(
        ForeignKey("user_account.id", ondelete="RESTRICT"))
    result: Mapped[str | None] = mapped_column(String(16))
    notes: Mapped[str] = mapped_column(Text, default="")

    unit: Mapped[Unit] = relationship(back_populates="holds")
    event: Mapped[Event | None] = relationship()
    released_by: Mapped[User | None] = relationship()


class Change(Base):
    """Who changed which field of which spec or unit, when, from what to what."""

    __tablename__ = "change"

    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[datetime] = mapped_column(DateTime)
    user_id: Mapped[int | None] = mapped_column(ForeignKey("user_account.id",
                                                           ondelete="SET NULL"))
    # who, as text, kept if the user goes
    actor: Mapped[str] = mapped_column(String(120), default="")
    entity: Mapped[str] = mapped_column(String(16))  # model | unit | site
    entity_key: Mapped[str] = mapped_column(String(64))
    field: Mapped[str] = mapped_column(String(200))
    old: Mapped[str | None] = mapped_column(Text)
    new: Mapped[str | None] = mapped_column(Text)


CHAINS = ("hold", "change")
LINK_KINDS = ("hold-opened", "hold-released", "change")


class Link(Base):
    """One link of the hold chain or the change chain: ``hash`` is the keyed HMAC of the
    subject row's content (a hold's opening, a hold's release, a change) and ``prev_hash``."""

    __tablename__ = "record_link"
    __table_args__ = (_one_of("chain", CHAINS), _one_of("kind", LINK_KINDS))

    id: Mapped[int] = mapped_column(primary_key=True)
    chain: Mapped[str] = mapped_column(String(16))
    kind: Mapped[str] = mapped_column(String(16))
    subject_id: Mapped[int] = mapped_column(Integer)  # hold.id or change.id; no foreign key
    prev_hash: Mapped[str] = mapped_column(String(64))
    hash: Mapped[str] = mapped_column(String(64), unique=True)


class ChainSeal(Base):
    """What a database upgraded by migration 0003 held before the chains were keyed: events up
    to ``legacy_last_event_id`` keep their plain SHA-256 links; holds and changes up to their
    ids had no link and are linked when the seal is made (``withstand init``). ``mac`` signs
    the row with the chain key; until it is set the record does not verify."""

    __tablename__ = "chain_seal"

    id: Mapped[int] = mapped_column(primary_key=True)
    legacy_last_event_id: Mapped[int] = mapped_column(Integer, default=0)
    legacy_events: Mapped[int] = mapped_column(Integer, default=0)
    legacy_head: Mapped[str] = mapped_column(String(64))
    legacy_last_hold_id: Mapped[int] = mapped_column(Integer, default=0)
    legacy_last_change_id: Mapped[int] = mapped_column(Integer, default=0)
    sealed_at: Mapped[datetime | None] = mapped_column(DateTime)
    mac: Mapped[str | None] = mapped_column(String(64))


class SolveCache(Base):
    """A front-end solve kept across processes (``store.solves``): the engine's result as
    JSON text under the content hash of what was solved (``engine.network.cache``). Only a
    cache: deleting every row loses no record, the next check solves again."""

    __tablename__ = "solve_cache"

    key: Mapped[str] = mapped_column(String(64), primary_key=True)
    kind: Mapped[str] = mapped_column(String(16))
    result: Mapped[str] = mapped_column(Text)
    created_at: Mapped[datetime] = mapped_column(DateTime)
