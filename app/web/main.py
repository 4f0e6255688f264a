"""The application object: settings, database, session cookie, CSRF, routers, error pages."""

from __future__ import annotations

from fastapi import Depends, FastAPI
from fastapi.openapi.docs import get_swagger_ui_html
from fastapi.responses import HTMLResponse, PlainTextResponse, RedirectResponse
from fastapi.staticfiles import StaticFiles
from starlette.datastructures import MutableHeaders

from . import error_handling
from .config import Settings, get_settings, shipped
from .db import make_engine
from .deps import csrf_protect
from .error_handling import ids_in_range
from .security import COOKIE_NAME, SessionSigner
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
    app.state.engine = engine or make_engine(settings.database_url)
    app.state.signer = SessionSigner(settings.secret_key, settings.session_days * 86400)
    app.state.templates = make_templates()
    app.state.fragments = FragmentCache()  # revision page bodies and the home overview
    app.state.trail_checks = {}  # the printed record's verification (services/trail.cached_verification)
    from .services.trail import use_key

    use_key(app.state.engine, settings.trail_key)
    app.add_middleware(SessionCookie, signer=app.state.signer, secure=settings.cookie_secure)
    app.mount("/static", StaticFiles(directory=str(shipped("static"))), name="static")

    from .routes import admin, api, auth, pages, parts, profiles, review, revisions

    for module in (auth, pages, revisions, review, parts, profiles, admin):
        app.include_router(module.router)
    app.include_router(api.router, prefix="/api/v1")

    @app.get("/api/v1/docs", include_in_schema=False)
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
        return RedirectResponse("/api/v1/docs", status_code=307)

    @app.get("/healthz", include_in_schema=False)
    def healthz() -> PlainTextResponse:
        """A trivial endpoint (no database): the benchmark's reference, and a liveness probe."""
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
