"""Review pages and actions: the review page, the workflow's actions, compare, the printed record.

Each action route reads its form, calls one service function and redirects back to the review
page; the service decides (through app.signoff.workflow) and owns the transaction. Refusals
arrive as InputProblems (403 for who, 409 for when) and render as the error page."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, File, Form, Request, UploadFile
from fastapi.responses import RedirectResponse, Response

from ..deps import DB, DbRoute, Viewer
from ..services import record, review, revisions
from ..services.documents import load_json_file
from ..services.errors import InputProblems
from ..templating import redirect_done, render

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _back(request: Request, db, entry) -> RedirectResponse:
    """Back to the review page, which then says what the action did."""
    return redirect_done(request, f"/revisions/{entry.revision_id}/review", review.done_message(db, entry))


# The action routes are plain functions, so FastAPI runs them in its thread pool: a request
# waiting for the trail's lock never holds up the event loop or the other requests.
Text = Annotated[str, Form()]


@router.get("/revisions/{revision_id}/review")
def review_page(request: Request, db: DB, user: Viewer, revision_id: int, sort: str = ""):
    context = record.page_context(db, revision_id, user, sort=sort, store=request.app.state.pictures)
    return render(request, "review.html", **context)


@router.post("/revisions/{revision_id}/hand-in")
def hand_in(request: Request, db: DB, user: Viewer, revision_id: int, note: Text = ""):
    entry = review.hand_in(db, revision_id, user, note)
    return _back(request, db, entry)


@router.post("/revisions/{revision_id}/comments")
def comment(request: Request, db: DB, user: Viewer, revision_id: int, text: Text = "", finding: Text = ""):
    entry = review.comment(db, revision_id, user, text, finding)
    return _back(request, db, entry)


@router.post("/revisions/{revision_id}/waivers")
def waive(
    request: Request, db: DB, user: Viewer, revision_id: int, finding: Text = "", justification: Text = ""
):
    entry = review.waive(db, revision_id, user, finding, justification)
    return _back(request, db, entry)


@router.post("/revisions/{revision_id}/send-back")
def send_back(request: Request, db: DB, user: Viewer, revision_id: int, note: Text = ""):
    entry = review.send_back(db, revision_id, user, note)
    return _back(request, db, entry)


@router.post("/revisions/{revision_id}/sign-off")
def sign_off(request: Request, db: DB, user: Viewer, revision_id: int, note: Text = ""):
    entry = review.sign_off(db, revision_id, user, note)
    return _back(request, db, entry)


MAX_UPLOAD = 1_000_000


@router.post("/revisions/{revision_id}/replace")
def replace(
    request: Request,
    db: DB,
    user: Viewer,
    revision_id: int,
    file: Annotated[UploadFile | None, File()] = None,
    change_note: Text = "",
):
    """The author uploads a new design file in place of a draft's."""
    if file is None or not file.filename:
        raise InputProblems([("file", "choose a design file (JSON, clampdown-design/1)")])
    raw = file.file.read(MAX_UPLOAD + 1)
    if len(raw) > MAX_UPLOAD:
        raise InputProblems([("file", f"larger than {MAX_UPLOAD // 1000} kB; a design file is a few kB")])
    document = load_json_file(raw)
    entry = review.replace_draft(db, revision_id, user, document, change_note)
    return _back(request, db, entry)


@router.get("/channels/{channel_id}/compare")
def compare_page(
    request: Request, db: DB, user: Viewer, channel_id: int, old: int | None = None, new: int | None = None
):
    return render(request, "compare.html", **record.compare_context(db, channel_id, old, new))


@router.get("/revisions/{revision_id}/record")
def record_page(request: Request, db: DB, user: Viewer, revision_id: int):
    return render(request, "record.html", **_record(request, db, revision_id), pdf=False)


def _record(request: Request, db, revision_id: int, bounded: bool = False) -> dict:
    state = request.app.state
    return record.record_context(
        db,
        revision_id,
        state.trail_checks,
        state.settings.record_check_max_age,
        bounded=bounded,
        store=state.pictures,
    )


@router.get("/revisions/{revision_id}/record.pdf")
def record_pdf(request: Request, db: DB, user: Viewer, revision_id: int):
    if not record.pdf_available():
        # No server PDF here: the printed record itself, for the browser's Print → Save as PDF.
        revisions.get_revision(db, revision_id)  # an unknown revision is still a 404
        return RedirectResponse(f"/revisions/{revision_id}/record", status_code=303)
    context = _record(request, db, revision_id, bounded=True)
    html = request.app.state.templates.get_template("record.html").render(**context, pdf=True)
    pdf = record.render_pdf(html, base_url=str(request.base_url))
    if pdf is None:
        return RedirectResponse(f"/revisions/{revision_id}/record", status_code=303)
    name = f"record-{context['view'].channel.id}-rev-{context['view'].revision.label}.pdf"
    return Response(
        pdf, media_type="application/pdf", headers={"Content-Disposition": f'attachment; filename="{name}"'}
    )
