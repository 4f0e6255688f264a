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

import json
import re
import threading
import time
import weakref
from collections import defaultdict
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

from sqlalchemy import func, text
from sqlmodel import Session, select

from app.engine import ENGINE_VERSION
from app.signoff import chain, workflow
from app.signoff.canonical import canonical_json, sha256_hex
from app.signoff.workflow import Actor

from .. import trail_guard
from ..models import Report, Revision, TrailEntry, TrailHead, User
from ..permissions import workflow_roles


def actor(user: User) -> Actor:
    """The workflow's view of a user: the role set derived from the named actions."""
    return Actor.of(user.id, workflow_roles(user))


# The trail key of each engine (set by create_app and the commands from the settings). The key
# is never written to the database.
_KEYS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def use_key(engine, key: str) -> None:
    if not key:
        raise ValueError("the trail key must not be empty")
    _KEYS[engine] = key.encode("utf-8")


def key_for(db: Session) -> bytes:
    """The trail key for this session's engine; the settings' key when none was registered."""
    key = _KEYS.get(db.get_bind())
    if key is None:
        from ..config import get_settings

        key = get_settings().trail_key.encode("utf-8")
    return key


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
    key = key_for(db)
    digest = chain.entry_hash(fields, head.hash)
    entry = TrailEntry(**fields, prev_hash=head.hash, hash=digest, mac=chain.entry_mac(key, digest))
    db.add(entry)
    db.flush()  # the entry first: the database's guard lets the head move only to an entry that exists
    head.seq, head.hash, head.mac = entry.seq, digest, chain.head_mac(key, entry.seq, digest)
    db.add(head)
    db.flush()
    return entry


def entries_for(db: Session, revision_id: int) -> list[TrailEntry]:
    return list(
        db.exec(select(TrailEntry).where(TrailEntry.revision_id == revision_id).order_by(TrailEntry.seq))
    )


def last_seq_for(db: Session, revision_id: int) -> int:
    """The newest entry of one revision (0 when none)."""
    return db.exec(select(func.max(TrailEntry.seq)).where(TrailEntry.revision_id == revision_id)).one() or 0


def data_version(db: Session) -> int:
    """The database's change counter (trail_guard): larger after any change to revisions,
    reports, accounts, channels, fixtures or trail entries. Part of every cached fragment's key."""
    return trail_guard.data_version(db.connection())


@dataclass(frozen=True)
class TrailCheck:
    ok: bool
    summary: str
    entries: int
    revisions: int


def verify_all(db: Session, key: bytes | None = None, anchor: Anchor | None = None) -> TrailCheck:
    """Everything a record shows, against the trail:

    1. the chain in seq order (sequence, previous hash, each entry's hash and key MAC), and the
       separately kept head (its seq, hash and key MAC);
    2. with ``anchor`` (a head written to a file kept elsewhere), that the trail still holds
       that entry with that hash;
    3. every revision's document against its content hash;
    4. what is stored beside the trail agrees with it: each revision's first entry is its save,
       by the account now named as its author, for its label; replaying its entries through the
       workflow gives its stored state; its newest entry records the content hash it has now;
       every entry's person still has an account of that name; every cached report of a
       content hash that an entry bound hashes to that entry's report hash, its summary columns
       agree with its body, and a report no entry bound equals the engine's own evaluation.

    The first failure is named (the lowest entry where one is involved)."""
    key = key if key is not None else key_for(db)
    table = TrailEntry.__table__  # plain rows: no ORM objects for thousands of entries
    entries = [dict(row) for row in db.connection().execute(table.select().order_by(table.c.seq)).mappings()]
    head_row = db.exec(select(TrailHead).where(TrailHead.id == 1)).first()
    head = (head_row.seq, head_row.hash) if head_row is not None else (0, chain.GENESIS)
    revisions = db.exec(select(Revision).order_by(Revision.id)).all()
    docs = [
        {"id": r.id, "label": r.label, "document": r.document, "content_hash": r.content_hash}
        for r in revisions
    ]
    result = chain.verify(entries, docs, head, key=key, head_mac_stored=head_row.mac if head_row else None)
    if result.ok and anchor is not None:
        problem = _against_anchor(entries, anchor)
        if problem:
            return TrailCheck(False, f"trail broken at {problem}", result.entries, result.revisions)
    if not result.ok:
        first = result.first_failure or ""
        named = re.search(r"\(id (\d+)\)", first) if first.startswith("revision ") else None
        if named:
            seqs = [e["seq"] for e in entries if e["revision_id"] == int(named.group(1))]
            if seqs:
                first += f"; its first trail entry is entry {seqs[0]}"
        return TrailCheck(False, f"trail broken at {first}", result.entries, result.revisions)
    failures = _disagreements(db, entries, revisions)
    if failures:
        _, message = min(failures, key=lambda f: f[0])
        return TrailCheck(False, f"trail broken at {message}", len(entries), len(revisions))
    summary = result.summary + ", and the revisions, accounts and reports shown agree with it"
    if anchor is not None:
        summary += f"; it holds the anchored entry {anchor.seq}"
    return TrailCheck(True, summary, result.entries, result.revisions)


_LAST = 10**18  # sorts after every entry: a failure that names no entry


def _disagreements(db: Session, entries: list[dict], revisions) -> list[tuple[int, str]]:
    """(entry seq, message) for everything stored beside the trail that disagrees with it."""
    failures: list[tuple[int, str]] = []
    users = dict(db.exec(select(User.id, User.name)).all())
    names = set(users.values())
    by_revision: dict[int, list[dict]] = defaultdict(list)
    reported_names: set[str] = set()
    for entry in entries:
        by_revision[entry["revision_id"]].append(entry)
        if entry["user_name"] not in names and entry["user_name"] not in reported_names:
            reported_names.add(entry["user_name"])
            failures.append(
                (
                    entry["seq"],
                    f"entry {entry['seq']}: made by {entry['user_name']!r}, but no account has that name "
                    "(an account was renamed or removed)",
                )
            )
    for revision in revisions:
        label = f"revision {revision.label} (id {revision.id})"
        mine = by_revision.get(revision.id, [])
        if not mine:
            failures.append((_LAST, f"{label}: it has no trail entries (it was not saved through the app)"))
            continue
        first = mine[0]
        if first["action"] != "save":
            failures.append(
                (
                    first["seq"],
                    f"entry {first['seq']}: the first entry of {label} is {first['action']}, not its save",
                )
            )
        else:
            author = users.get(revision.author_id)
            if author != first["user_name"]:
                failures.append(
                    (
                        first["seq"],
                        f"entry {first['seq']}: {first['user_name']!r} saved {label}, but the revision now "
                        f"names {author!r} as its author",
                    )
                )
            saved_label = json.loads(first["detail"]).get("label")
            if saved_label is not None and saved_label != revision.label:
                failures.append(
                    (
                        first["seq"],
                        f"entry {first['seq']}: saved revision {saved_label}, but the revision (id {revision.id}) "
                        f"is now labelled {revision.label}",
                    )
                )
        state = "draft"
        for entry in mine[1:]:
            state = workflow.TRANSITIONS.get((state, entry["action"]), state)
        if state != revision.state:
            last = mine[-1]
            failures.append(
                (
                    last["seq"],
                    f"entry {last['seq']}: the trail of {label} leaves it "
                    f"{workflow.STATE_LABELS.get(state, state).lower()}, but the revision is stored as "
                    f"{workflow.STATE_LABELS.get(revision.state, revision.state).lower()}",
                )
            )
        newest = mine[-1]
        if newest["content_hash"] != revision.content_hash:
            failures.append(
                (
                    newest["seq"],
                    f"entry {newest['seq']}: it records content hash {newest['content_hash'][:12]}… "
                    f"for {label}, which now hashes to {revision.content_hash[:12]}…",
                )
            )
    failures += _report_disagreements(db, entries, revisions)
    return failures


def _report_disagreements(db: Session, entries: list[dict], revisions) -> list[tuple[int, str]]:
    failures: list[tuple[int, str]] = []
    stored: dict[str, dict[str, str]] = defaultdict(dict)  # content hash -> {report hash: engine}
    current: dict[str, tuple[str, dict]] = {}  # content hash -> (report hash, body), this engine
    first_entry: dict[str, int] = {}
    for entry in entries:
        first_entry.setdefault(entry["content_hash"], entry["seq"])
    for content, engine, verdict, violations, marginals, body in db.exec(
        select(
            Report.content_hash,
            Report.engine_version,
            Report.verdict,
            Report.violations,
            Report.marginals,
            Report.body,
        )
    ):
        digest = sha256_hex(body)
        stored[content][digest] = engine
        if engine == ENGINE_VERSION:
            current[content] = (digest, body)
        findings = body.get("findings", []) if isinstance(body, dict) else []
        counted = (
            body.get("verdict") if isinstance(body, dict) else None,
            sum(1 for f in findings if f.get("status") == "violation"),
            sum(1 for f in findings if f.get("status") == "marginal"),
        )
        if counted != (verdict, violations, marginals):
            failures.append(
                (
                    first_entry.get(content, _LAST),
                    f"the cached report of content {content[:12]}… (engine {engine}): its summary columns "
                    f"say {verdict}, {violations} violations, {marginals} marginal, but its body says "
                    f"{counted[0]}, {counted[1]}, {counted[2]} (edited)",
                )
            )
    bound: set[str] = set()
    for entry in entries:
        bound.add(entry["report_hash"])
        kept = stored.get(entry["content_hash"])
        if kept and entry["report_hash"] not in kept:
            failures.append(
                (
                    entry["seq"],
                    f"entry {entry['seq']} ({entry['action']}): no cached report of the content it records "
                    f"({entry['content_hash'][:12]}…) hashes to the report hash it bound "
                    f"({entry['report_hash'][:12]}…): the report was edited",
                )
            )
    from .reports import evaluate_document

    for revision in revisions:
        found = current.get(revision.content_hash)
        if found is None or found[0] in bound:
            continue
        # A report no entry bound (made lazily after an engine upgrade): the engine decides.
        try:
            fresh = evaluate_document(revision.document)
        except Exception:  # noqa: BLE001 - a document the engine refuses cannot vouch for a report
            fresh = None
        if fresh is None or sha256_hex(fresh) != found[0]:
            failures.append(
                (
                    first_entry.get(revision.content_hash, _LAST),
                    f"revision {revision.label} (id {revision.id}): its cached report (engine {ENGINE_VERSION}) "
                    "differs from the engine's own evaluation of its document (edited)",
                )
            )
    return failures


# ----- anchors: the head, written to a file a lead keeps outside the database

ANCHOR_FORMAT = "clampdown-trail-anchor/1"


@dataclass(frozen=True)
class Anchor:
    seq: int
    hash: str


def anchor_document(db: Session) -> dict:
    """The current head as an anchor file's content (only from an intact trail)."""
    head = db.exec(select(TrailHead).where(TrailHead.id == 1)).one()
    return {
        "format": ANCHOR_FORMAT,
        "seq": head.seq,
        "hash": head.hash,
        "written_at": utc_stamp(),
    }


def parse_anchor(document) -> Anchor:
    """An anchor file's content; ValueError naming the field when it is not one."""
    if not isinstance(document, dict):
        raise ValueError("(file): an anchor file is a JSON object")
    if document.get("format") != ANCHOR_FORMAT:
        raise ValueError(f"format: must be {ANCHOR_FORMAT!r}")
    seq, digest = document.get("seq"), document.get("hash")
    if not isinstance(seq, int) or isinstance(seq, bool) or seq < 0:
        raise ValueError("seq: must be a whole number of 0 or more")
    if not isinstance(digest, str) or not re.fullmatch(r"[0-9a-f]{64}", digest):
        raise ValueError("hash: must be 64 lowercase hexadecimal digits")
    return Anchor(seq, digest)


def _against_anchor(entries: list[dict], anchor: Anchor) -> str | None:
    if anchor.seq == 0:
        return None if anchor.hash == chain.GENESIS else "entry 0: the anchor's hash is not the empty trail's"
    if len(entries) < anchor.seq:
        return (
            f"entry {anchor.seq}: the anchor records it, but the trail ends at entry {len(entries)} "
            "(rows removed, or the database rolled back to an older copy)"
        )
    stored = entries[anchor.seq - 1]["hash"]
    if stored != anchor.hash:
        return (
            f"entry {anchor.seq}: the anchor records hash {anchor.hash[:12]}…, the trail holds "
            f"{stored[:12]}… (the trail was rewritten up to the anchor)"
        )
    return None


# ----- the printed record's verification, kept while nothing verified can have changed

_CHECK_LOCK = threading.Lock()


def cached_verification(db: Session, store: dict, max_age: float = 300.0) -> TrailCheck:
    """``verify_all``, kept in ``store`` under a key that changes whenever anything it reads can
    have changed: the head (seq, hash, MAC), the data version the database's triggers bump on
    every change to revisions, accounts, reports, channels, fixtures and trail entries, and the
    engine version. Recomputed at least every ``max_age`` seconds regardless."""
    head = db.exec(select(TrailHead.seq, TrailHead.hash, TrailHead.mac).where(TrailHead.id == 1)).first()
    version = trail_guard.data_version(db.connection())
    key = (tuple(head) if head is not None else None, version, ENGINE_VERSION)
    now = time.monotonic()
    with _CHECK_LOCK:
        kept = store.get("trail_check")
        if kept is not None and kept[0] == key and now - kept[2] < max_age:
            return kept[1]
    result = verify_all(db)
    with _CHECK_LOCK:
        store["trail_check"] = (key, result, now)
    return result
