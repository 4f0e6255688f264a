"""JSON API under /api/v1. Same services and permissions as the pages; bad input is a 422 whose
detail lists each problem with its field path (loc) and what is allowed (msg)."""

from __future__ import annotations

from datetime import datetime
from typing import Annotated, Any

from fastapi import APIRouter, Body, Request
from pydantic import BaseModel, Field

from app.engine import ENGINE_VERSION

from ..deps import DB, Designer, MaybeUser, Viewer
from ..services import fixtures, parts, revisions, users
from ..services.errors import InputProblems
from ..services.reports import evaluate_document
from ..services.revisions import validate_document

router = APIRouter(tags=["api"])


# ---------------------------------------------------------------- session


class SessionOut(BaseModel):
    user: str | None
    role: str | None
    csrf_token: str = Field(description="send as the X-CSRF-Token header on POST, PUT and DELETE")


class SignIn(BaseModel):
    name: str
    password: str


def _session_out(request: Request, user) -> SessionOut:
    token = request.app.state.signer.csrf_token(request.state.session)
    return SessionOut(user=user.name if user else None, role=user.role if user else None, csrf_token=token)


@router.get("/session", response_model=SessionOut)
def session_info(request: Request, user: MaybeUser):
    """Who is signed in, and the CSRF token that goes with this session cookie."""
    return _session_out(request, user)


@router.post("/session", response_model=SessionOut)
def sign_in(request: Request, db: DB, body: SignIn):
    """Sign in; the session is renewed, so take the new csrf_token from the answer."""
    user = users.authenticate(db, body.name, body.password)
    if user is None:
        raise InputProblems([("password", "that name and password do not match an active account")], 401)
    request.state.session = request.app.state.signer.new(user.id)
    request.state.session_renewed = True
    return _session_out(request, user)


# ---------------------------------------------------------------- parts


class PartIn(BaseModel):
    kind: str
    name: str
    params: dict[str, str | float | int | None | dict[str, str | float | int | None]] = Field(
        default_factory=dict
    )
    notes: str = ""


class PartUpdate(BaseModel):
    name: str
    params: dict[str, str | float | int | None | dict[str, str | float | int | None]] = Field(
        default_factory=dict
    )
    notes: str = ""


class PartOut(BaseModel):
    id: int
    kind: str
    name: str
    params: dict[str, Any]
    notes: str
    archived: bool
    updated_at: datetime


def _part(p) -> PartOut:
    return PartOut(
        **p.model_dump(include={"id", "kind", "name", "params", "notes", "archived", "updated_at"})
    )


@router.get("/parts", response_model=list[PartOut])
def list_parts(db: DB, user: Viewer, kind: str | None = None, q: str = "", archived: bool = False):
    return [_part(p) for p in parts.search_parts(db, kind, q, include_archived=archived)]


@router.post("/parts", response_model=PartOut, status_code=201)
def create_part(db: DB, user: Designer, body: PartIn):
    return _part(parts.create_part(db, body.kind, body.name, body.params, body.notes))


@router.get("/parts/{part_id}", response_model=PartOut)
def get_part(db: DB, user: Viewer, part_id: int):
    return _part(parts.get_part(db, part_id))


@router.put("/parts/{part_id}", response_model=PartOut)
def update_part(db: DB, user: Designer, part_id: int, body: PartUpdate):
    return _part(parts.update_part(db, part_id, body.name, body.params, body.notes))


@router.delete("/parts/{part_id}")
def remove_part(db: DB, user: Designer, part_id: int) -> dict[str, str]:
    """Deletes a part no revision used; archives one that a revision used."""
    return {"outcome": parts.remove_part(db, part_id)}


# ---------------------------------------------------------------- fixtures and channels


class FixtureIn(BaseModel):
    name: str
    description: str = ""


class ChannelIn(BaseModel):
    name: str
    load: str = ""
    mains_load: bool = False


class RevisionSummary(BaseModel):
    id: int
    label: str
    created_at: datetime
    author: str
    change_note: str
    content_hash: str
    verdict: str | None
    violations: int | None
    marginals: int | None


class ChannelOut(BaseModel):
    id: int
    fixture_id: int
    name: str
    load: str
    mains_load: bool
    latest: RevisionSummary | None = None


class FixtureOut(BaseModel):
    id: int
    name: str
    description: str
    channels: list[ChannelOut] = []


def _summary(row) -> RevisionSummary | None:
    if row is None:
        return None
    return RevisionSummary(**{k: getattr(row, k) for k in RevisionSummary.model_fields})


def _channel(c, latest=None) -> ChannelOut:
    return ChannelOut(
        id=c.id,
        fixture_id=c.fixture_id,
        name=c.name,
        load=c.load,
        mains_load=c.mains_load,
        latest=_summary(latest),
    )


def _fixture(f, channels) -> FixtureOut:
    return FixtureOut(
        id=f.id,
        name=f.name,
        description=f.description,
        channels=[_channel(s.channel, s.latest) for s in channels],
    )


@router.get("/fixtures", response_model=list[FixtureOut])
def list_fixtures(db: DB, user: Viewer):
    """Every fixture, each channel with its latest revision's status."""
    return [_fixture(f, channels) for f, channels in fixtures.overview(db)]


@router.post("/fixtures", response_model=FixtureOut, status_code=201)
def create_fixture(db: DB, user: Designer, body: FixtureIn):
    return _fixture(fixtures.create_fixture(db, body.name, body.description), [])


@router.get("/fixtures/{fixture_id}", response_model=FixtureOut)
def get_fixture(db: DB, user: Viewer, fixture_id: int):
    [(fixture, channels)] = fixtures.overview(db, fixture_id)
    return _fixture(fixture, channels)


@router.post("/fixtures/{fixture_id}/channels", response_model=ChannelOut, status_code=201)
def create_channel(db: DB, user: Designer, fixture_id: int, body: ChannelIn):
    return _channel(fixtures.create_channel(db, fixture_id, body.name, body.load, body.mains_load))


class ChannelDetail(ChannelOut):
    revisions: list[RevisionSummary]


@router.get("/channels/{channel_id}", response_model=ChannelDetail)
def get_channel(db: DB, user: Viewer, channel_id: int):
    channel = fixtures.get_channel(db, channel_id)
    history = fixtures.history(db, channel_id)
    base = _channel(channel, history[0] if history else None)
    return ChannelDetail(**base.model_dump(), revisions=[_summary(r) for r in history])


# ---------------------------------------------------------------- revisions and reports


class RevisionIn(BaseModel):
    document: dict[str, Any] = Field(description="a design file, format clampdown-design/1")
    change_note: str = ""


class RevisionOut(BaseModel):
    id: int
    channel_id: int
    label: str
    created_at: datetime
    author: str
    change_note: str
    source: str
    content_hash: str
    engine_version: str
    verdict: str
    document: dict[str, Any]


def _revision(view) -> RevisionOut:
    r = view.revision
    return RevisionOut(
        id=r.id,
        channel_id=r.channel_id,
        label=r.label,
        created_at=r.created_at,
        author=view.author.name,
        change_note=r.change_note,
        source=r.source,
        content_hash=r.content_hash,
        engine_version=view.report.engine_version,
        verdict=view.report.verdict,
        document=r.document,
    )


@router.post("/channels/{channel_id}/revisions", response_model=RevisionOut, status_code=201)
def create_revision(db: DB, user: Designer, channel_id: int, body: RevisionIn):
    """Store a design file as the channel's next revision (immutable from then on)."""
    revision = revisions.create_revision(db, channel_id, body.document, user, body.change_note, source="api")
    return _revision(revisions.revision_view(db, revision.id))


@router.get("/revisions/{revision_id}", response_model=RevisionOut)
def get_revision(db: DB, user: Viewer, revision_id: int):
    return _revision(revisions.revision_view(db, revision_id))


@router.get("/revisions/{revision_id}/report")
def get_report(db: DB, user: Viewer, revision_id: int) -> dict[str, Any]:
    """The report (clampdown-report/1) for the revision, from the cache for this engine version."""
    return revisions.revision_view(db, revision_id).report.body


@router.post("/evaluate")
def evaluate(user: Viewer, document: Annotated[Any, Body(description="a design file")]) -> dict[str, Any]:
    """Stateless: the same report `clampdown check --format json` prints. Nothing is stored."""
    validate_document(document)
    return evaluate_document(document)


@router.get("/engine")
def engine_info(user: Viewer) -> dict[str, str]:
    return {"engine_version": ENGINE_VERSION}
