"""The application object: settings, database, session cookie, CSRF, routers, error pages."""

from __future__ import annotations

import re

import anyio.to_thread
from fastapi import Depends, FastAPI, HTTPException
from fastapi.openapi.docs import get_swagger_ui_html
from fastapi.responses import HTMLResponse, PlainTextResponse, RedirectResponse
from fastapi.staticfiles import StaticFiles
from starlette.datastructures import MutableHeaders

from . import error_handling
from .accounts import AccountReader
from .config import Settings, get_settings, shipped
from .db import make_engine
from .deps import csrf_protect
from .error_handling import ids_in_range
from .security import COOKIE_NAME, SessionSigner, SignInThrottle
from .services import pictures
from .templating import FragmentCache, make_templates


class SessionCookie:
    """Pure ASGI middleware: loads the signed session cookie into request.state.session and
    writes it back when it is new or a route replaced it (sign-in and sign-out renew it)."""

    def __init__(self, app, signer: SessionSigner, secure: bool):
        self.app, self.signer, self.secure = app, signer, secure

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        cookie = None
        for key, value in scope["headers"]:
            if key == b"cookie":
                for item in value.decode("latin-1").split(";"):
                    name, _, val = item.strip().partition("=")
                    if name == COOKIE_NAME:
                        cookie = val
        session = self.signer.loads(cookie)
        state = scope.setdefault("state", {})
        state["session"] = session or self.signer.new()
        state["session_renewed"] = session is None

        async def send_with_cookie(message):
            if message["type"] == "http.response.start" and state.get("session_renewed"):
                headers = MutableHeaders(scope=message)
                attributes = f"Path=/; Max-Age={self.signer.max_age}; HttpOnly; SameSite=Lax"
                if self.secure:
                    attributes += "; Secure"
                headers.append(
                    "set-cookie", f"{COOKIE_NAME}={self.signer.dumps(state['session'])}; {attributes}"
                )
            await send(message)

        await self.app(scope, receive, send_with_cookie)


class WorkerThreads:
    """Pure ASGI middleware: the thread pool that runs plain-function routes and dependencies
    gets ``threads`` workers (the connection pool is sized from the same number)."""

    def __init__(self, app, threads: int):
        self.app, self.threads = app, threads

    async def __call__(self, scope, receive, send):
        limiter = anyio.to_thread.current_default_thread_limiter()
        if limiter.total_tokens != self.threads:
            limiter.total_tokens = self.threads
        await self.app(scope, receive, send)


_UPLOAD_PATH = re.compile(r"^/(parts/import|channels/[^/]+/upload)/?$")


def body_limit(settings: Settings, path: str) -> tuple[str, int]:
    """The route kind of a path and its request-body limit in bytes."""
    if _UPLOAD_PATH.match(path):
        return "a file upload", settings.body_limit_upload
    if path.startswith("/api/"):
        return "the JSON API", settings.body_limit_json
    return "a form", settings.body_limit_form


class BodyLimit:
    """Pure ASGI middleware: a request body over its route kind's limit is refused with 413
    before anything parses it: at once when Content-Length says so, otherwise as soon as the
    bytes received (chunked bodies too) pass the limit."""

    def __init__(self, app, settings: Settings):
        self.app, self.settings = app, settings

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        kind, limit = body_limit(self.settings, scope["path"])
        declared = None
        for key, value in scope["headers"]:
            if key == b"content-length":
                declared = int(value) if value.isdigit() else None
        received = 0

        def too_large() -> HTTPException:
            return HTTPException(
                status_code=413, detail=f"the request body is over {limit:,} bytes, the limit for {kind}"
            )

        async def receive_limited():
            nonlocal received
            if declared is not None and declared > limit:
                raise too_large()
            message = await receive()
            if message["type"] == "http.request":
                received += len(message.get("body", b""))
                if received > limit:
                    raise too_large()
            return message

        await self.app(scope, receive_limited, send)


# The pages load only /static files: htmx (configured not to eval or inject styles, see
# base.html) and app.js; inline style attributes remain in the templates. The API's docs page
# loads the vendored Swagger UI with an inline start-up script, so it gets its own policy.
CSP = (
    "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; "
    "object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'"
)
DOCS_PATH = "/api/v1/docs"
CSP_DOCS = (
    "default-src 'self'; script-src 'self' 'unsafe-inline'; "
    "style-src 'self' 'unsafe-inline'; img-src 'self' data:; "
    "object-src 'none'; base-uri 'none'; frame-ancestors 'none'"
)


class SecurityHeaders:
    """Pure ASGI middleware: Content-Security-Policy, X-Frame-Options, X-Content-Type-Options
    and Referrer-Policy on every response (and HSTS when the cookie is Secure, i.e. HTTPS)."""

    def __init__(self, app, docs_path: str, https: bool):
        self.app, self.docs_path, self.https = app, docs_path, https

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        policy = CSP_DOCS if scope["path"] == self.docs_path else CSP

        async def send_with_headers(message):
            if message["type"] == "http.response.start":
                headers = MutableHeaders(scope=message)
                headers["Content-Security-Policy"] = policy
                headers["X-Frame-Options"] = "DENY"
                headers["X-Content-Type-Options"] = "nosniff"
                headers["Referrer-Policy"] = "same-origin"
                if self.https:
                    headers["Strict-Transport-Security"] = "max-age=31536000"
            await send(message)

        await self.app(scope, receive, send_with_headers)


def create_app(settings: Settings | None = None, engine=None) -> FastAPI:
    settings = (settings or get_settings()).resolved()
    app = FastAPI(
        title="Clampdown",
        version="0.1.0",
        description="Parts library, fixtures, channels and revisions of relay-driver designs, and their reviews.",
        dependencies=[Depends(ids_in_range), Depends(csrf_protect)],
        docs_url=None,  # served below from the vendored assets in static/swagger-ui/
        openapi_url="/api/v1/openapi.json",
        redoc_url=None,
    )
    app.state.settings = settings
    app.state.engine = engine or make_engine(
        settings.database_url, settings.threads, settings.db_pool_overflow
    )
    # Every request's account and data version, read in batches on one thread (app/web/accounts.py).
    app.state.accounts = AccountReader(app.state.engine)
    app.state.signer = SessionSigner(settings.secret_key, settings.session_days * 86400)
    app.state.throttle = SignInThrottle(
        settings.signin_failures_per_account,
        settings.signin_failures_per_address,
        settings.signin_window_seconds,
    )
    app.state.templates = make_templates()
    # Kept pages, fragments and API lists (templating.kept_response and the pages' _fragment).
    app.state.fragments = FragmentCache(max_bytes=settings.fragment_cache_bytes)
    app.state.pictures = pictures.STORE  # drawn pictures per content, engine and profile (services/pictures)
    app.state.trail_checks = {}  # the printed record's verification (services/trail.cached_verification)
    from .services.trail import use_key

    use_key(app.state.engine, settings.trail_key)
    # Outermost last: headers on every answer (errors too), then the body limit, then the cookie.
    app.add_middleware(SessionCookie, signer=app.state.signer, secure=settings.cookie_secure)
    app.add_middleware(BodyLimit, settings=settings)
    app.add_middleware(WorkerThreads, threads=settings.threads)
    app.add_middleware(SecurityHeaders, docs_path=DOCS_PATH, https=settings.cookie_secure)
    app.mount("/static", StaticFiles(directory=str(shipped("static"))), name="static")

    from .routes import admin, api, auth, pages, parts, profiles, review, revisions

    # FastAPI tries every route in order, one by one; no two routers share a path, so the most
    # asked-for come first (the revision page, then the API and the lists) and a request walks
    # fewer routes before its own.
    app.include_router(revisions.router)
    app.include_router(api.router, prefix="/api/v1")
    for module in (pages, parts, review, auth, profiles, admin):
        app.include_router(module.router)

    @app.get(DOCS_PATH, include_in_schema=False)
    def api_docs() -> HTMLResponse:
        """The API documentation UI, from vendored files (works offline; see static/VENDORED.md)."""
        return get_swagger_ui_html(
            openapi_url="/api/v1/openapi.json",
            title="Clampdown API",
            swagger_js_url="/static/swagger-ui/swagger-ui-bundle.js",
            swagger_css_url="/static/swagger-ui/swagger-ui.css",
            swagger_favicon_url="/static/swagger-ui/favicon-32x32.png",
        )

    @app.get("/docs", include_in_schema=False)
    def docs_redirect() -> RedirectResponse:
        return RedirectResponse(DOCS_PATH, status_code=307)

    @app.get("/healthz", include_in_schema=False)
    async def healthz() -> PlainTextResponse:
        """A trivial endpoint (no database): the benchmark's reference, and a liveness probe.
        It answers on the event loop, so an answer shows the loop is not held up."""
        return PlainTextResponse("ok")

    error_handling.install(app)
    return app


def route_table(app: FastAPI) -> list[tuple[str, str]]:
    """Every (method, path) the application serves through its routers, with prefixes applied.
    Tests walk it to prove each route is authorised and CSRF-checked."""
    from fastapi.routing import APIRoute

    out: list[tuple[str, str]] = []

    def walk(routes, prefix: str) -> None:
        for route in routes:
            original = getattr(route, "original_router", None)
            if original is not None:  # an included router (FastAPI keeps it as one entry)
                walk(original.routes, prefix + route.include_context.prefix)
            elif isinstance(route, APIRoute):
                out.extend((method, prefix + route.path) for method in sorted(route.methods - {"HEAD"}))

    walk(app.routes, "")
    return out
