"""What routes receive: the database session, the signed-in user by role, and the CSRF check."""

from __future__ import annotations

import functools
import inspect
from collections.abc import AsyncIterator
from typing import Annotated

from fastapi import Depends, HTTPException, Request
from fastapi.routing import APIRoute
from sqlalchemy import bindparam, select
from sqlmodel import Session
from starlette.datastructures import FormData

from .models import User
from .permissions import ACTIONS, can, refusal
from .security import CSRF_FIELD, CSRF_HEADER

UNSAFE_METHODS = {"POST", "PUT", "PATCH", "DELETE"}


class SignInRequired(Exception):
    pass


class Forbidden(Exception):
    def __init__(self, message: str):
        super().__init__(message)
        self.message = message


class CsrfRefused(Exception):
    pass


# The one rule for database work (DEVELOPERS.md, "Database work runs in worker threads"): a
# route or dependency that touches the database is a plain `def`, so FastAPI runs it in its
# thread pool, and the connection it takes goes back to the pool before that thread call ends
# (DbRoute for routes, an explicit commit in current_user). get_db itself only makes the
# Session object (no I/O), so it may stay async. db.guard_event_loop() makes any database use
# on the event-loop thread raise instead of freezing the server.
async def get_db(request: Request) -> AsyncIterator[Session]:
    session = Session(request.app.state.engine, expire_on_commit=False)
    try:
        yield session
    finally:
        # Normally a no-op: DbRoute closed it in the route's own thread. On an error before the
        # route ran, nothing holds a connection either (current_user ends its transaction).
        session.close()


DB = Annotated[Session, Depends(get_db)]


class DbRoute(APIRoute):
    """A route whose plain-function endpoint closes the request's session in its own worker
    thread as it returns, so no pooled connection waits for another thread hop to go back.
    What a route returns is already rendered (templates render on construction; the API builds
    pydantic models), so nothing reads the closed session afterwards."""

    def __init__(self, path: str, endpoint, **kwargs):
        if not inspect.iscoroutinefunction(endpoint):
            endpoint = _closing_sessions(endpoint)
        super().__init__(path, endpoint, **kwargs)


def _closing_sessions(endpoint):
    @functools.wraps(endpoint)
    def run(*args, **kwargs):
        try:
            return endpoint(*args, **kwargs)
        finally:
            for value in kwargs.values():
                if isinstance(value, Session):
                    value.close()

    # FastAPI reads the signature (with its annotations resolved) from the wrapper.
    run.__signature__ = inspect.signature(endpoint, eval_str=True)
    return run


_USER_COLUMNS = User.__table__.c
_USER_BY_ID = select(
    _USER_COLUMNS.id,
    _USER_COLUMNS.name,
    _USER_COLUMNS.role,
    _USER_COLUMNS.active,
    _USER_COLUMNS.session_generation,
).where(_USER_COLUMNS.id == bindparam("user_id"))


def current_user(request: Request, db: DB) -> User | None:
    """The signed-in, active user, or None. Looked up on every request, on the request's own
    session, so deactivating an account, changing a role or ending the account's sessions (the
    session generation: sign-out, password change, deactivation) takes effect at once. The
    transaction ends here, so the connection is back in the pool while the request waits for its
    route's thread. The User returned is a read-only, transient copy (no password hash): never
    add it to a session."""
    session = request.state.session
    user = None
    if session.user_id is not None:
        try:
            row = db.execute(_USER_BY_ID, {"user_id": session.user_id}).first()
        finally:
            db.commit()
        if row is not None and row.active and row.session_generation == session.generation:
            user = User(
                id=row.id,
                name=row.name,
                role=row.role,
                active=True,
                password_hash="",
                session_generation=row.session_generation,
            )
    request.state.user = user
    return user


async def signed_in(user: Annotated[User | None, Depends(current_user)]) -> User:
    if user is None:
        raise SignInRequired()
    return user


def requires(action: str):
    """A dependency for routes: the signed-in user, if they may do ``action`` (app/web/permissions.py)."""
    if action not in ACTIONS:
        raise ValueError(f"unknown action {action!r}")

    async def check(user: Annotated[User, Depends(signed_in)]) -> User:
        if not can(user, action):
            raise Forbidden(refusal(user, action))
        return user

    return Annotated[User, Depends(check)]


Viewer = requires("read")
LibraryEditor = requires("edit_library")
FixtureEditor = requires("set_up_fixtures")
RevisionAuthor = requires("create_revision")
ProfileEditor = requires("edit_profiles")
UserManager = requires("manage_users")
MaybeUser = Annotated[User | None, Depends(current_user)]


def client_address(request: Request) -> str:
    """The peer address (behind a proxy, run uvicorn with --proxy-headers and
    --forwarded-allow-ips so this is the client's, not the proxy's)."""
    return request.client.host if request.client else "unknown"


def sign_in_wait(request: Request, name: str) -> int | None:
    """Seconds before this account or address may try to sign in again (None: now)."""
    return request.app.state.throttle.retry_after(name, client_address(request))


def refuse_sign_in(wait: int) -> HTTPException:
    return HTTPException(
        status_code=429,
        detail=f"too many failed sign-ins for this account or from this address; try again in {wait} s",
        headers={"Retry-After": str(wait)},
    )


def record_sign_in(request: Request, name: str, ok: bool) -> None:
    throttle = request.app.state.throttle
    if ok:
        throttle.succeeded(name)
    else:
        throttle.failed(name, client_address(request))


async def posted_form(request: Request) -> FormData:
    """The form a POST carries (parsed once per request; csrf_protect may have read it already).
    Async, and touching no database, so routes that use the database can stay plain functions."""
    return await request.form()


PostedForm = Annotated[FormData, Depends(posted_form)]


async def csrf_protect(request: Request) -> None:
    """Every POST, PUT, PATCH and DELETE carries the token: in the X-CSRF-Token header (htmx and
    the API) or the csrf_token form field (plain forms). Applied to the whole application."""
    if request.method not in UNSAFE_METHODS:
        return
    token = request.headers.get(CSRF_HEADER)
    if not token:
        content_type = request.headers.get("content-type", "")
        if content_type.startswith(("application/x-www-form-urlencoded", "multipart/form-data")):
            form = await request.form()
            value = form.get(CSRF_FIELD)
            token = value if isinstance(value, str) else None
    if not request.app.state.signer.csrf_valid(request.state.session, token):
        raise CsrfRefused()
