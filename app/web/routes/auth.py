"""Sign in and out. Both renew the session (a fresh nonce, so old CSRF tokens stop working)."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Form, Request
from fastapi.responses import RedirectResponse

from ..deps import DB, MaybeUser, Viewer
from ..services import users
from ..templating import render

router = APIRouter(include_in_schema=False)


def _safe_next(target: str) -> str:
    return target if target.startswith("/") and not target.startswith("//") else "/"


@router.get("/sign-in")
def sign_in_page(request: Request, user: MaybeUser, next: str = "/"):
    if user is not None:
        return RedirectResponse(_safe_next(next), status_code=303)
    return render(request, "sign_in.html", next=_safe_next(next), error=None, name="")


@router.post("/sign-in")
def sign_in(
    request: Request,
    db: DB,
    name: Annotated[str, Form()] = "",
    password: Annotated[str, Form()] = "",
    next: Annotated[str, Form()] = "/",
):
    user = users.authenticate(db, name, password)
    if user is None:
        return render(
            request,
            "sign_in.html",
            status_code=401,
            next=_safe_next(next),
            name=name,
            error="That name and password do not match an active account.",
        )
    request.state.session = request.app.state.signer.new(user.id)
    request.state.session_renewed = True
    return RedirectResponse(_safe_next(next), status_code=303)


@router.post("/sign-out")
def sign_out(request: Request, user: Viewer):
    request.state.session = request.app.state.signer.new()
    request.state.session_renewed = True
    return RedirectResponse("/sign-in", status_code=303)
