"""What routes receive: the database session, the signed-in user by role, and the CSRF check."""

from __future__ import annotations

import functools
import inspect
from collections.abc import AsyncIterator
from typing import Annotated

from fastapi import Depends, HTTPException, Request
from fastapi.routing import APIRoute
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
# (DbRoute for routes; current_user uses a connection of its own and gives it back). get_db
# itself only makes the Session object (no I/O), so it may stay async. db.guard_event_loop()
# makes any database use on the event-loop thread raise instead of freezing the server.
async def get_db(request: Request) -> AsyncIterator[Session]:
    session = Session(request.app.state.engine, expire_on_commit=False)
    try:
        yield session
    finally:
        # Normally a no-op: DbRoute closed it in the route's own thread. On an error before the
        # route ran, nothing holds a connection either (current_user takes none from it).
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


_COPIES: dict[tuple, User] = {}


def _signed_in_copy(user_id: int, name: str, role: str, generation: int) -> User:
    """The read-only User for these stored values, made once (building a table model costs
    more than the query): the same values give the same, never modified, copy."""
    key = (user_id, name, role, generation)
    found = _COPIES.get(key)
    if found is None:
        if len(_COPIES) >= 4096:
            _COPIES.clear()
        found = _COPIES[key] = User(
            id=user_id, name=name, role=role, active=True, password_hash="", session_generation=generation
        )
    return found


def _signed_in(request: Request, row) -> User | None:
    """The user the session cookie's account ``row`` (app/web/accounts.py) stands for, or None;
    keeps the data version read with it in request.state.data_version."""
    session = request.state.session
    user = None
    request.state.data_version = None
    if row is not None and row.active and row.session_generation == session.generation:
        request.state.data_version = row.data_version
        user = _signed_in_copy(row.id, row.name, row.role, row.session_generation)
    request.state.user = user
    return user


async def current_user(request: Request) -> User | None:
    """The signed-in, active user, or None. Looked up on every request, so deactivating an
    account, changing a role or ending the account's sessions (the session generation: sign-out,
    password change, deactivation) takes effect at once. The same statement reads the data
    version into request.state.data_version; it is read before anything the route reads, so what
    a route keeps under it is never older than it. The read runs on the account reader's thread
    (app/web/accounts.py), batched with other requests' reads; the event loop only waits. The
    User returned is a read-only, transient copy (no password hash): never add it to a session
    or change it."""
    user_id = request.state.session.user_id
    row = None if user_id is None else await request.app.state.accounts.read(user_id)
    return _signed_in(request, row)


def current_user_here(request: Request) -> User | None:
    """current_user for a worker thread (an error page's navigation): the same read, on this
    thread."""
    user_id = request.state.session.user_id
    row = None if user_id is None else request.app.state.accounts.read_here(user_id)
    return _signed_in(request, row)


def requires(action: str):
    """A dependency for routes: the signed-in user, if they may do ``action`` (app/web/permissions.py).
    One function (one batched read, no worker-thread call) rather than a chain of dependencies:
    FastAPI's cost per dependency level is paid on every request."""
    if action not in ACTIONS:
        raise ValueError(f"unknown action {action!r}")

    async def check(request: Request) -> User:
        user = await current_user(request)
        if user is None:
            raise SignInRequired()
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
