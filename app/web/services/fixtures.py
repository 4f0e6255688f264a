"""Fixtures and their channels, and the overview the home page shows."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

from sqlalchemy import and_, func
from sqlmodel import Session, select

from app.engine import ENGINE_VERSION

from ..models import Channel, Fixture, Report, Revision, User
from .errors import InputProblems, check_text, get_or_not_found
from .reports import cached_report


def _text(field: str, value: str, limit: int, required: bool = True) -> str:
    return check_text(field, value, limit, required)


def create_fixture(db: Session, name: str, description: str = "") -> Fixture:
    name = _text("name", name, 200)
    description = _text("description", description, 5000, required=False)
    if db.exec(select(Fixture).where(func.lower(Fixture.name) == name.lower())).first():
        raise InputProblems([("name", f"a fixture named {name!r} already exists")])
    fixture = Fixture(name=name, description=description)
    db.add(fixture)
    db.commit()
    db.refresh(fixture)
    return fixture


def create_channel(
    db: Session, fixture_id: int, name: str, load: str = "", mains_load: bool = False
) -> Channel:
    fixture = get_fixture(db, fixture_id)
    name = _text("name", name, 200)
    load = _text("load", load, 300, required=False)
    taken = select(Channel).where(Channel.fixture_id == fixture.id, func.lower(Channel.name) == name.lower())
    if db.exec(taken).first():
        raise InputProblems([("name", f"{fixture.name} already has a channel named {name!r}")])
    channel = Channel(fixture_id=fixture.id, name=name, load=load, mains_load=bool(mains_load))
    db.add(channel)
    db.commit()
    db.refresh(channel)
    return channel


def get_fixture(db: Session, fixture_id: int) -> Fixture:
    return get_or_not_found(db, Fixture, fixture_id, "fixture")


def get_channel(db: Session, channel_id: int) -> Channel:
    return get_or_not_found(db, Channel, channel_id, "channel")


def list_fixtures(db: Session, limit: int | None = None, offset: int = 0) -> list[Fixture]:
    query = select(Fixture).order_by(Fixture.name, Fixture.id)
    if limit is not None:
        query = query.limit(limit).offset(offset)
    return list(db.exec(query))


def count_fixtures(db: Session) -> int:
    return db.exec(select(func.count()).select_from(Fixture)).one()


def count_revisions(db: Session, channel_id: int) -> int:
    return db.exec(select(func.count()).select_from(Revision).where(Revision.channel_id == channel_id)).one()


@dataclass
class RevisionStatus:
    """A revision's row in a list: no document, just what the lists show."""

    id: int
    channel_id: int
    label: str
    created_at: datetime
    author: str
    change_note: str
    content_hash: str
    verdict: str | None
    violations: int | None
    marginals: int | None


@dataclass
class ChannelStatus:
    channel: Channel
    latest: RevisionStatus | None


def _status_columns():
    return (
        Revision.id,
        Revision.channel_id,
        Revision.label,
        Revision.created_at,
        User.name,
        Revision.change_note,
        Revision.content_hash,
        Report.verdict,
        Report.violations,
        Report.marginals,
    )


def _with_report(query):
    return query.join(User, User.id == Revision.author_id).outerjoin(
        Report, and_(Report.content_hash == Revision.content_hash, Report.engine_version == ENGINE_VERSION)
    )


def _fill_missing(db: Session, rows: list[RevisionStatus]) -> None:
    """Reports not cached for this engine version yet (e.g. after an engine upgrade)."""
    for row in rows:
        if row.verdict is None:
            document = db.exec(select(Revision.document).where(Revision.id == row.id)).one()
            report = cached_report(db, row.content_hash, document)
            row.verdict, row.violations, row.marginals = report.verdict, report.violations, report.marginals


def overview(
    db: Session, fixture_id: int | None = None, limit: int | None = None, offset: int = 0
) -> list[tuple[Fixture, list[ChannelStatus]]]:
    """Every fixture (or ``limit`` of them from ``offset``, by name) with each channel's latest
    revision and its counts, in three queries.

    The latest revision of each channel is found through the (channel_id, number) unique
    index, one index probe per channel, rather than by grouping every revision."""
    fixtures = [get_fixture(db, fixture_id)] if fixture_id is not None else list_fixtures(db, limit, offset)
    ids = [f.id for f in fixtures]
    if not ids:
        return []
    channels = list(db.exec(select(Channel).where(Channel.fixture_id.in_(ids)).order_by(Channel.name)))
    newest = (
        select(func.max(Revision.number))
        .where(Revision.channel_id == Channel.id)
        .correlate(Channel)
        .scalar_subquery()
    )
    query = _with_report(
        select(*_status_columns())
        .select_from(Channel)
        .join(Revision, and_(Revision.channel_id == Channel.id, Revision.number == newest))
        .where(Channel.fixture_id.in_(ids))
    )
    rows = [RevisionStatus(*row) for row in db.exec(query)]
    _fill_missing(db, rows)
    by_channel = {row.channel_id: row for row in rows}
    by_fixture: dict[int, list[ChannelStatus]] = {fixture_id: [] for fixture_id in ids}
    for channel in channels:
        by_fixture[channel.fixture_id].append(ChannelStatus(channel, by_channel.get(channel.id)))
    return [(fixture, by_fixture[fixture.id]) for fixture in fixtures]


def overview_version(db: Session) -> tuple:
    """Changes whenever the overview could: fixtures, channels and revisions are only ever added
    (none is edited or deleted, and a revision's report depends only on its content), so the
    newest id of each is enough. One query, three index lookups."""
    newest = [select(func.max(table.id)).scalar_subquery() for table in (Fixture, Channel, Revision)]
    return tuple(db.exec(select(*newest)).one())


def history(db: Session, channel_id: int, limit: int | None = None, offset: int = 0) -> list[RevisionStatus]:
    """A channel's revisions, newest first (``limit`` of them from ``offset``), with the status
    of each."""
    query = _with_report(select(*_status_columns())).where(Revision.channel_id == channel_id)
    query = query.order_by(Revision.number.desc())
    if limit is not None:
        query = query.limit(limit).offset(offset)
    rows = [RevisionStatus(*row) for row in db.exec(query)]
    _fill_missing(db, rows)
    return rows
