"""Every error, one shape: one table of error → status, title and type, and one handler.

The API answers ``{"detail": [{"loc": [...], "msg": "...", "type": "..."}]}`` for every error
(the shape FastAPI uses for 422), pages answer the error page with the same lines, and sign-in
for a page is a redirect. Headers an exception carries (Retry-After on 429, for instance) are
kept. A new kind of error gets a row in ERRORS (or raises InputProblems / HTTPException with
its status), never a handler of its own.
"""

from __future__ import annotations

from dataclasses import dataclass

import anyio.to_thread
from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import JSONResponse, PlainTextResponse, RedirectResponse
from sqlalchemy.exc import IntegrityError, OperationalError
from starlette.exceptions import HTTPException as StarletteHTTPException

from .deps import CsrfRefused, Forbidden, SignInRequired
from .models import ImmutableRevisionError
from .services.errors import InputProblems, NotFound
from .templating import render


@dataclass(frozen=True)
class Kind:
    title: str  # the error page's heading
    type: str  # the detail entries' type


# Status → title and type. Statuses not listed borrow the nearest: 4xx "Cannot accept that".
STATUSES = {
    400: Kind("Cannot accept that", "bad_request"),
    401: Kind("Sign in first", "sign_in_required"),
    403: Kind("Not allowed", "forbidden"),
    404: Kind("Not found", "not_found"),
    405: Kind("Not allowed here", "method_not_allowed"),
    409: Kind("Conflict", "conflict"),
    413: Kind("Too large", "too_large"),
    415: Kind("Cannot accept that", "unsupported_media_type"),
    422: Kind("Cannot accept that", "value_error"),
    429: Kind("Too many requests", "too_many_requests"),
    501: Kind("Not available here", "not_implemented"),
    503: Kind("Unavailable for a moment", "unavailable"),
}
# The database could not be reached or would not answer in time (a restart, a network fault, a
# lock held too long); the same request may succeed a moment later. A connection lost during a
# commit leaves unknown whether the change was stored, so the message does not claim either way.
UNAVAILABLE_MESSAGE = (
    "the database cannot be reached or is busy; try again in a moment "
    "(if you were saving a change, reload first to see whether it was stored)"
)
UNAVAILABLE_RETRY_SECONDS = 5
CSRF_MESSAGE = "the form's security token is missing or stale; reload the page and try again"


def _problems(exc: Exception) -> tuple[int, list[tuple[list[str], str]], dict[str, str] | None]:
    """The table of errors: (status, [(loc, msg)], headers) for each kind the app raises."""
    if isinstance(exc, SignInRequired):
        return 401, [(["session"], "sign in first (POST /api/v1/session)")], None
    if isinstance(exc, Forbidden):
        return 403, [(["role"], exc.message)], None
    if isinstance(exc, CsrfRefused):
        return 403, [(["header", "X-CSRF-Token"], CSRF_MESSAGE + " (send the X-CSRF-Token header)")], None
    if isinstance(exc, NotFound):
        return 404, [(["path"], str(exc))], None
    if isinstance(exc, InputProblems):
        return exc.status_code, [(path.split("."), message) for path, message in exc.problems], None
    if isinstance(exc, RequestValidationError):
        return 422, [([str(x) for x in e["loc"]], e["msg"]) for e in exc.errors()], None
    if isinstance(exc, ImmutableRevisionError):
        return 409, [(["revision"], str(exc))], None
    if isinstance(exc, IntegrityError):
        # A unique or foreign key constraint met at commit: a concurrent request stored the
        # same thing first (services check names beforehand, so this is a race).
        return (
            409,
            [(["request"], "conflicts with something stored at the same moment; reload and try again")],
            None,
        )
    if isinstance(exc, OperationalError):
        return 503, [(["database"], UNAVAILABLE_MESSAGE)], {"Retry-After": str(UNAVAILABLE_RETRY_SECONDS)}
    if isinstance(exc, StarletteHTTPException):
        detail = exc.detail
        if isinstance(detail, list) and all(isinstance(d, dict) and "loc" in d for d in detail):
            return exc.status_code, [(list(d["loc"]), str(d.get("msg", ""))) for d in detail], exc.headers
        return exc.status_code, [(["request"], str(detail))], exc.headers
    raise TypeError(f"no row in the error table for {type(exc).__name__}")


HANDLED = (
    SignInRequired,
    Forbidden,
    CsrfRefused,
    NotFound,
    InputProblems,
    RequestValidationError,
    ImmutableRevisionError,
    IntegrityError,
    OperationalError,
    StarletteHTTPException,
)


def kind_of(status: int) -> Kind:
    return STATUSES.get(status) or (STATUSES[422] if status < 500 else Kind("Server error", "server_error"))


def detail(exc: Exception) -> tuple[int, list[dict], dict[str, str] | None]:
    status, problems, headers = _problems(exc)
    kind = kind_of(status)
    return status, [{"loc": loc, "msg": msg, "type": kind.type} for loc, msg in problems], headers


def _look_up_user(request: Request) -> None:
    from .deps import current_user_here

    current_user_here(request)


async def handle(request: Request, exc: Exception):
    status, items, headers = detail(exc)
    if request.url.path.startswith("/api/"):
        return JSONResponse({"detail": items}, status_code=status, headers=headers)
    if isinstance(exc, SignInRequired):
        target = "/sign-in?next=" + request.url.path if request.method == "GET" else "/sign-in"
        if request.headers.get("HX-Request"):
            return PlainTextResponse("sign in first", status_code=401, headers={"HX-Redirect": target})
        return RedirectResponse(target, status_code=303)
    if isinstance(exc, CsrfRefused):
        lines = [CSRF_MESSAGE]
    elif isinstance(exc, RequestValidationError):
        lines = [f"{'.'.join(d['loc'][1:]) or d['loc'][0]}: {d['msg']}" for d in items]
    elif isinstance(exc, StarletteHTTPException) and not isinstance(exc.detail, list):
        lines = [str(exc.detail)] if exc.detail else []
    else:
        lines = [f"{'.'.join(d['loc'])}: {d['msg']}" if d["loc"] != ["path"] else d["msg"] for d in items]
    title = kind_of(status).title
    if isinstance(exc, CsrfRefused):
        title = "Request refused"
    if isinstance(exc, OperationalError):
        request.state.user = None  # the database that would say who is signed in is not answering
    elif not hasattr(request.state, "user") and hasattr(request.state, "session"):
        # No route ran (an unknown path): the page's navigation needs the user. Database work
        # runs in a worker thread, never on the event loop (DEVELOPERS.md).
        await anyio.to_thread.run_sync(_look_up_user, request)
    response = render(request, "error.html", status_code=status, title=title, lines=lines)
    for name, value in (headers or {}).items():
        response.headers[name] = value
    return response


def install(app: FastAPI) -> None:
    for exc_class in HANDLED:
        app.add_exception_handler(exc_class, handle)


# ----- ids beyond the integer columns

MAX_ID = 2**31 - 1  # PostgreSQL's integer; SQLite's is wider, but one limit for both


def _is_int_field(field) -> bool:
    annotation = field.field_info.annotation
    return annotation is int or annotation == (int | None)


def _beyond(raw) -> bool:
    try:
        return abs(int(str(raw).strip())) > MAX_ID
    except ValueError:
        return False  # not a number: FastAPI's own validation answers 422


async def ids_in_range(request: Request) -> None:
    """An application-wide dependency: a whole-number path parameter beyond the integer columns
    names nothing stored (404); such a query parameter is refused by name (422). Without this,
    the database driver refuses the value and the request ends in a server error."""
    dependant = getattr(request.scope.get("route"), "dependant", None)
    if dependant is None:
        return
    for field in dependant.path_params:
        raw = request.path_params.get(field.alias)
        if raw is not None and _is_int_field(field) and _beyond(raw):
            raise NotFound(f"{field.alias.removesuffix('_id').replace('_', ' ')} {raw}")
    for field in dependant.query_params:
        raw = request.query_params.get(field.alias)
        if raw is not None and _is_int_field(field) and _beyond(raw):
            raise InputProblems([(field.alias, f"must be a whole number of at most {MAX_ID}")])
