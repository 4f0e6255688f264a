"""What the review page, the compare page and the printed record show, gathered in one place."""

from __future__ import annotations

from sqlmodel import Session

from ..models import Channel, Fixture, Revision, User
from . import review, revisions, trail
from .documents import SLOT_KINDS
from .errors import InputProblems, NotFound

CAUTION = (
    "Clampdown checks a model of the circuit against the ratings entered. It does not replace "
    "datasheets, measurement, or the codes and licensed practice that apply where mains voltage, "
    "fire or people are involved. A load switched at mains voltage needs isolation, creepage and "
    "clearance per the applicable local codes."
)


def inputs(document: dict) -> list[tuple[str, str]]:
    """The design's own values (parts listed separately), flattened to field paths."""
    out = []

    def walk(prefix: str, node):
        for key, value in node.items():
            path = f"{prefix}.{key}" if prefix else key
            if path in ("format", "notes") or path in SLOT_KINDS:
                continue
            if isinstance(value, dict):
                walk(path, value)
            else:
                out.append((path, str(value)))

    walk("", document)
    return out


def _base(db: Session, revision_id: int, user: User | None) -> dict:
    view = revisions.revision_view(db, revision_id)
    report = view.report.body
    state = review.review_state(db, view.revision, report, user)
    return {
        "view": view,
        "report": report,
        "review": state,
        "waivers": {rule: detail for rule, (_, detail) in state.waivers.items()},
        "parts": revisions.frozen_parts(view.revision.document),
        "inputs": inputs(view.revision.document),
        "caution": CAUTION,
    }


def page_context(db: Session, revision_id: int, user: User) -> dict:
    context = _base(db, revision_id, user)
    revision = context["view"].revision
    context["compare_with"] = review.default_comparison(db, revision)
    context["labels"] = review.ACTION_LABELS
    return context


def record_context(db: Session, revision_id: int) -> dict:
    context = _base(db, revision_id, None)
    context["check"] = trail.verify_all(db)
    context["labels"] = review.ACTION_LABELS
    return context


def compare_context(db: Session, channel_id: int, old_id: int | None, new_id: int | None) -> dict:
    history = revisions.list_revisions(db, channel_id)
    if not history:
        channel = db.get(Channel, channel_id)
        if channel is None:
            raise NotFound(f"channel {channel_id}")
        raise InputProblems([("new", "this channel has no revisions to compare yet")], 409)
    if new_id is None:
        new_id = history[-1].id
    if old_id is None:
        newest = db.get(Revision, new_id)
        base = review.default_comparison(db, newest) if newest is not None else None
        old_id = base.id if base is not None else new_id
    comparison = review.compare_revisions(db, channel_id, old_id, new_id)
    channel = db.get(Channel, channel_id)
    fixture = db.get(Fixture, channel.fixture_id)
    return {"channel": channel, "fixture": fixture, "history": history, "cmp": comparison}


def render_pdf(html: str, base_url: str) -> bytes | None:
    """The printed record as PDF through WeasyPrint, or None where it is not installed (it needs
    the Pango library, which pip cannot bring): the page then points to the browser's print."""
    try:
        from weasyprint import HTML
    except (ImportError, OSError):
        return None
    return HTML(string=html, base_url=base_url).write_pdf()
