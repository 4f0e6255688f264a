"""Home, fixture and channel pages, and creating fixtures and channels."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse
from markupsafe import Markup

from ..deps import DB, DbRoute, Designer, PostedForm, Viewer
from ..services import fixtures
from ..services.errors import InputProblems
from ..templating import render

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _overview_html(request: Request, db) -> Markup:
    """The fixtures list, rendered once per overview version (see fixtures.overview_version)."""
    key = ("home", fixtures.overview_version(db))
    html = request.app.state.fragments.get(key)
    if html is None:
        template = request.app.state.templates.get_template("partials/_overview.html")
        html = Markup(template.render(overview=fixtures.overview(db)))
        request.app.state.fragments.put(key, html)
    return html


@router.get("/")
def home(request: Request, db: DB, user: Viewer):
    return render(request, "home.html", overview_html=_overview_html(request, db), errors={}, form={})


@router.post("/fixtures")
def create_fixture(request: Request, db: DB, user: Designer, form: PostedForm):
    values = {k: str(form.get(k, "")) for k in ("name", "description")}
    try:
        fixture = fixtures.create_fixture(db, values["name"], values["description"])
    except InputProblems as exc:
        return render(
            request,
            "home.html",
            status_code=422,
            overview=fixtures.overview(db),
            errors=dict(exc.problems),
            form=values,
        )
    return RedirectResponse(f"/fixtures/{fixture.id}", status_code=303)


@router.get("/fixtures/{fixture_id}")
def fixture_page(request: Request, db: DB, user: Viewer, fixture_id: int):
    [(fixture, channels)] = fixtures.overview(db, fixture_id)
    return render(request, "fixture.html", fixture=fixture, channels=channels, errors={}, form={})


@router.post("/fixtures/{fixture_id}/channels")
def create_channel(request: Request, db: DB, user: Designer, fixture_id: int, form: PostedForm):
    values = {k: str(form.get(k, "")) for k in ("name", "load")}
    mains = form.get("mains_load") in ("on", "true", "1")
    try:
        channel = fixtures.create_channel(db, fixture_id, values["name"], values["load"], mains)
    except InputProblems as exc:
        [(fixture, channels)] = fixtures.overview(db, fixture_id)
        return render(
            request,
            "fixture.html",
            status_code=422,
            fixture=fixture,
            channels=channels,
            errors=dict(exc.problems),
            form=values,
        )
    return RedirectResponse(f"/channels/{channel.id}", status_code=303)


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
