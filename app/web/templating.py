"""The Jinja environment (autoescaping on for every template) and its filters."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from urllib.parse import urlencode

from fastapi import Request
from fastapi.responses import RedirectResponse, Response
from fastapi.templating import Jinja2Templates
from jinja2 import Environment, FileSystemLoader
from markupsafe import Markup
from sqlmodel import Session
from starlette.concurrency import run_in_threadpool

from app.engine import ENGINE_VERSION
from app.engine.profile import FIGURES
from app.engine.rules import RULES
from app.engine.units import format_si
from app.signoff.workflow import STATE_LABELS

from .config import shipped
from .permissions import can
from .trail_guard import writers_idle

# Our own status wording: the label says it in words, the mark says it in shape, so neither
# colour nor a legend is needed to read a finding (print, greyscale, colour-blind readers).
STATUS = {
    "violation": {"label": "Exceeds rating", "mark": "✕", "short": "EXCEEDS"},
    "marginal": {"label": "Past derating", "mark": "▲", "short": "PAST DERATING"},
    "ok": {"label": "Within limits", "mark": "✓", "short": "WITHIN"},
    "note": {"label": "Note", "mark": "i", "short": "NOTE"},
}


def si(value, unit: str = "", digits: int = 3) -> str:
    if value is None:
        return "—"
    if unit == "×":
        return f"{value:.{digits}g}×"
    if unit == "s" and value is not None:
        return format_si(value, "s", digits)
    return format_si(value, unit, digits)


def when(value: datetime | None) -> str:
    return value.strftime("%Y-%m-%d %H:%M UTC") if value else "—"


def css_string(text: str) -> Markup:
    """A quoted CSS string for generated content (the record's page header and footer): every
    character that could end the string or the style element is written as a CSS escape."""
    out = []
    for ch in str(text):
        if ch.isalnum() or ch in " .,:;-_/()·—–★#+=%°Ω" or ord(ch) > 127 and ch.isprintable():
            out.append(ch)
        else:
            out.append(f"\\{ord(ch):x} ")
    return Markup('"' + "".join(out) + '"')


def plural(count: int, noun: str, many: str | None = None) -> str:
    """'1 comment', '2 comments', '0 comments' (``many`` for irregular plurals)."""
    return f"{count} {noun if count == 1 else (many or noun + 's')}"


def figure(value: float, key: str, for_input: bool = False) -> str:
    """A derating profile's figure as people write it: "80 %", "125 °C", "2×" (inputs: no ×)."""
    kind = FIGURES[key][1]
    if kind in ("fraction", "margin"):
        return f"{value * 100:g} %"
    if kind == "celsius":
        return f"{value:g}" if for_input else f"{value:g} °C"
    return f"{value:g}" if for_input else f"{value:g}×"


def formula(rule_id: str) -> str:
    registered = RULES.get(rule_id)
    return registered.formula if registered else ""


def make_templates() -> Jinja2Templates:
    env = Environment(
        loader=FileSystemLoader(str(shipped("templates"))),
        autoescape=True,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters.update(si=si, when=when, css_string=css_string, plural=plural, figure=figure)
    from .services import findings_view, pictures, record
    from .services.queues import age
    from .services.review import TEXT_NAMES

    env.globals.update(
        STATUS=STATUS,
        STATE_LABELS=STATE_LABELS,
        formula=formula,
        ENGINE_VERSION=ENGINE_VERSION,
        can=can,
        age=age,
        pdf_available=lambda: record.pdf_available(),  # looked up at call time (tests swap it)
        corner_words=findings_view.corner_words,
        direction=findings_view.direction,
        margin_text=findings_view.margin_text,
        text_names=TEXT_NAMES,
        data_uri=pictures.data_uri,
    )
    return Jinja2Templates(env=env)


FLASH_PARAM = "done"


def redirect_done(request: Request, url: str, message: str) -> RedirectResponse:
    """303 to ``url``, whose page then says ``message`` (what the action just did)."""
    token = request.app.state.signer.flash_dumps(message)
    joiner = "&" if "?" in url else "?"
    return RedirectResponse(f"{url}{joiner}{urlencode({FLASH_PARAM: token})}", status_code=303)


def render(request: Request, template: str, /, status_code: int = 200, **context):
    """Render a page or partial with the signed-in user and the CSRF token in the context."""
    session = request.state.session
    context.setdefault("user", getattr(request.state, "user", None))
    context.setdefault("flash", request.app.state.signer.flash_loads(request.query_params.get(FLASH_PARAM)))
    context["csrf_token"] = request.app.state.signer.csrf_token(session)
    return request.app.state.templates.TemplateResponse(request, template, context, status_code=status_code)


class FragmentCache:
    """Rendered fragments and whole answers, each under a key that holds everything that can
    change it (the database's data version, the engine version, the viewer where it matters).
    Bounded by count and by the bytes of text it holds (``max_bytes``: a key can carry a search
    string or query a client chooses); past either bound it starts afresh. Thread-safe enough
    for dict get/set under the GIL."""

    def __init__(self, size: int = 4096, max_bytes: int = 64_000_000):
        self.size, self.max_bytes = size, max_bytes
        self._items: dict = {}
        self._bytes = 0

    def get(self, key):
        return self._items.get(key)

    def put(self, key, value) -> None:
        weight = _weight(value)
        if len(self._items) >= self.size or self._bytes + weight > self.max_bytes:
            self._items.clear()
            self._bytes = 0
        self._items[key] = value
        self._bytes += weight

    def kept(self, key, build, *, db=None):
        """The value under ``key``, built by ``build()`` and kept on a miss. ``db``: the session
        a key's data version was read on; the value is then kept only when no writer was open
        after that read (trail_guard.writers_idle), else built and given unkept."""
        found = self._items.get(key)
        if found is None:
            keep = db is None or writers_idle(db.connection())
            found = build()
            if keep:
                self.put(key, found)
        return found


def _weight(value) -> int:
    """About how many bytes a kept value holds: its text, or 1 kB for anything else."""
    if isinstance(value, Kept):
        return len(value.body)
    if isinstance(value, str | bytes):
        return len(value)
    if isinstance(value, tuple):
        return sum(_weight(part) for part in value)
    return 1024


@dataclass(frozen=True)
class Kept:
    """A whole answer as sent: body bytes, status, media type and headers."""

    body: bytes
    status_code: int
    media_type: str
    headers: tuple[tuple[str, str], ...] = ()

    @classmethod
    def of(cls, response: Response, *header_names: str) -> Kept:
        headers = tuple((name, response.headers[name]) for name in header_names if name in response.headers)
        return cls(bytes(response.body), response.status_code, response.media_type or "text/html", headers)

    def response(self) -> Response:
        return Response(self.body, self.status_code, dict(self.headers), media_type=self.media_type)


def viewer_key(request: Request, user) -> tuple:
    """What makes a page differ between viewers: the account, its role (the actions offered) and
    the session's CSRF token (carried by the page's forms)."""
    return (user.id, user.role, request.app.state.signer.csrf_token(request.state.session))


async def kept_response(request: Request, key: tuple, build) -> Response:
    """A GET's whole answer, kept under ``key`` plus the data version current_user read for this
    request (database triggers bump it on every change, however made) and the engine version.
    A hit sends the kept bytes from the event loop: no database, no template, no model
    validation. A miss runs ``build(db)`` in a worker thread on a session of its own (closed in
    that thread) and keeps a 200 answer; ``build`` returns a Kept. A page that says what an
    action just did (``?done=``) is never kept."""
    version = request.state.data_version

    def run() -> tuple[Kept, bool]:
        with Session(request.app.state.engine, expire_on_commit=False) as db:
            keep = writers_idle(db.connection())  # after the version, before the data
            return build(db), keep

    if version is None or FLASH_PARAM in request.query_params:
        return (await run_in_threadpool(run))[0].response()
    full_key = (*key, version, ENGINE_VERSION)
    fragments = request.app.state.fragments
    found = fragments.get(full_key)
    if found is None:
        found, keep = await run_in_threadpool(run)
        if found.status_code == 200 and keep:
            fragments.put(full_key, found)
    return found.response()
