"""Revisions: immutable design documents with frozen part copies, hashed, with cached reports."""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import func
from sqlmodel import Session, select

from app.engine import DesignError, parse_design

from ..models import Channel, Fixture, Part, Report, Revision, RevisionPart, User
from . import profiles, review, trail
from .documents import SLOT_KINDS, check_shape, content_hash, get_path, part_document, part_kind_in
from .errors import InputProblems, NotFound, check_text, get_or_not_found, split_problem
from .reports import cached_report, report_for


def revision_label(number: int) -> str:
    """1 -> A, 26 -> Z, 27 -> AA (spreadsheet-column style)."""
    label = ""
    while number > 0:
        number, remainder = divmod(number - 1, 26)
        label = chr(ord("A") + remainder) + label
    return label


def validate_document(document) -> None:
    check_shape(document)
    try:
        parse_design(document)
    except DesignError as exc:
        raise InputProblems([split_problem(line) for line in exc.problems]) from None


def _link_by_name(db: Session, document: dict) -> dict[str, int]:
    """For uploaded files: the library parts whose kind and name match the file's parts."""
    links = {}
    for slot, kind in SLOT_KINDS.items():
        name = get_path(document, f"{slot}.name")
        if isinstance(name, str):
            part_id = db.exec(
                select(Part.id).where(
                    Part.kind == part_kind_in(slot, kind, get_path(document, slot)), Part.name == name
                )
            ).first()
            if part_id is not None:
                links[slot] = part_id
    return links


def create_revision(
    db: Session,
    channel_id: int,
    document: dict,
    author: User,
    change_note: str = "",
    source: str = "form",
    part_links: dict[str, int] | None = None,
) -> Revision:
    """Validate, hash and store a new revision of the channel as a draft, with its report, its
    trail entry, and the earlier revisions superseded. The trail's lock also serialises the
    revision numbers of a channel."""
    channel = db.get(Channel, channel_id)
    if channel is None:
        raise NotFound(f"channel {channel_id}")
    if not isinstance(document, dict):
        raise InputProblems([("document", "the design file must be a JSON object")])
    change_note = check_text("change_note", change_note, 5000)
    validate_document(document)
    digest = content_hash(document)
    links = part_links if part_links is not None else _link_by_name(db, document)
    version_id = profiles.version_in_force(db, channel_id)  # a draft: judged by today's profile
    report = cached_report(db, digest, document, version_id)  # may commit, so before the trail's lock
    head = trail.lock(db)
    try:
        number = (
            db.exec(select(func.max(Revision.number)).where(Revision.channel_id == channel_id)).one() or 0
        ) + 1
        revision = Revision(
            channel_id=channel_id,
            number=number,
            label=revision_label(number),
            document=document,
            content_hash=digest,
            author_id=author.id,
            change_note=change_note,
            source=source,
            profile_version_id=version_id,
        )
        db.add(revision)
        db.flush()
        for slot, part_id in links.items():
            db.add(RevisionPart(revision_id=revision.id, slot=slot, part_id=part_id))
        review.record_saved(db, head, revision, author, report.body)
        db.commit()
    except BaseException:
        db.rollback()
        raise
    db.refresh(revision)
    return revision


@dataclass
class RevisionView:
    revision: Revision
    channel: Channel
    fixture: Fixture
    author: User
    report: Report


def get_revision(db: Session, revision_id: int) -> Revision:
    return get_or_not_found(db, Revision, revision_id, "revision")


def revision_view(db: Session, revision_id: int) -> RevisionView:
    """The revision with its channel, fixture, author and cached report, in one query."""
    row = db.exec(
        select(Revision, Channel, Fixture, User)
        .join(Channel, Channel.id == Revision.channel_id)
        .join(Fixture, Fixture.id == Channel.fixture_id)
        .join(User, User.id == Revision.author_id)
        .where(Revision.id == revision_id)
    ).first()
    if row is None:
        raise NotFound(f"revision {revision_id}")
    revision, channel, fixture, author = row
    return RevisionView(revision, channel, fixture, author, report_for(db, revision))


def latest_revision(db: Session, channel_id: int) -> Revision | None:
    return db.exec(
        select(Revision).where(Revision.channel_id == channel_id).order_by(Revision.number.desc()).limit(1)
    ).first()


def part_links(db: Session, revision_id: int) -> dict[str, int]:
    return {
        link.slot: link.part_id
        for link in db.exec(select(RevisionPart).where(RevisionPart.revision_id == revision_id))
    }


def list_revisions(db: Session, channel_id: int) -> list[Revision]:
    return list(db.exec(select(Revision).where(Revision.channel_id == channel_id).order_by(Revision.number)))


def frozen_parts(document: dict) -> list[tuple[str, str, dict]]:
    """(slot, kind, parameters) of each part copied into the document."""
    out = []
    for slot, kind in SLOT_KINDS.items():
        body = get_path(document, slot)
        if isinstance(body, dict):
            out.append((slot, part_kind_in(slot, kind, body), body))
    return out


__all__ = ["create_revision", "part_document", "revision_label", "revision_view"]
