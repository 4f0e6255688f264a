"""What routes receive: the database session, the signed-in user by role, and the CSRF check."""

from __future__ import annotations

from collections.abc import AsyncIterator
from typing import Annotated

from fastapi import Depends, Request
from sqlalchemy import bindparam, select
from sqlmodel import Session

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


# The dependencies are async so that resolving them costs no thread hop per request; their
# database work is one primary-key lookup. Slow work stays in sync routes (run in threads).
async def get_db(request: Request) -> AsyncIterator[Session]:
    with Session(request.app.state.engine, expire_on_commit=False) as session:
        yield session


DB = Annotated[Session, Depends(get_db)]


_USER_COLUMNS = User.__table__.c
_USER_BY_ID = select(_USER_COLUMNS.id, _USER_COLUMNS.name, _USER_COLUMNS.role, _USER_COLUMNS.active).where(
    _USER_COLUMNS.id == bindparam("user_id")
)


async def current_user(request: Request) -> User | None:
    """The signed-in, active user, or None. Looked up on every request (so deactivating an
    account or changing a role takes effect at once) with one Core query on a connection that
    goes straight back to the pool. The User returned is a read-only, transient copy (no
    password hash): never add it to a session."""
    session = request.state.session
    user = None
    if session.user_id is not None:
        with request.app.state.engine.connect() as connection:
            row = connection.execute(_USER_BY_ID, {"user_id": session.user_id}).first()
        if row is not None and row.active:
            user = User(id=row.id, name=row.name, role=row.role, active=True, password_hash="")
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
