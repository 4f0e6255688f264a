"""The work waiting for a person: a reviewer's revisions handed in by others (oldest first), a
designer's revisions sent back and their drafts. The first thing the home page shows."""

from __future__ import annotations

import json
from dataclasses import dataclass
from datetime import UTC, datetime

from sqlmodel import Session, select

from ..models import Channel, Fixture, Revision, TrailEntry, User
from ..permissions import can


@dataclass
class QueueItem:
    revision_id: int
    label: str
    channel_name: str
    fixture_name: str
    author: str
    since: datetime  # handed in, sent back, or saved
    by: str = ""  # who handed it in or sent it back
    text: str = ""  # the hand-in note or what must change


@dataclass
class Queues:
    waiting: list[QueueItem] | None = None  # None: not a reviewer
    sent_back: list[QueueItem] | None = None  # None: not a designer
    drafts: list[QueueItem] | None = None

    @property
    def shown(self) -> bool:
        return any(q is not None for q in (self.waiting, self.sent_back, self.drafts))


def _parse(at: str) -> datetime:
    moment = datetime.fromisoformat(at.replace("Z", "+00:00"))
    return moment if moment.tzinfo else moment.replace(tzinfo=UTC)


def _by_trail(db: Session, state: str, action: str, *, author_id: int, mine: bool) -> list[QueueItem]:
    """Revisions in ``state`` with the trail entry that put them there, oldest first."""
    query = (
        select(Revision.id, Revision.label, Channel.name, Fixture.name, User.name, TrailEntry)
        .join(Channel, Channel.id == Revision.channel_id)
        .join(Fixture, Fixture.id == Channel.fixture_id)
        .join(User, User.id == Revision.author_id)
        .join(TrailEntry, (TrailEntry.revision_id == Revision.id) & (TrailEntry.action == action))
        .where(Revision.state == state)
        .where((Revision.author_id == author_id) if mine else (Revision.author_id != author_id))
        .order_by(TrailEntry.seq)
    )
    out = []
    for rid, label, channel, fixture, author, entry in db.exec(query):
        note = json.loads(entry.detail).get("note") or ""
        out.append(QueueItem(rid, label, channel, fixture, author, _parse(entry.at), entry.user_name, note))
    return out


def _drafts(db: Session, author_id: int) -> list[QueueItem]:
    query = (
        select(
            Revision.id, Revision.label, Channel.name, Fixture.name, Revision.created_at, Revision.change_note
        )
        .join(Channel, Channel.id == Revision.channel_id)
        .join(Fixture, Fixture.id == Channel.fixture_id)
        .where(Revision.state == "draft", Revision.author_id == author_id)
        .order_by(Revision.created_at, Revision.id)
    )
    return [
        QueueItem(
            rid,
            label,
            channel,
            fixture,
            "",
            created if created.tzinfo else created.replace(tzinfo=UTC),
            "",
            note,
        )
        for rid, label, channel, fixture, created, note in db.exec(query)
    ]


def queues_for(db: Session, user: User) -> Queues:
    """The queues this person's actions give them (someone who may both review and author sees both)."""
    queues = Queues()
    if can(user, "review"):
        queues.waiting = _by_trail(db, "in_review", "hand_in", author_id=user.id, mine=False)
    if can(user, "create_revision"):
        queues.sent_back = list(
            reversed(_by_trail(db, "returned", "send_back", author_id=user.id, mine=True))
        )
        queues.drafts = _drafts(db, user.id)
    return queues


def age(since: datetime, now: datetime | None = None) -> str:
    """How long, in the largest whole unit: "under a minute", "5 min", "3 h", "2 d"."""
    now = now or datetime.now(UTC)
    seconds = max(0, int((now - since).total_seconds()))
    if seconds < 60:
        return "under a minute"
    for size, unit in ((86400, "d"), (3600, "h"), (60, "min")):
        if seconds >= size:
            return f"{seconds // size} {unit}"
    return "under a minute"  # pragma: no cover
