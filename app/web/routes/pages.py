"""Home, fixture and channel pages, and creating fixtures and channels."""

from __future__ import annotations

from fastapi import APIRouter, Request
from markupsafe import Markup

from ..deps import DB, FixtureEditor, Viewer
from ..services import fixtures, profiles, queues
from ..services.errors import InputProblems
from ..templating import redirect_done, render

router = APIRouter(include_in_schema=False)


def _overview_html(request: Request, db) -> Markup:
    """The fixtures list, rendered once per overview version (see fixtures.overview_version)."""
    key = ("home", *fixtures.overview_version(db))
    html = request.app.state.fragments.get(key)
    if html is None:
        template = request.app.state.templates.get_template("partials/_overview.html")
        html = Markup(template.render(overview=fixtures.overview(db)))
        request.app.state.fragments.put(key, html)
    return html


def _queues(request: Request, db, user) -> queues.Queues:
    """The person's queues, kept until anything is added to the trail (every hand-in, send-back,
    sign-off and save appends an entry, so the overview version moves with them)."""
    key = ("queues", user.id, user.role, fixtures.overview_version(db))
    found = request.app.state.fragments.get(key)
    if found is None:
        found = queues.queues_for(db, user)
        request.app.state.fragments.put(key, found)
    return found


@router.get("/")
def home(request: Request, db: DB, user: Viewer):
    return render(
        request,
        "home.html",
        queues=_queues(request, db, user),
        overview_html=_overview_html(request, db),
        errors={},
        form={},
    )


@router.post("/fixtures")
async def create_fixture(request: Request, db: DB, user: FixtureEditor):
    form = await request.form()
    values = {k: str(form.get(k, "")) for k in ("name", "description")}
    try:
        fixture = fixtures.create_fixture(db, values["name"], values["description"])
    except InputProblems as exc:
        return render(
            request,
            "home.html",
            status_code=exc.status_code,
            overview_html=_overview_html(request, db),
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
def fixture_page(request: Request, db: DB, user: Viewer, fixture_id: int, profile_saved: bool = False):
    [(fixture, channels)] = fixtures.overview(db, fixture_id)
    return render(
        request,
        "fixture.html",
        fixture=fixture,
        channels=channels,
        errors={},
        form={},
        profile_saved=profile_saved,
        **_profile_context(db, fixture),
    )


@router.post("/fixtures/{fixture_id}/channels")
async def create_channel(request: Request, db: DB, user: FixtureEditor, fixture_id: int):
    form = await request.form()
    values = {k: str(form.get(k, "")) for k in ("name", "load")}
    mains = form.get("mains_load") in ("on", "true", "1")
    try:
        channel = fixtures.create_channel(db, fixture_id, values["name"], values["load"], mains)
    except InputProblems as exc:
        [(fixture, channels)] = fixtures.overview(db, fixture_id)
        return render(
            request,
            "fixture.html",
            status_code=exc.status_code,
            fixture=fixture,
            channels=channels,
            errors=dict(exc.problems),
            form=values,
            **_profile_context(db, fixture),
        )
    return redirect_done(request, f"/channels/{channel.id}", f"Channel “{channel.name}” added.")


@router.get("/channels/{channel_id}")
def channel_page(request: Request, db: DB, user: Viewer, channel_id: int):
    channel = fixtures.get_channel(db, channel_id)
    return render(
        request,
        "channel.html",
        channel=channel,
        fixture=fixtures.get_fixture(db, channel.fixture_id),
        history=fixtures.history(db, channel_id),
        upload_errors=[],
    )
