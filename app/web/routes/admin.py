"""Admins manage accounts."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse

from ..deps import DB, DbRoute, PostedForm, UserManager
from ..models import ROLES
from ..services import users
from ..services.errors import InputProblems
from ..templating import render

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _page(request, db, errors=None, form=None, status_code=200):
    return render(
        request,
        "users.html",
        status_code=status_code,
        users=users.list_users(db),
        roles=ROLES,
        errors=errors or {},
        form=form or {},
    )


@router.get("/admin/users")
def users_page(request: Request, db: DB, user: UserManager):
    return _page(request, db)


@router.post("/admin/users")
def create_user(request: Request, db: DB, user: UserManager, form: PostedForm):
    values = {k: str(form.get(k, "")) for k in ("name", "password", "role")}
    try:
        users.create_user(db, values["name"], values["password"], values["role"])
    except InputProblems as exc:
        return _page(request, db, dict(exc.problems), {**values, "password": ""}, status_code=exc.status_code)
    return RedirectResponse("/admin/users", status_code=303)


@router.post("/admin/users/{user_id}")
def update_user(request: Request, db: DB, user: UserManager, user_id: int, form: PostedForm):
    try:
        users.update_user(db, user_id, str(form.get("role", "")), form.get("active") == "on", user.id)
    except InputProblems as exc:
        return _page(request, db, dict(exc.problems), status_code=exc.status_code)
    return RedirectResponse("/admin/users", status_code=303)
