"""Fixtures and their channels, and the overview the home page shows."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

from sqlalchemy import String, and_, cast, exists, func
from sqlalchemy.orm import aliased
from sqlmodel import Session, select

from app.engine import ENGINE_VERSION

from ..models import Channel, Fixture, Report, Revision, TrailEntry, User
from .errors import InputProblems, check_text, commit_or_conflict, get_or_not_found, same_name
from .reports import cached_report


def _text(field: str, value: str, limit: int, required: bool = True) -> str:
    return check_text(field, value, limit, required)


def create_fixture(db: Session, name: str, description: str = "") -> Fixture:
    name = _text("name", name, 200)
    description = _text("description", description, 5000, required=False)
    taken = f"a fixture named {name!r} already exists"
    if any(same_name(name, other) for other in db.exec(select(Fixture.name))):
        raise InputProblems([("name", taken)], 409)
    fixture = Fixture(name=name, description=description)
    db.add(fixture)
    commit_or_conflict(db, "name", taken)
    db.refresh(fixture)
    return fixture


def create_channel(
    db: Session, fixture_id: int, name: str, load: str = "", mains_load: bool = False
) -> Channel:
    fixture = get_fixture(db, fixture_id)
    name = _text("name", name, 200)
    load = _text("load", load, 300, required=False)
    taken = f"{fixture.name} already has a channel named {name!r}"
    names = db.exec(select(Channel.name).where(Channel.fixture_id == fixture.id))
    if any(same_name(name, other) for other in names):
        raise InputProblems([("name", taken)], 409)
    channel = Channel(fixture_id=fixture.id, name=name, load=load, mains_load=bool(mains_load))
    db.add(channel)
    commit_or_conflict(db, "name", taken)
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
    state: str = "draft"
    signed_off: bool = False  # a sign-off stays on its revision after it is superseded
    waivers: int = 0  # findings accepted with a waiver (a signed-off "past derating" reads right)
    approved_baseline: bool = False  # the channel's newest signed-off revision


@dataclass
class ChannelStatus:
    channel: Channel
    latest: RevisionStatus | None
    baseline: RevisionStatus | None = None  # the approved baseline, when it is not the latest


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
        Revision.state,
        exists()
        .where(TrailEntry.revision_id == Revision.id, TrailEntry.action == "sign_off")
        .correlate(Revision),
        select(func.count(TrailEntry.seq))
        .where(TrailEntry.revision_id == Revision.id, TrailEntry.action == "waive")
        .correlate(Revision)
        .scalar_subquery(),
    )


def _signed_off_number(channel_column):
    """The number of the channel's newest signed-off revision (its approved baseline)."""
    signed = aliased(Revision)
    return (
        select(func.max(signed.number))
        .join(TrailEntry, and_(TrailEntry.revision_id == signed.id, TrailEntry.action == "sign_off"))
        .where(signed.channel_id == channel_column)
        .correlate(Channel)
        .scalar_subquery()
    )


def _with_report(query):
    return query.join(User, User.id == Revision.author_id).outerjoin(
        Report,
        and_(
            Report.content_hash == Revision.content_hash,
            Report.engine_version == ENGINE_VERSION,
            Report.profile_key == func.coalesce(cast(Revision.profile_version_id, String), ""),
        ),
    )


def _fill_missing(db: Session, rows: list[RevisionStatus]) -> None:
    """Reports not cached for this engine version yet (e.g. after an engine upgrade)."""
    for row in rows:
        if row.verdict is None:
            document, version_id = db.exec(
                select(Revision.document, Revision.profile_version_id).where(Revision.id == row.id)
            ).one()
            report = cached_report(db, row.content_hash, document, version_id)
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
    baselines_query = _with_report(
        select(*_status_columns())
        .select_from(Channel)
        .join(
            Revision,
            and_(Revision.channel_id == Channel.id, Revision.number == _signed_off_number(Channel.id)),
        )
        .where(Channel.fixture_id.in_(ids))
    )
    baselines = {row.channel_id: row for row in (RevisionStatus(*r) for r in db.exec(baselines_query))}
    _fill_missing(db, list(baselines.values()))
    for row in baselines.values():
        row.approved_baseline = True
    by_channel = {row.channel_id: row for row in rows}
    by_fixture: dict[int, list[ChannelStatus]] = {fixture_id: [] for fixture_id in ids}
    for channel in channels:
        latest, baseline = by_channel.get(channel.id), baselines.get(channel.id)
        if latest is not None and baseline is not None and baseline.id == latest.id:
            latest.approved_baseline, baseline = True, None
        by_fixture[channel.fixture_id].append(ChannelStatus(channel, latest, baseline))
    return [(fixture, by_fixture[fixture.id]) for fixture in fixtures]


def overview_version(db: Session) -> tuple:
    """Changes whenever the overview could: the data version (bumped by database triggers on
    every change to fixtures, channels, revisions, reports and accounts, however it is made; a
    replaced draft changes its revision's report) and the engine version. One cheap query."""
    from .trail import data_version

    return (data_version(db), ENGINE_VERSION)


def history(db: Session, channel_id: int, limit: int | None = None, offset: int = 0) -> list[RevisionStatus]:
    """A channel's revisions, newest first (``limit`` of them from ``offset``), with the status
    of each."""
    query = _with_report(select(*_status_columns())).where(Revision.channel_id == channel_id)
    query = query.order_by(Revision.number.desc())
    if limit is not None:
        query = query.limit(limit).offset(offset)
    rows = [RevisionStatus(*row) for row in db.exec(query)]
    _fill_missing(db, rows)
    for row in rows:  # newest first: the first signed-off one is the approved baseline
        if row.signed_off:
            row.approved_baseline = True
            break
    return rows
