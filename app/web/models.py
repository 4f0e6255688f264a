"""The tables, all in one place. A revision's content is immutable once handed in (see
``_guard_revision``); the trail is append-only (database triggers, see app/web/trail_guard.py)."""

from __future__ import annotations

from datetime import UTC, datetime
from typing import Any

from sqlalchemy import JSON, Column, DateTime, Text, UniqueConstraint, event, inspect
from sqlmodel import Field, SQLModel

from app.engine.switches import part_kinds as _switch_part_kinds
from app.signoff.canonical import sha256_hex

ROLES = ("designer", "reviewer", "admin")
# The switch part kinds come from the engine's switch registry (transistor, nmos, darlington_array).
SWITCH_PART_KINDS = tuple(_switch_part_kinds())
PART_KINDS = (*SWITCH_PART_KINDS, "diode", "zener", "tvs", "coil")


def utcnow() -> datetime:
    return datetime.now(UTC)


def _when(**kw: Any):
    return Field(default_factory=utcnow, sa_type=DateTime(timezone=True), **kw)


class User(SQLModel, table=True):
    __tablename__ = "user_account"
    id: int | None = Field(default=None, primary_key=True)
    name: str = Field(max_length=80, unique=True)
    password_hash: str = Field(max_length=200)
    role: str = Field(max_length=20)
    active: bool = True
    created_at: datetime = _when()
    # Raised to end every session of the account at once (sign-out, password change,
    # deactivation); a session cookie carries the generation it was issued under.
    session_generation: int = Field(default=0, sa_column_kwargs={"server_default": "0"})


class Part(SQLModel, table=True):
    """A library part. ``params`` holds the values as entered (engineering notation kept), in the
    design file's own field names, without the name; the engine's part models validate them."""

    __table_args__ = (UniqueConstraint("kind", "name", name="uq_part_kind_name"),)
    id: int | None = Field(default=None, primary_key=True)
    kind: str = Field(max_length=20, index=True)
    name: str = Field(max_length=200)
    params: dict = Field(default_factory=dict, sa_column=Column(JSON, nullable=False))
    notes: str = Field(default="", max_length=5000)
    # For the reader (the part page and the record); copied into a revision with the part.
    maker_part: str = Field(default="", max_length=100, sa_column_kwargs={"server_default": ""})
    package: str = Field(default="", max_length=60, sa_column_kwargs={"server_default": ""})
    datasheet: str = Field(default="", max_length=500, sa_column_kwargs={"server_default": ""})
    archived: bool = False
    created_at: datetime = _when()
    updated_at: datetime = _when()


class DeratingProfile(SQLModel, table=True):
    """A team's named derating profile. Its figures live in versions, never edited in place."""

    __tablename__ = "derating_profile"
    id: int | None = Field(default=None, primary_key=True)
    name: str = Field(max_length=120, unique=True)
    created_at: datetime = _when()


class DeratingProfileVersion(SQLModel, table=True):
    """One version of a profile's figures (app.engine.profile.FIGURES). Append-only: an edit adds
    a version; a handed-in revision keeps the version that judged it."""

    __tablename__ = "derating_profile_version"
    __table_args__ = (UniqueConstraint("profile_id", "version", name="uq_profile_version"),)
    id: int | None = Field(default=None, primary_key=True)
    profile_id: int = Field(foreign_key="derating_profile.id", index=True)
    version: int
    figures: dict = Field(sa_column=Column(JSON, nullable=False))
    note: str = Field(default="", max_length=2000)
    author_id: int = Field(foreign_key="user_account.id")
    created_at: datetime = _when()


class Fixture(SQLModel, table=True):
    """A panel, jig or machine whose outputs the channels drive."""

    id: int | None = Field(default=None, primary_key=True)
    name: str = Field(max_length=200, unique=True)
    description: str = Field(default="", max_length=5000)
    created_at: datetime = _when()
    # The profile its revisions are judged by (its newest version at hand-in); none: built-in.
    default_profile_id: int | None = Field(default=None, foreign_key="derating_profile.id")


class Channel(SQLModel, table=True):
    """One driver stage of a fixture, e.g. "K3 heater contactor"."""

    __table_args__ = (UniqueConstraint("fixture_id", "name", name="uq_channel_fixture_name"),)
    id: int | None = Field(default=None, primary_key=True)
    fixture_id: int = Field(foreign_key="fixture.id", index=True)
    name: str = Field(max_length=200)
    load: str = Field(default="", max_length=300, description="what the relay's contacts switch")
    mains_load: bool = Field(default=False, description="the contacts switch mains voltage")
    created_at: datetime = _when()


class Revision(SQLModel, table=True):
    """A saved design of a channel: the complete design document, with frozen part copies."""

    # The unique constraint doubles as the index the "latest revision per channel" query uses.
    __table_args__ = (UniqueConstraint("channel_id", "number", name="uq_revision_channel_number"),)
    id: int | None = Field(default=None, primary_key=True)
    channel_id: int = Field(foreign_key="channel.id")
    number: int
    label: str = Field(max_length=8)
    document: dict = Field(sa_column=Column(JSON, nullable=False))
    content_hash: str = Field(max_length=64, index=True)
    author_id: int = Field(foreign_key="user_account.id")
    change_note: str = Field(default="", max_length=5000)
    source: str = Field(default="form", max_length=20)
    created_at: datetime = _when()
    # The workflow state (app.signoff.workflow.STATES); changed only through services/review.py.
    state: str = Field(default="draft", max_length=20, sa_column_kwargs={"server_default": "draft"})
    # The derating profile version that judges it, fixed when it is handed in; none: built-in.
    profile_version_id: int | None = Field(default=None, foreign_key="derating_profile_version.id")


class RevisionPart(SQLModel, table=True):
    """Which library part a revision copied into each slot (keeps used parts from deletion)."""

    __tablename__ = "revision_part"
    revision_id: int = Field(foreign_key="revision.id", primary_key=True)
    slot: str = Field(max_length=20, primary_key=True)
    part_id: int = Field(foreign_key="part.id", index=True)


class Report(SQLModel, table=True):
    """The engine's report for one design content hash and engine version (a cache)."""

    __table_args__ = (
        UniqueConstraint(
            "content_hash", "engine_version", "profile_key", name="uq_report_hash_version_profile"
        ),
    )
    id: int | None = Field(default=None, primary_key=True)
    content_hash: str = Field(max_length=64)
    engine_version: str = Field(max_length=20)
    # Which profile judged it: "" the built-in default, else the profile version's id.
    profile_key: str = Field(default="", max_length=20, sa_column_kwargs={"server_default": ""})
    verdict: str = Field(max_length=20)
    violations: int
    marginals: int
    body: dict = Field(sa_column=Column(JSON, nullable=False))
    created_at: datetime = _when()


class TrailEntry(SQLModel, table=True):
    """One action on one revision, hash-chained to the entry before it (app.signoff.chain).

    ``at`` is stored as the ISO text that was hashed, and ``detail`` as canonical JSON text, so
    the hash recomputes byte for byte on SQLite and PostgreSQL alike. ``seq`` is the primary
    key: two writers cannot both append the same position."""

    __tablename__ = "trail_entry"
    seq: int = Field(primary_key=True, sa_column_kwargs={"autoincrement": False})
    revision_id: int = Field(foreign_key="revision.id", index=True)
    user_name: str = Field(max_length=80)
    role: str = Field(max_length=20)
    at: str = Field(max_length=40)
    action: str = Field(max_length=20)
    content_hash: str = Field(max_length=64)
    report_hash: str = Field(max_length=64)
    meaning: str = Field(max_length=500)
    detail: str = Field(sa_type=Text)
    prev_hash: str = Field(max_length=64)
    hash: str = Field(max_length=64)
    # HMAC-SHA256 of ``hash`` under the trail key, which is never stored in the database
    # (app.signoff.chain.entry_mac). Not part of the hash: it vouches for it.
    mac: str | None = Field(default=None, max_length=64)


class TrailHead(SQLModel, table=True):
    """The last entry's (seq, hash), kept apart from the trail: cutting rows off the end shows.
    One row (id 1), created by the migration; its row lock serialises appends."""

    __tablename__ = "trail_head"
    id: int = Field(primary_key=True, sa_column_kwargs={"autoincrement": False})
    seq: int
    hash: str = Field(max_length=64)
    mac: str | None = Field(default=None, max_length=64)  # chain.head_mac under the trail key


class DataVersion(SQLModel, table=True):
    """A counter that database triggers bump on every change to what the trail verification
    reads (revisions, users, reports, channels, fixtures, trail entries), however the change is
    made. On SQLite the triggers bump this row; on PostgreSQL they take a value from the
    sequence data_version_seq instead (no row lock shared by every writer). It keys the cached
    verification the printed record shows (services/trail.cached_verification)."""

    __tablename__ = "data_version"
    id: int = Field(primary_key=True, sa_column_kwargs={"autoincrement": False})
    n: int = 0


class ImmutableRevisionError(RuntimeError):
    pass


@event.listens_for(DeratingProfileVersion, "before_update")
def _guard_profile_version(mapper, connection, target):  # noqa: ARG001
    raise ImmutableRevisionError("a profile version is never changed; save a new version instead")


@event.listens_for(DeratingProfileVersion, "before_delete")
def _guard_profile_version_delete(mapper, connection, target):  # noqa: ARG001
    raise ImmutableRevisionError("a profile version is never deleted")


# A draft's document may be replaced by its author (content_hash follows it); the state moves
# through the workflow. Anything else about a saved revision never changes.
_STATE_ONLY = {"state"}
_DRAFT_REPLACEABLE = {"state", "document", "content_hash", "change_note", "source", "profile_version_id"}


@event.listens_for(Revision, "before_update")
def _guard_revision(mapper, connection, target):  # noqa: ARG001
    state = inspect(target)
    changed = {attr.key for attr in state.attrs if attr.history.has_changes()}
    was = state.attrs.state.history.deleted
    previous_state = was[0] if was else target.state
    allowed = _DRAFT_REPLACEABLE if previous_state == "draft" else _STATE_ONLY
    if not changed <= allowed:
        raise ImmutableRevisionError(
            f"a saved revision cannot be changed ({', '.join(sorted(changed - allowed))}); "
            "save a new revision instead"
        )
    if "document" in changed and target.content_hash != sha256_hex(target.document):
        raise ImmutableRevisionError("a replaced document needs its new content_hash")
