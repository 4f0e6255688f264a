"""What the review page, the compare page and the printed record show, gathered in one place."""

from __future__ import annotations

from functools import cache

from sqlmodel import Session

from app.signoff.compare import KIND_LABELS

from ..models import Channel, Fixture, Revision, User
from . import findings_view, labels, pictures, review, revisions, trail
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


def _base(
    db: Session,
    revision_id: int,
    user: User | None,
    sort: str = "",
    store: pictures.PictureStore | None = None,
) -> dict:
    view = revisions.revision_view(db, revision_id)
    report = view.report.body
    state = review.review_state(db, view.revision, report, user)
    baseline = review.approved_baseline(db, view.revision.channel_id)
    return {
        "view": view,
        "report": report,
        "review": state,
        "signed_off": state.sign_off is not None,
        "baseline": baseline,
        "is_baseline": baseline is not None and baseline.id == view.revision.id,
        "history": review.channel_history(db, view.revision.channel_id, view.revision.number),
        "waivers": {rule: detail for rule, (_, detail) in state.waivers.items()},
        "parts": revisions.frozen_parts(view.revision.document),
        "sort": sort,
        "findings": findings_view.ordered(report["findings"], sort),
        "r_at": findings_view.coil_reference_temp(view.revision.document),
        "inputs": inputs(view.revision.document),
        "labelled_inputs": labels.labelled_inputs(inputs(view.revision.document)),
        "labelled_parts": labels.labelled_parts(revisions.frozen_parts(view.revision.document)),
        "caution": CAUTION,
        # Drawn once per content, engine and profile version; none where no store is given.
        "pictures": pictures.for_revision(db, view.revision, store) if store is not None else {},
    }


def page_context(
    db: Session, revision_id: int, user: User, sort: str = "", store: pictures.PictureStore | None = None
) -> dict:
    context = _base(db, revision_id, user, findings_view.sort_key(sort), store)
    revision = context["view"].revision
    context["compare_with"] = review.default_comparison(db, revision)
    context["labels"] = review.ACTION_LABELS
    return context


# What a PDF prints at most; the rest is counted on it (the review page has everything).
PRINT_LIMIT_ENTRIES = 300
PRINT_LIMIT_COMMENTS = 200


def _bounded(context: dict) -> None:
    """Cap the trail rows and comments a PDF renders, and count what is left out."""
    state = context["review"]
    omitted = {"entries": max(0, len(state.entries) - PRINT_LIMIT_ENTRIES), "comments": 0}
    state.entries = state.entries[-PRINT_LIMIT_ENTRIES:] if omitted["entries"] else state.entries
    budget = PRINT_LIMIT_COMMENTS
    kept_general = state.comments[:budget]
    omitted["comments"] += len(state.comments) - len(kept_general)
    state.comments = kept_general
    budget -= len(kept_general)
    for rule, items in list(state.finding_comments.items()):
        kept = items[: max(budget, 0)]
        omitted["comments"] += len(items) - len(kept)
        state.finding_comments[rule] = kept
        budget -= len(kept)
    context["omitted"] = omitted


def record_context(
    db: Session,
    revision_id: int,
    checks: dict | None = None,
    max_age: float = 300.0,
    bounded: bool = False,
    store: pictures.PictureStore | None = None,
) -> dict:
    """The printed record. ``checks`` keeps the trail verification between views (see
    trail.cached_verification); ``bounded`` caps what a PDF renders; ``store`` keeps the pictures."""
    context = _base(db, revision_id, None, store=store)
    if checks is None:
        context["check"] = trail.verify_all(db)
    else:
        context["check"] = trail.cached_verification(db, checks, max_age)
    context["labels"] = review.ACTION_LABELS
    saves = [e for e in context["review"].entries if e.action == review.SAVE]
    # The author as the trail records it (verification says so if the account disagrees).
    context["author_name"] = saves[0].user_name if saves else context["view"].author.name
    context["omitted"] = {"entries": 0, "comments": 0}
    if bounded:
        _bounded(context)
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
    return {
        "channel": channel,
        "fixture": fixture,
        "history": history,
        "cmp": comparison,
        "baseline": review.approved_baseline(db, channel_id),
        "kind_labels": KIND_LABELS,
    }


@cache
def pdf_available() -> bool:
    """Whether this server can make the record's PDF (WeasyPrint and the Pango it needs import).
    Pages offer the download only then; otherwise they offer the browser's print."""
    try:
        import weasyprint  # noqa: F401
    except (ImportError, OSError):
        return False
    return True


def render_pdf(html: str, base_url: str) -> bytes | None:
    """The printed record as PDF through WeasyPrint, or None where it is not installed (it needs
    the Pango library, which pip cannot bring): the page then points to the browser's print."""
    try:
        from weasyprint import HTML
    except (ImportError, OSError):
        return None
    return HTML(string=html, base_url=base_url).write_pdf()
