"""The Jinja environment (autoescaping on for every template) and its filters."""

from __future__ import annotations

from datetime import datetime

from fastapi import Request
from fastapi.templating import Jinja2Templates
from jinja2 import Environment, FileSystemLoader

from app.engine import ENGINE_VERSION
from app.engine.profile import FIGURES
from app.engine.rules import RULES
from app.engine.units import format_si

from .config import shipped
from .permissions import can

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
    env.filters.update(si=si, when=when, plural=plural, figure=figure)
    env.globals.update(STATUS=STATUS, formula=formula, ENGINE_VERSION=ENGINE_VERSION, can=can)
    return Jinja2Templates(env=env)


def render(request: Request, template: str, /, status_code: int = 200, **context):
    """Render a page or partial with the signed-in user and the CSRF token in the context."""
    session = request.state.session
    context.setdefault("user", getattr(request.state, "user", None))
    context["csrf_token"] = request.app.state.signer.csrf_token(session)
    return request.app.state.templates.TemplateResponse(request, template, context, status_code=status_code)


class FragmentCache:
    """Rendered fragments of things that never change (a saved revision with its report for
    this engine version; channel and fixture names have no edit route). Bounded; thread-safe
    enough for dict get/set under the GIL."""

    def __init__(self, size: int = 4096):
        self.size = size
        self._items: dict = {}

    def get(self, key):
        return self._items.get(key)

    def put(self, key, value) -> None:
        if len(self._items) >= self.size:
            self._items.clear()
        self._items[key] = value
