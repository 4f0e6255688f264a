"""Sign in and out. Both renew the session (a fresh nonce, so old CSRF tokens stop working)."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Form, Request
from fastapi.responses import RedirectResponse

from ..deps import DB, DbRoute, MaybeUser, Viewer, record_sign_in, sign_in_wait
from ..services import users
from ..templating import render

router = APIRouter(include_in_schema=False, route_class=DbRoute)


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
    wait = sign_in_wait(request, name)
    if wait is not None:
        response = render(
            request,
            "sign_in.html",
            status_code=429,
            next=_safe_next(next),
            name=name,
            error=f"Too many failed sign-ins for this account or from this address; try again in {wait} s.",
        )
        response.headers["Retry-After"] = str(wait)
        return response
    user = users.authenticate(db, name, password)
    record_sign_in(request, name, user is not None)
    if user is None:
        return render(
            request,
            "sign_in.html",
            status_code=401,
            next=_safe_next(next),
            name=name,
            error="That name and password do not match an active account.",
        )
    request.state.session = request.app.state.signer.new(user.id, user.session_generation)
    request.state.session_renewed = True
    return RedirectResponse(_safe_next(next), status_code=303)


@router.post("/sign-out")
def sign_out(request: Request, db: DB, user: Viewer):
    """Ends every session of the account, so a copied cookie stops working too."""
    users.end_sessions(db, user.id)
    request.state.session = request.app.state.signer.new()
    request.state.session_renewed = True
    return RedirectResponse("/sign-in", status_code=303)
