"""JSON API under /api/v1. Same services and permissions as the pages; bad input is a 422 whose
detail lists each problem with its field path (loc) and what is allowed (msg)."""

from __future__ import annotations

from datetime import UTC, datetime
from typing import Annotated, Any

from fastapi import APIRouter, Body, Query, Request, Response
from pydantic import AfterValidator, BaseModel, Field, TypeAdapter

from app.engine import ENGINE_VERSION
from app.engine.design import PART_DETAILS

from ..deps import (
    DB,
    DbRoute,
    FixtureEditor,
    LibraryEditor,
    MaybeUser,
    RevisionAuthor,
    Viewer,
    record_sign_in,
    refuse_sign_in,
    sign_in_wait,
)
from ..paging import MAX_OFFSET
from ..services import fixtures, parts, review, revisions, users
from ..services.errors import InputProblems
from ..services.reports import evaluate_document, tighten_for, yield_for
from ..services.revisions import validate_document
from ..templating import Kept, kept_response


class ErrorItem(BaseModel):
    loc: list[str | int] = Field(description="where: body, path, query, header, or a field path")
    msg: str
    type: str


class ErrorOut(BaseModel):
    """Every error the API gives has this shape (app/web/error_handling.py)."""

    detail: list[ErrorItem]


_ERRORS = {
    status: {"model": ErrorOut, "description": description}
    for status, description in (
        (401, "sign in first"),
        (403, "not allowed for this role, or the CSRF token is missing or stale"),
        (404, "not found"),
        (409, "conflicts with what is stored (a name taken, a state that does not allow it)"),
        (413, "the request is too large"),
        (429, "too many requests; see Retry-After"),
    )
}
router = APIRouter(tags=["api"], responses=_ERRORS, route_class=DbRoute)


def _utc(value: datetime) -> datetime:
    """Every timestamp the API gives is UTC with its offset. SQLite hands back naive values of
    what was stored as UTC; PostgreSQL hands back aware ones, in the session's zone."""
    return value.replace(tzinfo=UTC) if value.tzinfo is None else value.astimezone(UTC)


UtcDatetime = Annotated[datetime, AfterValidator(_utc)]


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
    wait = sign_in_wait(request, body.name)
    if wait is not None:
        raise refuse_sign_in(wait)
    user = users.authenticate(db, body.name, body.password)
    record_sign_in(request, body.name, user is not None)
    if user is None:
        raise InputProblems([("password", "that name and password do not match an active account")], 401)
    request.state.session = request.app.state.signer.new(user.id, user.session_generation)
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
    maker_part: str = ""
    package: str = ""
    datasheet: str = Field("", description="link to the datasheet: an http:// or https:// URL, or empty")


class PartUpdate(BaseModel):
    name: str
    params: dict[str, str | float | int | None | dict[str, str | float | int | None]] = Field(
        default_factory=dict
    )
    notes: str = ""
    maker_part: str | None = Field(None, description="left out: unchanged")
    package: str | None = Field(None, description="left out: unchanged")
    datasheet: str | None = Field(None, description="left out: unchanged; else an http(s) URL or empty")


class PartOut(BaseModel):
    id: int
    kind: str
    name: str
    params: dict[str, Any]
    notes: str
    maker_part: str
    package: str
    datasheet: str
    archived: bool
    updated_at: UtcDatetime


def _part(p) -> PartOut:
    return PartOut(
        **p.model_dump(
            include={"id", "kind", "name", "params", "notes", "archived", "updated_at", *PART_DETAILS}
        )
    )


@router.get("/parts", response_model=list[PartOut])
async def list_parts(
    request: Request, user: Viewer, kind: str | None = None, q: str = "", archived: bool = False
):
    """Parts by kind and name (at most 200), the archived ones too with archived=true."""

    def build(db) -> Kept:
        found = parts.search_parts(db, kind, q, include_archived=archived)
        return _json(list[PartOut], [_part(p) for p in found])

    return await kept_response(request, ("api-parts", kind, q, archived), build)


@router.post("/parts", response_model=PartOut, status_code=201)
def create_part(db: DB, user: LibraryEditor, body: PartIn):
    details = {key: getattr(body, key) for key in PART_DETAILS}
    return _part(parts.create_part(db, body.kind, body.name, body.params, body.notes, details))


@router.get("/parts/{part_id}", response_model=PartOut)
def get_part(db: DB, user: Viewer, part_id: int):
    return _part(parts.get_part(db, part_id))


@router.put("/parts/{part_id}", response_model=PartOut)
def update_part(db: DB, user: LibraryEditor, part_id: int, body: PartUpdate):
    part = parts.get_part(db, part_id)
    details = {
        key: getattr(part, key) if getattr(body, key) is None else getattr(body, key) for key in PART_DETAILS
    }
    return _part(parts.update_part(db, part_id, body.name, body.params, body.notes, details))


@router.delete("/parts/{part_id}")
def remove_part(db: DB, user: LibraryEditor, part_id: int) -> dict[str, str]:
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
    created_at: UtcDatetime
    author: str
    change_note: str
    content_hash: str
    verdict: str | None
    violations: int | None
    marginals: int | None
    state: str = Field(description="review state: draft, in_review, returned, signed_off, superseded")
    signed_off: bool = Field(description="signed off (a sign-off stays when the revision is superseded)")
    approved_baseline: bool = Field(description="the channel's newest signed-off revision")
    waivers: int = Field(description="findings accepted with a waiver")


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


Limit = Annotated[
    int | None,
    Query(ge=1, description="how many to return (default: the page size setting; at most api_max_limit)"),
]
Offset = Annotated[int, Query(ge=0, le=MAX_OFFSET, description="how many to skip")]


def _limit(request: Request, limit: int | None) -> int:
    settings = request.app.state.settings
    if limit is None:
        return settings.page_size
    if limit > settings.api_max_limit:
        raise InputProblems([("limit", f"at most {settings.api_max_limit}")])
    return limit


def _json(model: Any, value: Any, response: Response | None = None) -> Kept:
    """A JSON answer serialised once by its model's TypeAdapter (kept answers are sent as these
    bytes: FastAPI neither rebuilds nor re-validates them), with the paging headers."""
    body = Response(TypeAdapter(model).dump_json(value), media_type="application/json")
    if response is not None:
        body.headers.update({k: v for k, v in response.headers.items() if k in ("x-total-count", "link")})
    return Kept.of(body, "x-total-count", "link")


def _link_next(request: Request, response: Response, limit: int, offset: int, total: int) -> None:
    """Paging headers: X-Total-Count, and a Link to the next page (RFC 8288) while there is one."""
    response.headers["X-Total-Count"] = str(total)
    if offset + limit < total:
        url = request.url.include_query_params(limit=limit, offset=offset + limit)
        response.headers["Link"] = f'<{url.path}?{url.query}>; rel="next"'


@router.get("/fixtures", response_model=list[FixtureOut])
async def list_fixtures(request: Request, user: Viewer, limit: Limit = None, offset: Offset = 0):
    """Fixtures by name, a page at a time (limit, offset), each channel with its latest
    revision's status. X-Total-Count gives the number of fixtures; a Link header with rel="next"
    points to the next page while there is one. The same for everyone who looks: kept per query
    and data version (database triggers bump it on every change)."""
    limit = _limit(request, limit)

    def build(db) -> Kept:
        out = Response()
        _link_next(request, out, limit, offset, fixtures.count_fixtures(db))
        listed = fixtures.overview(db, limit=limit, offset=offset)
        return _json(list[FixtureOut], [_fixture(f, channels) for f, channels in listed], out)

    return await kept_response(request, ("api-fixtures", limit, offset, request.url.query), build)


@router.post("/fixtures", response_model=FixtureOut, status_code=201)
def create_fixture(db: DB, user: FixtureEditor, body: FixtureIn):
    return _fixture(fixtures.create_fixture(db, body.name, body.description), [])


@router.get("/fixtures/{fixture_id}", response_model=FixtureOut)
def get_fixture(db: DB, user: Viewer, fixture_id: int):
    [(fixture, channels)] = fixtures.overview(db, fixture_id)
    return _fixture(fixture, channels)


@router.post("/fixtures/{fixture_id}/channels", response_model=ChannelOut, status_code=201)
def create_channel(db: DB, user: FixtureEditor, fixture_id: int, body: ChannelIn):
    return _channel(fixtures.create_channel(db, fixture_id, body.name, body.load, body.mains_load))


class ChannelDetail(ChannelOut):
    revisions: list[RevisionSummary]


@router.get("/channels/{channel_id}", response_model=ChannelDetail)
async def get_channel(
    request: Request,
    user: Viewer,
    channel_id: int,
    limit: Limit = None,
    offset: Offset = 0,
):
    """The channel with its latest revision and a page of its revisions, newest first (limit,
    offset; X-Total-Count and a Link rel="next" header as for the fixture list)."""
    limit = _limit(request, limit)

    def build(db) -> Kept:
        channel = fixtures.get_channel(db, channel_id)
        history = fixtures.history(db, channel_id, limit=limit, offset=offset)
        latest = (
            history[0]
            if history and offset == 0
            else next(iter(fixtures.history(db, channel_id, limit=1)), None)
        )
        base = _channel(channel, latest)
        out = Response()
        _link_next(request, out, limit, offset, fixtures.count_revisions(db, channel_id))
        detail = ChannelDetail(**base.model_dump(), revisions=[_summary(r) for r in history])
        return _json(ChannelDetail, detail, out)

    key = ("api-channel", channel_id, limit, offset, request.url.query)
    return await kept_response(request, key, build)


# ---------------------------------------------------------------- revisions and reports


class RevisionIn(BaseModel):
    document: dict[str, Any] = Field(description="a design file, format clampdown-design/1")
    change_note: str = ""


class RevisionOut(BaseModel):
    id: int
    channel_id: int
    label: str
    created_at: UtcDatetime
    author: str
    change_note: str
    source: str
    content_hash: str
    engine_version: str
    verdict: str
    state: str = Field(description="review state: draft, in_review, returned, signed_off, superseded")
    signed_off: bool = Field(description="signed off (a sign-off stays when the revision is superseded)")
    approved_baseline: bool = Field(description="the channel's newest signed-off revision")
    waivers: int = Field(description="findings accepted with a waiver")
    document: dict[str, Any]


def _revision(db, view) -> RevisionOut:
    r = view.revision
    baseline = review.approved_baseline(db, r.channel_id)
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
        state=r.state,
        signed_off=bool(review.signed_off_ids(db, [r.id])),
        approved_baseline=baseline is not None and baseline.id == r.id,
        waivers=len(review.waived_rules(db, r.id)),
        document=r.document,
    )


@router.post("/channels/{channel_id}/revisions", response_model=RevisionOut, status_code=201)
def create_revision(db: DB, user: RevisionAuthor, channel_id: int, body: RevisionIn):
    """Store a design file as the channel's next revision (immutable from then on)."""
    revision = revisions.create_revision(db, channel_id, body.document, user, body.change_note, source="api")
    return _revision(db, revisions.revision_view(db, revision.id))


@router.get("/revisions/{revision_id}", response_model=RevisionOut)
def get_revision(db: DB, user: Viewer, revision_id: int):
    return _revision(db, revisions.revision_view(db, revision_id))


@router.get("/revisions/{revision_id}/report")
def get_report(db: DB, user: Viewer, revision_id: int) -> dict[str, Any]:
    """The report (clampdown-report/1) for the revision, from the cache for this engine version."""
    return revisions.revision_view(db, revision_id).report.body


@router.get("/revisions/{revision_id}/tighten")
def get_tighten(request: Request, db: DB, user: Viewer, revision_id: int) -> list[dict[str, Any]]:
    """What to tighten: per rule with a margin, each tolerance that moves it and by how much when
    halved (margins as fractions of the derated limit), tightest rule first."""
    r = revisions.get_revision(db, revision_id)
    key = ("tighten", r.content_hash, r.profile_version_id, ENGINE_VERSION)
    return request.app.state.fragments.kept(key, lambda: tighten_for(db, r))


@router.get("/revisions/{revision_id}/yield")
def get_yield(db: DB, user: Viewer, revision_id: int, samples: int = 10_000, seed: int = 1) -> dict[str, Any]:
    """Monte Carlo yield of ``samples`` seeded draws (at most 100 000): per rule the fraction past
    its rating and past its derated limit with 95 % Wilson intervals, and the overall yield."""
    return yield_for(db, revisions.get_revision(db, revision_id), samples, seed)


@router.post("/evaluate")
def evaluate(user: Viewer, document: Annotated[Any, Body(description="a design file")]) -> dict[str, Any]:
    """Stateless: the same report `clampdown check --format json` prints. Nothing is stored."""
    validate_document(document)
    return evaluate_document(document)


@router.get("/engine")
def engine_info(user: Viewer) -> dict[str, str]:
    return {"engine_version": ENGINE_VERSION}
