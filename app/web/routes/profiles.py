"""Team derating profiles: the list, one profile with its versions, new profiles and versions,
and each fixture's default profile."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from app.engine.profile import FIGURES, PRESETS, figures_of

from ..deps import DB, DbRoute, PostedForm, ProfileEditor, Viewer
from ..services import fixtures, profiles
from ..services.errors import InputProblems
from ..templating import render

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _figure_values(form) -> dict[str, str]:
    return {key: str(form.get(key, "")) for key in FIGURES}


def _list(request, db, errors=None, form=None, status_code=200):
    return render(
        request,
        "profiles.html",
        status_code=status_code,
        summaries=profiles.list_profiles(db),
        presets={name: figures_of(p) for name, p in PRESETS.items()},
        figures=FIGURES,
        errors=errors or {},
        form=form or {},
    )


@router.get("/profiles")
def profiles_page(request: Request, db: DB, user: Viewer):
    return _list(request, db)


@router.post("/profiles")
def create_profile(request: Request, db: DB, user: ProfileEditor, form: PostedForm):
    values = {
        "name": str(form.get("name", "")),
        "preset": str(form.get("preset", "general")),
        "note": str(form.get("note", "")),
    }
    figures = _figure_values(form)
    try:
        profile = profiles.create_profile(db, user, values["name"], values["preset"], figures, values["note"])
    except InputProblems as exc:
        return _list(request, db, dict(exc.problems), {**values, **figures}, status_code=422)
    return RedirectResponse(f"/profiles/{profile.id}?saved=1", status_code=303)


def _page(request, db, profile_id, errors=None, form=None, status_code=200, saved=False):
    profile = profiles.get_profile(db, profile_id)
    history = profiles.versions(db, profile_id)
    return render(
        request,
        "profile.html",
        status_code=status_code,
        profile=profile,
        history=history,
        latest=history[0][0],
        figures=FIGURES,
        fixtures_using=[f for f in fixtures.list_fixtures(db) if f.default_profile_id == profile_id],
        errors=errors or {},
        form=form or {},
        saved=saved,
    )


@router.get("/profiles/{profile_id}")
def profile_page(request: Request, db: DB, user: Viewer, profile_id: int, saved: bool = False):
    return _page(request, db, profile_id, saved=saved)


@router.post("/profiles/{profile_id}/versions")
def add_version(request: Request, db: DB, user: ProfileEditor, profile_id: int, form: PostedForm):
    figures = _figure_values(form)
    note = str(form.get("note", ""))
    try:
        profiles.add_version(db, user, profile_id, figures, note)
    except InputProblems as exc:
        return _page(request, db, profile_id, dict(exc.problems), {**figures, "note": note}, status_code=422)
    return RedirectResponse(f"/profiles/{profile_id}?saved=1", status_code=303)


@router.post("/fixtures/{fixture_id}/profile")
def set_fixture_profile(request: Request, db: DB, user: ProfileEditor, fixture_id: int, form: PostedForm):
    chosen = str(form.get("profile", "")).strip()
    if chosen and not chosen.isdigit():
        raise InputProblems([("profile", f"{chosen!r} is not a profile id; choose one from the list")])
    profiles.set_fixture_default(db, fixture_id, int(chosen) if chosen else None)
    return RedirectResponse(f"/fixtures/{fixture_id}?profile_saved=1", status_code=303)
