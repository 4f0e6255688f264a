"""The trail: appending hash-chained entries under a lock, and verifying the whole of it.

Appending takes the trail's write lock first (an UPDATE of the single trail_head row): on
PostgreSQL that is a row lock held to the end of the transaction; on SQLite the UPDATE takes the
database's write lock, and because it is the transaction's first statement no stale snapshot can
stand in the way (the busy timeout makes the second writer wait instead of failing). Whatever the
caller then reads sees every entry committed before it, so a decision and its entry are made
against the newest state. The seq primary key is the last line of defence: two entries can never
share a position.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

from sqlalchemy import func, text
from sqlmodel import Session, select

from app.signoff import chain
from app.signoff.canonical import canonical_json, sha256_hex
from app.signoff.workflow import Actor

from ..models import Revision, TrailEntry, TrailHead, User
from ..permissions import workflow_roles


def actor(user: User) -> Actor:
    """The workflow's view of a user: the role set derived from the named actions."""
    return Actor.of(user.id, workflow_roles(user))


def lock(db: Session) -> TrailHead:
    """Start a transaction holding the trail's write lock; returns the current head."""
    db.commit()  # end any read transaction first (see the module docstring)
    db.connection().execute(text("UPDATE trail_head SET seq = seq WHERE id = 1"))
    return db.exec(select(TrailHead).where(TrailHead.id == 1).execution_options(populate_existing=True)).one()


def utc_stamp() -> str:
    return datetime.now(UTC).isoformat(timespec="microseconds").replace("+00:00", "Z")


def report_hash(report_body: dict) -> str:
    return sha256_hex(report_body)


def append(
    db: Session,
    head: TrailHead,
    revision: Revision,
    user: User,
    action: str,
    meaning: str,
    report_body: dict,
    detail: dict[str, Any],
) -> TrailEntry:
    """Add one entry after ``head`` (taken with ``lock``) and move the head; the caller commits."""
    fields = {
        "seq": head.seq + 1,
        "revision_id": revision.id,
        "user_name": user.name,
        "role": user.role,
        "at": utc_stamp(),
        "action": action,
        "content_hash": revision.content_hash,
        "report_hash": report_hash(report_body),
        "meaning": meaning,
        "detail": canonical_json(detail),
    }
    digest = chain.entry_hash(fields, head.hash)
    entry = TrailEntry(**fields, prev_hash=head.hash, hash=digest)
    db.add(entry)
    head.seq, head.hash = entry.seq, digest
    db.add(head)
    db.flush()
    return entry


def entries_for(db: Session, revision_id: int) -> list[TrailEntry]:
    return list(
        db.exec(select(TrailEntry).where(TrailEntry.revision_id == revision_id).order_by(TrailEntry.seq))
    )


def last_seq_for(db: Session, revision_id: int) -> int:
    """The newest entry of one revision (0 when none): part of the revision page's cache key."""
    return db.exec(select(func.max(TrailEntry.seq)).where(TrailEntry.revision_id == revision_id)).one() or 0


@dataclass(frozen=True)
class TrailCheck:
    ok: bool
    summary: str
    entries: int
    revisions: int


def verify_all(db: Session) -> TrailCheck:
    """The whole chain, the separately kept head, every revision's document against its content
    hash, and each revision's newest entry against the hash the revision has now (a document
    rewritten together with its hash no longer matches what the trail recorded)."""
    rows = db.exec(select(TrailEntry).order_by(TrailEntry.seq)).all()
    entries = [row.model_dump() for row in rows]
    head_row = db.exec(select(TrailHead).where(TrailHead.id == 1)).first()
    head = (head_row.seq, head_row.hash) if head_row is not None else (0, chain.GENESIS)
    revisions = db.exec(select(Revision).order_by(Revision.id)).all()
    docs = [
        {"id": r.id, "label": r.label, "document": r.document, "content_hash": r.content_hash}
        for r in revisions
    ]
    result = chain.verify(entries, docs, head)
    if not result.ok:
        first = result.first_failure or ""
        named = re.search(r"\(id (\d+)\)", first) if first.startswith("revision ") else None
        if named:
            seqs = [e["seq"] for e in entries if e["revision_id"] == int(named.group(1))]
            if seqs:
                first += f"; its first trail entry is entry {seqs[0]}"
        return TrailCheck(False, f"trail broken at {first}", result.entries, result.revisions)
    newest: dict[int, dict] = {}
    for entry in entries:
        newest[entry["revision_id"]] = entry
    for revision in revisions:
        entry = newest.get(revision.id)
        if entry is not None and entry["content_hash"] != revision.content_hash:
            return TrailCheck(
                False,
                f"trail broken at entry {entry['seq']}: it records content hash {entry['content_hash'][:12]}… "
                f"for revision {revision.label} (id {revision.id}), which now hashes to {revision.content_hash[:12]}…",
                len(entries),
                len(revisions),
            )
    return TrailCheck(True, result.summary, result.entries, result.revisions)
