"""Home, fixture and channel pages, and creating fixtures and channels."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Query, Request
from markupsafe import Markup

from ..deps import DB, DbRoute, FixtureEditor, PostedForm, Viewer
from ..paging import MAX_PAGE, Page
from ..services import fixtures, profiles, queues
from ..services.errors import InputProblems
from ..templating import Kept, kept_response, redirect_done, render, viewer_key

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _overview_html(request: Request, db, page: Page) -> Markup:
    """One page of the fixtures list, rendered once per page and overview version (see
    fixtures.overview_version)."""

    def build():
        template = request.app.state.templates.get_template("partials/_overview.html")
        return Markup(template.render(overview=fixtures.overview(db, limit=page.size, offset=page.offset)))

    key = ("home", page.number, page.size, *fixtures.overview_version(db))
    return request.app.state.fragments.kept(key, build, db=db)


def _fragment(request: Request, db, key: tuple, build):
    """A rendered piece of a page that is the same for everyone who looks, kept until the data
    version moves (every change to fixtures, channels, revisions, reports, the trail and accounts
    bumps it, by database triggers) or the engine version changes; ``key`` holds the version read
    on ``db`` before the piece is built."""
    return request.app.state.fragments.kept(key, build, db=db)


def _channels_html(request: Request, db, fixture_id: int) -> Markup:
    def build():
        [(_, channels)] = fixtures.overview(db, fixture_id)
        template = request.app.state.templates.get_template("partials/_channel_table.html")
        return Markup(template.render(channels=channels))

    return _fragment(request, db, ("fixture-channels", fixture_id, *fixtures.overview_version(db)), build)


def _queues(request: Request, db, user) -> queues.Queues:
    """The person's queues, kept until anything is added to the trail (every hand-in, send-back,
    sign-off and save appends an entry, so the overview version moves with them)."""
    key = ("queues", user.id, user.role, *fixtures.overview_version(db))
    return request.app.state.fragments.kept(key, lambda: queues.queues_for(db, user), db=db)


def _home_page(request: Request, db, number: int) -> Page:
    return Page.of(number, request.app.state.settings.page_size, fixtures.count_fixtures(db))


PageNumber = Annotated[int, Query(ge=1, le=MAX_PAGE, description="page number, from 1")]


@router.get("/")
def home(request: Request, db: DB, user: Viewer, page: PageNumber = 1):
    shown = _home_page(request, db, page)
    return render(
        request,
        "home.html",
        queues=_queues(request, db, user),
        overview_html=_overview_html(request, db, shown),
        page=shown,
        errors={},
        form={},
    )


@router.post("/fixtures")
def create_fixture(request: Request, db: DB, user: FixtureEditor, form: PostedForm):
    values = {k: str(form.get(k, "")) for k in ("name", "description")}
    try:
        fixture = fixtures.create_fixture(db, values["name"], values["description"])
    except InputProblems as exc:
        shown = _home_page(request, db, 1)
        return render(
            request,
            "home.html",
            status_code=exc.status_code,
            queues=_queues(request, db, user),
            overview_html=_overview_html(request, db, shown),
            page=shown,
            errors=dict(exc.problems),
            form=values,
        )
    return redirect_done(request, f"/fixtures/{fixture.id}", f"Fixture “{fixture.name}” added.")


def _profile_context(db, fixture) -> dict:
    """The fixture's default derating profile and the choices for it."""
    summaries = profiles.list_profiles(db)
    current = next((s for s in summaries if s.profile.id == fixture.default_profile_id), None)
    return {"profile_choices": summaries, "default_profile": current}


@router.get("/fixtures/{fixture_id}")
async def fixture_page(request: Request, user: Viewer, fixture_id: int, profile_saved: bool = False):
    """Kept whole per viewer and data version (the fixture, its channels and the derating
    profiles all bump it)."""

    def build(db) -> Kept:
        fixture = fixtures.get_fixture(db, fixture_id)
        return Kept.of(
            render(
                request,
                "fixture.html",
                fixture=fixture,
                channels_html=_channels_html(request, db, fixture_id),
                errors={},
                form={},
                profile_saved=profile_saved,
                **_profile_context(db, fixture),
            )
        )

    key = ("fixture-page", fixture_id, profile_saved, *viewer_key(request, user))
    return await kept_response(request, key, build)


@router.post("/fixtures/{fixture_id}/channels")
def create_channel(request: Request, db: DB, user: FixtureEditor, fixture_id: int, form: PostedForm):
    values = {k: str(form.get(k, "")) for k in ("name", "load")}
    mains = form.get("mains_load") in ("on", "true", "1")
    try:
        channel = fixtures.create_channel(db, fixture_id, values["name"], values["load"], mains)
    except InputProblems as exc:
        fixture = fixtures.get_fixture(db, fixture_id)
        return render(
            request,
            "fixture.html",
            status_code=exc.status_code,
            fixture=fixture,
            channels_html=_channels_html(request, db, fixture_id),
            errors=dict(exc.problems),
            form=values,
            **_profile_context(db, fixture),
        )
    return redirect_done(request, f"/channels/{channel.id}", f"Channel “{channel.name}” added.")


def channel_context(request: Request, db, channel_id: int, number: int = 1) -> dict:
    """The channel page: the channel, its fixture, and one page of its history, newest first."""
    channel = fixtures.get_channel(db, channel_id)
    version = fixtures.overview_version(db)
    total = _fragment(
        request,
        db,
        ("revision-count", channel_id, *version),
        lambda: fixtures.count_revisions(db, channel_id),
    )
    page = Page.of(number, request.app.state.settings.page_size, total)

    def build():
        template = request.app.state.templates.get_template("partials/_revision_history.html")
        history = fixtures.history(db, channel_id, limit=page.size, offset=page.offset)
        return Markup(template.render(history=history))

    return {
        "channel": channel,
        "fixture": fixtures.get_fixture(db, channel.fixture_id),
        "history_html": _fragment(
            request, db, ("channel-history", channel_id, page.number, page.size, *version), build
        ),
        "page": page,
    }


@router.get("/channels/{channel_id}")
async def channel_page(request: Request, user: Viewer, channel_id: int, page: PageNumber = 1):
    """Kept whole per viewer, page number and data version."""

    def build(db) -> Kept:
        context = channel_context(request, db, channel_id, page)
        return Kept.of(render(request, "channel.html", **context, upload_errors=[]))

    return await kept_response(request, ("channel-page", channel_id, page, *viewer_key(request, user)), build)
